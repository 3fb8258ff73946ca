// Command taut is a tuner and tension monitor for people who re-string pianos and
// harps. See README.md for the job and DEVELOPERS.md for the architecture.
package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"syscall"
)

// command is one subcommand: it parses its own flags from args and writes results to
// stdout and diagnostics to stderr.
type command struct {
	name    string
	summary string
	run     func(ctx context.Context, args []string, stdout, stderr io.Writer) error
}

func commands() []command {
	return []command{
		{"demo", "simulate a night on the built-in demo instrument and write its report", cmdDemo},
		{"scale", "print the scale sheet (tension, breaking load, margin, B) from a config", cmdScale},
		{"check", "validate a config without touching hardware", cmdCheck},
		{"measure", "analyse recordings: one row per note", cmdMeasure},
		{"listen", "run the listener daemon", cmdListen},
		{"report", "write the morning settling report from a journal", cmdReport},
		{"inputs", "list audio inputs", cmdInputs},
	}
}

// usageError marks a mistake in the command line or config: exit status 2.
type usageError struct{ err error }

func (e usageError) Error() string { return e.err.Error() }
func (e usageError) Unwrap() error { return e.err }

func usagef(format string, a ...any) error { return usageError{fmt.Errorf(format, a...)} }

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	// A second signal, after the context is cancelled, forces an immediate exit.
	go func() {
		<-ctx.Done()
		stop()
	}()
	os.Exit(exitCode(run(ctx, os.Args[1:], os.Stdout, os.Stderr), os.Stderr))
}

func run(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	if len(args) == 0 {
		printUsage(stderr)
		return usagef("no command given")
	}
	if args[0] == "-h" || args[0] == "--help" || args[0] == "help" {
		printUsage(stdout)
		return nil
	}
	for _, c := range commands() {
		if c.name == args[0] {
			return c.run(ctx, args[1:], stdout, stderr)
		}
	}
	printUsage(stderr)
	return usagef("unknown command %q", args[0])
}

func printUsage(w io.Writer) {
	fmt.Fprintln(w, "usage: taut <command> [flags] [args]\n\ncommands:")
	for _, c := range commands() {
		fmt.Fprintf(w, "  %-8s %s\n", c.name, c.summary)
	}
	fmt.Fprintln(w, "\nRun 'taut <command> -h' for the flags of one command.")
}

func exitCode(err error, stderr io.Writer) int {
	if err == nil {
		return 0
	}
	fmt.Fprintln(stderr, "taut:", err)
	var u usageError
	if errors.As(err, &u) {
		return 2
	}
	return 1
}

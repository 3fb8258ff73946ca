// Command tautbench compares taut's note analyser with aubio's general-purpose pitch
// trackers on one generated corpus of stiff-string tones, for accuracy and speed.
//
//	go run ./cmd/tautbench compare [-quick] [-v] [-dir DIR] [-seed N] [-rate HZ] [-aubio PATH]
//
// It needs `aubiopitch` (Debian package aubio-tools). The report is markdown on stdout,
// progress goes to stderr. It is a benchmark, not part of `go test ./...`.
package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
)

const usage = `usage: tautbench compare [flags]

Runs taut's analyser and aubiopitch (yin, yinfast, yinfft) on the same generated corpus
and prints a markdown accuracy and speed table. "tautbench compare -h" lists the flags.
`

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	err := run(ctx, os.Args[1:], os.Stdout, os.Stderr)
	var usage usageError
	switch {
	case errors.Is(err, flag.ErrHelp):
		os.Exit(0)
	case errors.As(err, &usage):
		fmt.Fprintln(os.Stderr, "tautbench:", err)
		os.Exit(2)
	case err != nil:
		fmt.Fprintln(os.Stderr, "tautbench:", err)
		os.Exit(1)
	}
}

// usageError marks bad arguments: exit status 2 instead of 1.
type usageError struct{ error }

func usagef(format string, args ...any) error { return usageError{fmt.Errorf(format, args...)} }

func run(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	if len(args) == 0 {
		fmt.Fprint(stderr, usage)
		return usagef("no command given")
	}
	switch args[0] {
	case "compare":
		return cmdCompare(ctx, args[1:], stdout, stderr)
	case "-h", "-help", "--help", "help":
		fmt.Fprint(stdout, usage)
		return nil
	}
	fmt.Fprint(stderr, usage)
	return usagef("unknown command %q", args[0])
}

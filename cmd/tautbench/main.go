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
	switch {
	case errors.Is(err, flag.ErrHelp):
		os.Exit(0)
	case err != nil:
		fmt.Fprintln(os.Stderr, "tautbench:", err)
		os.Exit(1)
	}
}

func run(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	if len(args) == 0 {
		fmt.Fprint(stderr, usage)
		return errors.New("no command given")
	}
	switch args[0] {
	case "compare":
		return cmdCompare(ctx, args[1:], stdout, stderr)
	case "-h", "-help", "--help", "help":
		fmt.Fprint(stdout, usage)
		return nil
	}
	fmt.Fprint(stderr, usage)
	return fmt.Errorf("unknown command %q", args[0])
}

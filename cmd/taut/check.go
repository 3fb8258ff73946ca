package main

import (
	"context"
	"flag"
	"fmt"
	"io"
)

// cmdCheck validates a config without touching hardware: every error is reported
// at once (exit status 2); on success it prints "ok: N strings".
func cmdCheck(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("check", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() { fmt.Fprintln(stderr, "usage: taut check CONFIG") }
	path, err := scaleConfigArg(fs, args)
	if err != nil || path == "" {
		return err
	}
	cfg, err := loadConfig("check", path)
	if err != nil {
		return err
	}
	in := cfg.Instrument
	fmt.Fprintf(stdout, "ok: %d strings, %q, A4 = %g Hz (%s)\n", len(in.Strings), in.Name, in.ReferenceHz, path)
	return nil
}

package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"

	"taut/monitor/instrument"
	"taut/monitor/tension"
)

// cmdScale prints the scale sheet of a config: per string its target, length,
// construction, mass per length, tension, breaking load, margin and predicted B,
// with flags and totals per section and for the instrument.
func cmdScale(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("scale", flag.ContinueOnError)
	fs.SetOutput(stderr)
	units := fs.String("units", "si", "force units of the text and CSV output: si (N), kgf or lbf")
	asJSON := fs.Bool("json", false, "print the scaleSheet as JSON (always SI: newtons, metres, kg/m)")
	asCSV := fs.Bool("csv", false, "print one CSV row per string")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: taut scale [--units si|kgf|lbf] [--json | --csv] CONFIG")
		fs.PrintDefaults()
	}
	path, err := scaleConfigArg(fs, args)
	if err != nil || path == "" {
		return err
	}
	unit, err := tension.ParseForceUnit(*units)
	if err != nil {
		return usagef("scale: --units %q: want si, kgf or lbf", *units)
	}
	if *asJSON && *asCSV {
		return usagef("scale: give --json or --csv, not both")
	}
	cfg, err := loadConfig("scale", path)
	if err != nil {
		return err
	}
	sh := newScaleSheet(cfg)
	switch {
	case *asJSON:
		enc := json.NewEncoder(stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(sh.rounded())
	case *asCSV:
		if sh.Caution != "" {
			fmt.Fprintln(stderr, sh.Caution)
		}
		return writeScaleCSV(stdout, sh, unit)
	}
	return writeScaleText(stdout, sh, unit)
}

// scaleConfigArg parses flags and the one CONFIG argument; flags may also follow it. It
// returns "" and no error after printing the usage for -h.
func scaleConfigArg(fs *flag.FlagSet, args []string) (string, error) {
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return "", nil // usage already printed
		}
		return "", usagef("%s: %v", fs.Name(), err)
	}
	if fs.NArg() == 0 {
		fs.Usage()
		return "", usagef("%s: want a config file: taut %s CONFIG", fs.Name(), fs.Name())
	}
	path := fs.Arg(0)
	if err := fs.Parse(fs.Args()[1:]); err != nil {
		return "", usagef("%s: %v", fs.Name(), err)
	}
	if fs.NArg() > 0 {
		return "", usagef("%s: want one config file, got also %q", fs.Name(), fs.Args())
	}
	return path, nil
}

// loadConfig loads a config; a config with errors is a usage error (exit status 2).
func loadConfig(cmd, path string) (*instrument.Config, error) {
	cfg, err := instrument.Load(path)
	var list *instrument.Errors
	if errors.As(err, &list) {
		return nil, usageError{fmt.Errorf("%s %s: %w", cmd, path, err)}
	}
	if err != nil {
		return nil, fmt.Errorf("%s: %w", cmd, err)
	}
	return cfg, nil
}

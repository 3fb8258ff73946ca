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

// scaleHelp explains the sheet in `taut scale -h`.
const scaleHelp = `usage: taut scale [--units si|kgf|lbf] [--json | --csv] CONFIG

Prints the scale sheet of an instrument config: for every string its target pitch,
speaking length, construction, mass per length, tension, breaking load, margin (tension
as a share of the breaking load) and predicted inharmonicity B, then totals per section
and for the whole instrument.

The target is the pitch of the first partial, what a tuner hears and shows. Tension,
margin and B are computed from the ideal-string f0 that sounds it, f0 = f1/√(1+B),
which is a little lower (about 14 cents at a piano's top C).

A string is flagged "warn" above the config's margin_warn, and never later than 70 %
of its breaking load; "ALARM" above margin_alarm; "low" below 20 %. Any flagged high
margin prints the safety caution.

flags:
`

// cmdScale prints the scale sheet of a config: per string its target, length,
// construction, mass per length, tension, breaking load, margin and predicted B,
// with flags and totals per section and for the instrument.
func cmdScale(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("scale", flag.ContinueOnError)
	fs.SetOutput(stderr)
	units := fs.String("units", "si", "`unit` of force in the text and CSV output: si (N), kgf or lbf")
	asJSON := fs.Bool("json", false, "print the scale sheet as JSON (always SI: newtons, metres, kg/m)")
	asCSV := fs.Bool("csv", false, "print one CSV row per string (the caution, if any, goes to stderr)")
	fs.Usage = func() {
		fmt.Fprint(stderr, scaleHelp)
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
	sh, err := newScaleSheet(cfg)
	if err != nil {
		return usageError{fmt.Errorf("scale %s: %w", path, err)}
	}
	switch {
	case *asJSON:
		enc := json.NewEncoder(stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(sh.rounded())
	case *asCSV:
		if sh.Caution != "" {
			fmt.Fprintln(stderr, cautionText(sh.Caution))
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

// loadConfig loads a config. A config with errors, or one that cannot be read (missing,
// a directory, no permission), is a usage error (exit status 2); the message names the
// path as given.
func loadConfig(cmd, path string) (*instrument.Config, error) {
	cfg, err := instrument.Load(path)
	var list *instrument.Errors
	if errors.As(err, &list) {
		return nil, usageError{fmt.Errorf("%s %s: %w", cmd, path, err)}
	}
	if err != nil {
		return nil, usageError{fmt.Errorf("%s: %w", cmd, err)}
	}
	return cfg, nil
}

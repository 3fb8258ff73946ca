package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"path/filepath"
	"time"

	"taut/configs"
	"taut/monitor/instrument"
	"taut/monitor/journal"
	"taut/monitor/sim"
)

// demoInstruments maps --instrument to the embedded configs.
var demoInstruments = map[string]string{"harp": "harp36.toml", "upright": "upright.toml"}

// demoStart is the wall time the simulated night begins (an invented evening).
var demoStart = time.Date(2031, time.March, 14, 19, 0, 0, 0, time.UTC)

type demoFlags struct {
	instrument string
	seed       uint64
	out        string
	serve      string
	hours      float64
	interval   time.Duration
}

// cmdDemo simulates a night of settling on an embedded demo instrument and runs it
// through the real pipeline: synthetic audio → pitch → monitor → journal → lamps →
// report.
func cmdDemo(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	df, err := parseDemoFlags(args, stderr)
	if err != nil || df == nil {
		return err
	}
	name := demoInstruments[df.instrument]
	cfg, err := instrument.Parse(configs.FS, name)
	if err != nil {
		return fmt.Errorf("demo: embedded config %s: %w", name, err)
	}
	night, err := sim.NewNight(cfg, sim.Options{Seed: df.seed, Hours: df.hours, Interval: df.interval})
	if err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	if err := prepareDemoDir(df.out); err != nil {
		return err
	}
	printPlan(stdout, night, name, df.seed)
	jdir := filepath.Join(df.out, "journal")
	res, err := runNight(ctx, night, jdir, df, stderr)
	if err != nil {
		return err
	}
	printRun(stdout, night, res)
	entries, rep, err := journal.Load(jdir)
	if err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	fmt.Fprintf(stdout, "journal %s: %s\n", jdir, rep)
	if err := writeReport(stdout, stderr, entries, rep, night.Config, jdir, df.out); err != nil {
		return err
	}
	return res.serveUntilDone(ctx, stdout)
}

func parseDemoFlags(args []string, stderr io.Writer) (*demoFlags, error) {
	fs := flag.NewFlagSet("demo", flag.ContinueOnError)
	fs.SetOutput(stderr)
	df := &demoFlags{}
	fs.StringVar(&df.instrument, "instrument", "harp", "demo instrument: harp (36-string lever harp) or upright (upright piano re-string)")
	fs.Uint64Var(&df.seed, "seed", 1, "seed of every random choice of the simulation")
	fs.StringVar(&df.out, "out", "taut-demo", "directory for the journal and the report")
	fs.StringVar(&df.serve, "serve", "", "keep the status page running on this address afterwards, e.g. 127.0.0.1:9440")
	fs.Float64Var(&df.hours, "hours", 9, "length of the simulated night in hours")
	fs.DurationVar(&df.interval, "interval", 30*time.Minute, "time between exciter rounds")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: taut demo [--instrument harp|upright] [--seed N] [--out DIR] [--serve ADDR]")
		fs.PrintDefaults()
	}
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return nil, nil
		}
		return nil, usagef("demo: %v", err)
	}
	switch {
	case fs.NArg() > 0:
		return nil, usagef("demo: unexpected arguments %q", fs.Args())
	case demoInstruments[df.instrument] == "":
		return nil, usagef("demo: --instrument %q: want harp or upright", df.instrument)
	case !(df.hours >= 1 && df.hours <= 48):
		return nil, usagef("demo: --hours %v: want 1 to 48", df.hours)
	case df.interval < 5*time.Minute || df.interval > 2*time.Hour:
		return nil, usagef("demo: --interval %v: want 5m to 2h", df.interval)
	case df.seed == 0:
		return nil, usagef("demo: --seed 0: want a positive seed")
	}
	return df, nil
}

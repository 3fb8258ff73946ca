package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"

	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/journal"
	"taut/monitor/report"
)

// cmdReport writes the morning settling report from a journal: report.html,
// readings.csv and summary.json in --out, and a short table on stdout.
func cmdReport(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("report", flag.ContinueOnError)
	fs.SetOutput(stderr)
	configPath := fs.String("config", "", "instrument config: scale order, targets, sections and string data (optional)")
	outDir := fs.String("out", "taut-report", "directory for report.html, readings.csv and summary.json")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: taut report [--config CONFIG] [--out DIR] JOURNAL\n\n"+
			"JOURNAL is a journal directory or one segment file.")
		fs.PrintDefaults()
	}
	rest, err := reportArgs(fs, args)
	if err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return nil
		}
		return usagef("report: %v", err)
	}
	switch len(rest) {
	case 0:
		fs.Usage()
		return usagef("report: want a journal: taut report JOURNAL")
	case 1:
	default:
		return usagef("report: want one journal, got %q", rest)
	}
	var cfg *instrument.Config
	if *configPath != "" {
		if cfg, err = instrument.Load(*configPath); err != nil {
			var list *instrument.Errors
			if errors.As(err, &list) {
				return usageError{fmt.Errorf("report: config %s: %w", *configPath, err)}
			}
			return fmt.Errorf("report: config: %w", err)
		}
	}
	entries, rep, err := journal.Load(rest[0])
	if err != nil {
		return fmt.Errorf("report: %w", err)
	}
	fmt.Fprintf(stdout, "journal %s: %s\n", rest[0], rep)
	return writeReport(stdout, stderr, entries, rep, cfg, rest[0], *outDir)
}

// writeReport builds the report, writes its files durably into dir and prints the
// summary table and the paths. A config that does not know many of the journal's
// strings is warned about on stderr as well (the table repeats it). The demo uses it
// too.
func writeReport(stdout, stderr io.Writer, entries []monitor.Entry, rep *journal.ReadReport,
	cfg *instrument.Config, journalPath, dir string) error {
	r := report.Build(entries, report.Options{
		Config: cfg, JournalPath: journalPath, ReadSummary: rep.String(), ReadClean: rep.Clean(),
	})
	if msg := r.ConfigWarning(); msg != "" {
		fmt.Fprintf(stderr, "report: WARNING: %s\n", msg)
	}
	if len(r.Readings) == 0 {
		fmt.Fprintln(stdout, "report: the journal holds no readings; the report lists the strings only")
	}
	paths, err := r.WriteDir(dir)
	if err != nil {
		return fmt.Errorf("report: %w", err)
	}
	fmt.Fprintln(stdout)
	if err := r.WriteTable(stdout); err != nil {
		return err
	}
	fmt.Fprintf(stdout, "\nreport: %s\n", paths[0])
	for _, p := range paths[1:] {
		fmt.Fprintf(stdout, "        %s\n", p)
	}
	return nil
}

// reportArgs parses flags before and after the journal argument, so both
// `taut report --out x J` and `taut report J --out x` work; "--" ends the flags.
func reportArgs(fs *flag.FlagSet, args []string) ([]string, error) {
	var rest []string
	for {
		if err := fs.Parse(args); err != nil {
			return nil, err
		}
		left := fs.Args()
		if used := len(args) - len(left); used > 0 && args[used-1] == "--" {
			return append(rest, left...), nil
		}
		if len(left) == 0 {
			return rest, nil
		}
		rest = append(rest, left[0])
		args = left[1:]
	}
}

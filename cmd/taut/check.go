package main

import (
	"context"
	"flag"
	"fmt"
	"io"
)

// checkHelp explains `taut check -h`.
const checkHelp = `usage: taut check CONFIG

Validates an instrument config without touching audio or GPIO: every error in the
config and its string table is reported at once, each naming the file, line and field
(exit status 2). A valid config prints "ok: N strings ..." and exits 0, followed by a
warning for every string whose tension at its target is above 70 % of its breaking load
(or the config's lower margin_warn) or above margin_alarm, with the safety caution.
`

// cmdCheck validates a config without touching hardware: every error is reported
// at once (exit status 2); on success it prints "ok: N strings" and then a warning for
// each string with a high margin (exit status 0).
func cmdCheck(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("check", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() { fmt.Fprint(stderr, checkHelp) }
	path, err := scaleConfigArg(fs, args)
	if err != nil || path == "" {
		return err
	}
	cfg, err := loadConfig("check", path)
	if err != nil {
		return err
	}
	sh, err := newScaleSheet(cfg)
	if err != nil {
		return usageError{fmt.Errorf("check %s: %w", path, err)}
	}
	in := cfg.Instrument
	fmt.Fprintf(stdout, "ok: %d strings, %q, A4 = %g Hz (%s)\n", len(in.Strings), in.Name, in.ReferenceHz, path)
	return writeCheckWarnings(stdout, sh)
}

// writeCheckWarnings prints one line per string flagged warn or ALARM on the scale
// sheet, then the caution.
func writeCheckWarnings(w io.Writer, sh *scaleSheet) error {
	ew := &scaleWriter{w: w}
	for _, r := range sh.Strings {
		switch r.Flag {
		case scaleFlagAlarm:
			ew.printf("warning: string %s (%s): tension %.1f N is %.1f %% of its %.1f N breaking load, above margin_alarm %s %%; strength basis: %s\n",
				r.ID, r.Note, r.TensionN, 100*r.Margin, r.BreakingN, scalePct(sh.MarginAlarm), r.StrengthBasis)
		case scaleFlagWarn:
			ew.printf("warning: string %s (%s): tension %.1f N is %.1f %% of its %.1f N breaking load, above %s %%; strength basis: %s\n",
				r.ID, r.Note, r.TensionN, 100*r.Margin, r.BreakingN, scalePct(sh.MarginWarn), r.StrengthBasis)
		}
	}
	if sh.Caution != "" {
		ew.printf("%s\n", cautionText(sh.Caution))
	}
	return ew.err
}

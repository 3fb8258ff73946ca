package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"

	"golang.org/x/term"
)

// measureOptions are the flags of `taut measure`.
type measureOptions struct {
	json         bool
	refHz        float64
	channel      int  // analyse only this channel (1-based); 0 = every channel separately
	mix          bool // mix all channels into one before analysing
	minHz, maxHz float64
}

// progressMinFiles is how many files make a progress line worth showing.
const progressMinFiles = 4

// cmdMeasure analyses recordings: one row (or JSON object) per note found in each
// channel of each WAV file (or in one chosen channel, or in the mix). A file that
// cannot be read, or in which no pitched note is found, is reported on stderr with its
// name; the other files are still measured, and the command fails at the end.
func cmdMeasure(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	opts, files, err := parseMeasureFlags(args, stderr)
	if errors.Is(err, flag.ErrHelp) {
		return nil
	}
	if err != nil {
		return err
	}
	out := newMeasureWriter(stdout, opts, files)
	prog := newProgress(stderr, len(files))
	failed := 0
	for res := range measureFiles(ctx, files, opts) {
		prog.clear()
		if werr := out.write(res); werr != nil {
			return fmt.Errorf("measure: write results: %w", werr)
		}
		if res.err != nil {
			failed++
			fmt.Fprintf(stderr, "taut measure: %v\n", res.err)
		}
		prog.step()
	}
	prog.clear()
	if err := ctx.Err(); err != nil {
		return fmt.Errorf("measure: interrupted: %w", err)
	}
	if failed > 0 {
		return fmt.Errorf("measure: %d of %d files could not be measured fully or held no pitched note (see the messages above)", failed, len(files))
	}
	return nil
}

func parseMeasureFlags(args []string, stderr io.Writer) (measureOptions, []string, error) {
	var o measureOptions
	fs := flag.NewFlagSet("measure", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.BoolVar(&o.json, "json", false, "print one JSON object per note instead of a table")
	fs.Float64Var(&o.refHz, "ref", 440, "reference pitch of A4 in `Hz` for note names and cents (ISO 16)")
	fs.IntVar(&o.channel, "channel", 0, "analyse only channel `N`, counted from 1 (default: every channel separately)")
	fs.BoolVar(&o.mix, "mix", false, "mix all channels into one before analysing (default: every channel separately)")
	fs.Float64Var(&o.minHz, "min-hz", 0, "lowest pitch to search for in `Hz` (default 25, below A0)")
	fs.Float64Var(&o.maxHz, "max-hz", 0, "highest first partial to search for in `Hz` (default 4500, above C8)")
	fs.Usage = func() {
		fmt.Fprint(stderr, "usage: taut measure [flags] FILE.wav...\n\n"+
			"Finds the notes in WAV recordings and prints, per note: file, channel, onset time, nearest\n"+
			"12-TET note and cents (of the first partial), first partial, fitted f0, inharmonicity B,\n"+
			"partials and clarity. Each channel of a multichannel file is analysed on its own (two\n"+
			"pickups are two strings); --channel picks one, --mix analyses their mix. A file in which\n"+
			"no pitched note is found makes the command fail (exit status 1).\n\nflags:\n")
		fs.PrintDefaults()
	}
	files, err := parseInterspersed(fs, args)
	if err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return o, nil, err
		}
		return o, nil, usagef("measure: %v", err)
	}
	switch {
	case len(files) == 0:
		return o, nil, usagef("measure: no files given; usage: taut measure [--json] [--ref HZ] [--channel N | --mix] [--min-hz HZ] [--max-hz HZ] FILE.wav...")
	case !(o.refHz >= 380 && o.refHz <= 500):
		return o, nil, usagef("measure: --ref %v: want the A4 reference in Hz, 380 to 500 (ISO 16: 440)", o.refHz)
	case o.channel < 0:
		return o, nil, usagef("measure: --channel %d: want a channel number from 1", o.channel)
	case o.channel > 0 && o.mix:
		return o, nil, usagef("measure: give --channel %d or --mix, not both", o.channel)
	case o.minHz != 0 && !(o.minHz >= 10 && o.minHz <= 20000):
		return o, nil, usagef("measure: --min-hz %v: want 10 to 20000 Hz", o.minHz)
	case o.maxHz != 0 && !(o.maxHz >= 10 && o.maxHz <= 20000):
		return o, nil, usagef("measure: --max-hz %v: want 10 to 20000 Hz", o.maxHz)
	case o.minHz != 0 && o.maxHz != 0 && o.minHz >= o.maxHz:
		return o, nil, usagef("measure: --min-hz %v is not below --max-hz %v", o.minHz, o.maxHz)
	}
	return o, files, nil
}

// parseInterspersed parses flags that may come before, between or after the file
// names, so `taut measure a.wav --json` works too; "--" ends the flags.
func parseInterspersed(fs *flag.FlagSet, args []string) ([]string, error) {
	var files []string
	for {
		if err := fs.Parse(args); err != nil {
			return nil, err
		}
		rest := fs.Args()
		if used := len(args) - len(rest); used > 0 && args[used-1] == "--" {
			return append(files, rest...), nil
		}
		if len(rest) == 0 {
			return files, nil
		}
		files = append(files, rest[0])
		args = rest[1:]
	}
}

// progress shows "measure: 3/40 files" on stderr while many files are measured and
// stderr is a terminal; otherwise it does nothing.
type progress struct {
	w     io.Writer
	n, of int
	shown bool
}

func newProgress(stderr io.Writer, files int) *progress {
	f, ok := stderr.(*os.File)
	if !ok || files < progressMinFiles || !term.IsTerminal(int(f.Fd())) {
		return &progress{}
	}
	return &progress{w: stderr, of: files}
}

func (p *progress) step() {
	if p.w == nil {
		return
	}
	p.n++
	fmt.Fprintf(p.w, "\rmeasure: %d/%d files", p.n, p.of)
	p.shown = true
}

func (p *progress) clear() {
	if p.shown {
		fmt.Fprint(p.w, "\r\033[K")
		p.shown = false
	}
}

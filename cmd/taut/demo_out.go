package main

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"

	"taut/monitor/report"
	"taut/monitor/sim"
)

// demoMarker marks a directory the demo wrote, so a second run may replace it.
const demoMarker = ".taut-demo"

// prepareDemoDir makes dir ready for a fresh night: it is created if missing; a
// directory written by an earlier demo loses its old journal and report; any other
// non-empty directory is refused, so the demo never deletes someone's data.
func prepareDemoDir(dir string) error {
	ents, err := os.ReadDir(dir)
	switch {
	case errors.Is(err, fs.ErrNotExist):
	case err != nil:
		return fmt.Errorf("demo: --out %s: %w", dir, err)
	case len(ents) > 0:
		if _, err := os.Stat(filepath.Join(dir, demoMarker)); err != nil {
			return usagef("demo: --out %s is not empty and was not written by taut demo; choose another directory", dir)
		}
		for _, name := range []string{"journal", report.HTMLName, report.CSVName, report.SummaryName} {
			if err := os.RemoveAll(filepath.Join(dir, name)); err != nil {
				return fmt.Errorf("demo: clear %s: %w", dir, err)
			}
		}
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	return report.WriteFileDurable(filepath.Join(dir, demoMarker),
		[]byte("written by taut demo; a later demo run may replace this directory's journal and report\n"))
}

func printPlan(w io.Writer, n *sim.Night, configName string, seed uint64) {
	o := n.Options
	fmt.Fprintf(w, "taut demo: %s (%d strings, embedded %s), seed %d\n",
		n.Config.Instrument.Name, len(n.Config.Instrument.Strings), configName, seed)
	fmt.Fprintf(w, "night: %.1f h from %s, %d exciter rounds every %v, %d strikes (each rings %.2f s, then %.2f s damped) at %d Hz\n",
		o.Hours, demoStart.Format("2006-01-02 15:04 MST"), len(n.Rounds), o.Interval, n.Strikes(), o.ToneS, o.DampS, o.RateHz)
	fmt.Fprintf(w, "pull-up pass at %.1f h: %d string(s) raised\n", n.PullUpH, len(n.PulledUp))
	fmt.Fprintln(w, "injected faults:")
	for _, f := range n.Faults {
		fmt.Fprintf(w, "  %-8s %-5s from %4.1f h: %s\n", f.Kind, f.String, f.AtH, f.Detail)
	}
}

// noPitchText accounts for the onsets that gave no pitch. Every strike that gave no
// note is one of them; the rest are extra onsets the detector found besides the
// strikes (where a tone stops), which the monitor ignores.
func noPitchText(strikes, notes, noPitch int64) string {
	missed := max(strikes-notes, 0)
	extra := max(noPitch-missed, 0)
	var out string
	if missed > 0 {
		out += fmt.Sprintf("; %d strike(s) gave no pitch", missed)
	}
	if extra > 0 {
		out += fmt.Sprintf("; %d extra onset(s) without a pitch (where a tone stops), ignored", extra)
	}
	return out
}

func printRun(w io.Writer, n *sim.Night, r *nightResult) {
	s := r.stats
	fmt.Fprintf(w, "pipeline: %d strikes → %d notes → %d readings (%d unmatched)%s\n",
		n.Strikes(), s.Notes, s.Readings, s.Unmatched, noPitchText(int64(n.Strikes()), s.Notes, s.NoPitch))
	speed := ""
	if r.cpu > 0 {
		speed = fmt.Sprintf(", %.0f audio-seconds per CPU-second", r.audioS/r.cpu.Seconds())
	}
	fmt.Fprintf(w, "time: %.1f s of audio analysed in %.2f s wall (%.0f× real time%s); CPU %.2f s\n",
		r.audioS, r.wall.Seconds(), r.audioS/r.wall.Seconds(), speed, r.cpu.Seconds())
	fmt.Fprintf(w, "lamps (logging pins): %s\n", r.lamps.summary())
	if r.journal.WriteErrors > 0 || r.journal.FsyncErrors > 0 {
		fmt.Fprintf(w, "journal: %d write and %d fsync error(s)\n", r.journal.WriteErrors, r.journal.FsyncErrors)
	}
}

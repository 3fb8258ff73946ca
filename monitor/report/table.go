package report

import (
	"fmt"
	"io"
	"math"
	"strings"
	"text/tabwriter"
)

// WriteTable writes the short summary for a terminal: one line per string, then the
// strings to look at first, then the caution when margins are high.
func (r *Report) WriteTable(w io.Writer) error {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "string\tstate\tcents\t¢/h\tsteady in\tmargin\tflags\tnext pull-up")
	for _, s := range r.Strings {
		rw := rowOf(s)
		flags := rw.Flags
		if flags == "" {
			flags = "-"
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n", s.ID, rw.State, rw.Cents, shortRate(s),
			rw.Steady, shortMargin(s), flags, shortPullUp(s))
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	att := r.Attention()
	if n := len(r.Flagged()); n > 0 {
		fmt.Fprintf(w, "\nflagged (%d):\n", n)
		for _, s := range r.Flagged() {
			fmt.Fprintf(w, "  %-5s %s: %s\n", s.ID, strings.Join(s.Flags, ","), strings.Join(s.Reasons[:len(s.Flags)], "; "))
		}
	}
	if len(att) > 0 {
		fmt.Fprintf(w, "\nlook at first: ")
		var ids []string
		for _, s := range att[:min(len(att), 10)] {
			ids = append(ids, fmt.Sprintf("%s (%s)", s.ID, strings.ToLower(rowOf(s).Class)))
		}
		fmt.Fprint(w, strings.Join(ids, ", "))
		if len(att) > 10 {
			fmt.Fprintf(w, " and %d more", len(att)-10)
		}
		fmt.Fprintln(w)
	}
	if r.HighMargin() {
		fmt.Fprintf(w, "\nCAUTION: %s\n", Caution)
	}
	return nil
}

func shortRate(s *String) string {
	if !s.Analysed || !finite(s.Analysis.RateNow) {
		return "-"
	}
	return fmt.Sprintf("%+.2f", s.Analysis.RateNow)
}

func shortMargin(s *String) string {
	if s.MaxMargin <= 0 {
		return "-"
	}
	return fmt.Sprintf("%.0f%%", 100*s.MaxMargin)
}

func shortPullUp(s *String) string {
	if !s.Analysed {
		return "-"
	}
	g := s.Analysis.Suggest
	switch {
	case math.IsNaN(g.RaiseCents):
		return "-"
	case g.RaiseCents == 0:
		return "none"
	case g.RaiseCents < 0:
		return fmt.Sprintf("lower %.1f", -g.RaiseCents)
	case g.Share == 0:
		return fmt.Sprintf("check pin, raise %.1f", g.RaiseCents)
	}
	return fmt.Sprintf("raise %.1f (to %+.1f)", g.RaiseCents, g.AimCents)
}

package report

import (
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"taut/monitor/tension"
)

// WriteTable writes the short summary for a terminal: the thresholds, one line per
// string, then the strings to look at first, then the caution when margins are high.
// Its columns are a subset of the page's table, with the same titles and cell text.
func (r *Report) WriteTable(w io.Writer) error {
	if msg := r.ConfigWarning(); msg != "" {
		fmt.Fprintf(w, "WARNING: %s\n\n", msg)
	}
	l := r.Limits
	fmt.Fprintf(w, "steady under %s ¢/h, on target within ±%s ¢. The state is the listener's at its last reading "+
		"(its %s robust slope and that reading); the fit columns are the settling model of the latest stretch.\n",
		trimNum(l.SteadyCentsPerHour), trimNum(l.ToleranceCents), windowText(l))
	h := headerOf(l)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "string\t%s\t%s\t%s\t%s\t%s\t%s\tflags\t%s\n", h.State, h.ListenerRate, h.Cents, h.Rate,
		h.Steady, h.Margin, h.PullUp)
	for _, s := range r.Strings {
		rw := rowOf(s)
		flags := rw.Flags
		if flags == "" {
			flags = "—"
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n", s.ID, rw.State, rw.ListenerRate, rw.Cents, rw.Rate,
			rw.Steady, rw.Margin, flags, rw.PullUp)
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	if n := len(r.Flagged()); n > 0 {
		fmt.Fprintf(w, "\nflagged (%d):\n", n)
		for _, s := range r.Flagged() {
			fmt.Fprintf(w, "  %-5s %s: %s\n", s.ID, strings.Join(s.Flags, ","), strings.Join(s.Reasons[:len(s.Flags)], "; "))
		}
	}
	r.writeAttention(w)
	if r.HighMargin() {
		fmt.Fprintf(w, "\nCAUTION: %s\n", tension.Caution)
	}
	return nil
}

func (r *Report) writeAttention(w io.Writer) {
	att := r.Attention()
	if len(att) == 0 {
		return
	}
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

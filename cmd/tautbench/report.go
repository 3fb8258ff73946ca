package main

import (
	"fmt"
	"io"
	"math"
	"strings"
	"time"
)

// Targets from the benchmark's issue.
const (
	targetAccuracyRatio = 20  // best aubio median ÷ our median, in every row
	targetSpeedRatio    = 1.5 // our throughput ÷ aubio yinfft's
)

// groupRow is one line of the accuracy table.
type groupRow struct {
	register string // "" = all registers
	snrDB    float64
	n        int
	sums     map[string]summary
}

func snrLabel(snr float64) string {
	if math.IsInf(snr, 1) {
		return "clean"
	}
	return fmt.Sprintf("%g dB", snr)
}

func registerLabel(r string) string {
	switch r {
	case "bass":
		return fmt.Sprintf("bass (< %d Hz)", bassBelowHz)
	case "treble":
		return fmt.Sprintf("treble (> %d Hz)", trebleAboveHz)
	case "":
		return "all"
	}
	return r
}

// groupRows summarises the outcomes by register and SNR, then by SNR over all registers.
func groupRows(outs []outcome) []groupRow {
	var rows []groupRow
	for _, reg := range append(append([]string{}, registers...), "") {
		for _, snr := range corpusSNRs {
			if row, ok := groupRow1(outs, reg, snr); ok {
				rows = append(rows, row)
			}
		}
	}
	return rows
}

func groupRow1(outs []outcome, reg string, snr float64) (groupRow, bool) {
	errs := map[string][]float64{}
	n := 0
	for _, o := range outs {
		if o.c.SNRdB != snr || (reg != "" && o.c.register() != reg) {
			continue
		}
		n++
		for _, name := range analyserNames() {
			errs[name] = append(errs[name], errorCents(o.hz[name], o.c.TruthHz))
		}
	}
	row := groupRow{register: reg, snrDB: snr, n: n, sums: map[string]summary{}}
	for name, e := range errs {
		row.sums[name] = summarize(e)
	}
	return row, n > 0
}

// bestAubio is the aubio method with the smallest median error in the row.
func (r groupRow) bestAubio() (string, summary) {
	best, bestS := "", summary{MedianC: math.Inf(1)}
	for _, m := range aubioMethods {
		if s := r.sums["aubio "+m]; best == "" || s.MedianC < bestS.MedianC {
			best, bestS = "aubio "+m, s
		}
	}
	return best, bestS
}

func (r groupRow) accuracyRatio() float64 {
	_, b := r.bestAubio()
	return b.MedianC / r.sums[ours].MedianC
}

func formatCents(c float64) string {
	switch {
	case math.IsInf(c, 1) || math.IsNaN(c):
		return "—"
	case c == 0:
		return "0"
	case c < 0.01: // two significant digits
		return fmt.Sprintf("%.*f", int(math.Ceil(-math.Log10(c)))+1, c)
	case c < 0.1:
		return fmt.Sprintf("%.3f", c)
	case c < 10:
		return fmt.Sprintf("%.2f", c)
	}
	return fmt.Sprintf("%.0f", c)
}

func formatGross(s summary) string {
	var extra []string
	if s.Octave > 0 {
		extra = append(extra, fmt.Sprintf("%d oct", s.Octave))
	}
	if s.Misses > 0 {
		extra = append(extra, fmt.Sprintf("%d miss", s.Misses))
	}
	if len(extra) == 0 {
		return fmt.Sprint(s.Gross)
	}
	return fmt.Sprintf("%d (%s)", s.Gross, strings.Join(extra, ", "))
}

func formatCell(s summary) string {
	return fmt.Sprintf("%s / %s / %s", formatCents(s.MedianC), formatCents(s.P90C), formatGross(s))
}

func formatRatio(r float64) string {
	switch {
	case math.IsInf(r, 1):
		return "∞"
	case math.IsNaN(r):
		return "—"
	case r >= 10:
		return fmt.Sprintf("%.0f×", r)
	}
	return fmt.Sprintf("%.1f×", r)
}

func writeAccuracyTable(w io.Writer, rows []groupRow) {
	names := analyserNames()
	fmt.Fprintf(w, "| register | noise | tones | %s | best aubio ÷ taut |\n", strings.Join(names, " | "))
	fmt.Fprintf(w, "|---|---|---:|%s---:|\n", strings.Repeat("---|", len(names)))
	for _, r := range rows {
		cells := make([]string, len(names))
		for i, name := range names {
			cells[i] = formatCell(r.sums[name])
		}
		fmt.Fprintf(w, "| %s | %s | %d | %s | %s |\n", registerLabel(r.register), snrLabel(r.snrDB), r.n,
			strings.Join(cells, " | "), formatRatio(r.accuracyRatio()))
	}
}

func perCPUSecond(audioS float64, cpu time.Duration) float64 {
	if cpu <= 0 {
		return math.Inf(1)
	}
	return audioS / cpu.Seconds()
}

func writeSpeedTable(w io.Writer, res *runResult) {
	ourRate := perCPUSecond(res.speeds[ours].audioS, res.speeds[ours].cpu)
	fmt.Fprintln(w, "| analyser | audio s | CPU s | audio-s per CPU-s | taut ÷ this | without process start¹ | taut ÷ this |")
	fmt.Fprintln(w, "|---|---:|---:|---:|---:|---:|---:|")
	for _, name := range analyserNames() {
		sp := res.speeds[name]
		rate := perCPUSecond(sp.audioS, sp.cpu)
		noStart, noStartRatio := "", ""
		if strings.HasPrefix(name, "aubio ") {
			r := perCPUSecond(sp.audioS, sp.cpu-sp.startCPU)
			noStart, noStartRatio = fmt.Sprintf("%.0f", r), formatRatio(ourRate/r)
		}
		fmt.Fprintf(w, "| %s | %.0f | %.2f | %.0f | %s | %s | %s |\n", name, sp.audioS, sp.cpu.Seconds(),
			rate, formatRatio(ourRate/rate), noStart, noStartRatio)
	}
}

package main

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"taut/monitor/tension"
)

// writeScaleText prints the scale sheet for people.
func writeScaleText(w io.Writer, sh *scaleSheet, u tension.ForceUnit) error {
	ew := &scaleWriter{w: w}
	ew.printf("Scale sheet: %s\n", sh.Instrument)
	ew.printf("config %s, A4 = %g Hz, forces in %s, lengths and diameters in mm\n\n", sh.Config, sh.ReferenceHz, u.Symbol)
	idW, conW := len("id"), len("construction")
	for _, r := range sh.Strings {
		idW, conW = max(idW, len(r.ID)), max(conW, len(r.Construction))
	}
	force := "tension " + u.Symbol
	brk := "break " + u.Symbol
	ew.printf("%-*s  %-4s  %9s  %9s  %6s  %-*s  %9s  %10s  %10s  %6s  %8s  %s\n",
		idW, "id", "note", "target Hz", "f0 Hz", "length", conW, "construction", "mass g/m", force, brk, "margin", "B (core)", "flag")
	for _, r := range sh.Strings {
		weighed := " "
		if r.MassWeighed {
			weighed = "*"
		}
		row := fmt.Sprintf("%-*s  %-4s  %9.2f  %9.2f  %6.0f  %-*s  %8.2f%s  %10.1f  %10.1f  %5.1f%%  %8.2e  %s",
			idW, r.ID, r.Note, r.TargetHz, r.F0Hz, tension.ToMM(r.LengthM), conW, r.Construction,
			1000*r.MassPerMKg, weighed, u.From(r.TensionN), u.From(r.BreakingN), 100*r.Margin, r.Inharmonicity, r.Flag)
		ew.printf("%s\n", strings.TrimRight(row, " "))
	}
	writeScaleTotals(ew, sh, u)
	writeScaleNotes(ew, sh)
	return ew.err
}

func writeScaleTotals(ew *scaleWriter, sh *scaleSheet, u tension.ForceUnit) {
	ew.printf("\nTotals%14s  %7s  %12s  %s\n", "", "strings", "tension "+u.Symbol, "margin min-max")
	line := func(t scaleTotal) {
		name := t.Section
		if name == "" {
			name = "(no section)"
		}
		ew.printf("  %-18s  %7d  %12.1f  %.1f-%.1f %%\n", name, t.Strings, u.From(t.TensionN), 100*t.MinMargin, 100*t.MaxMargin)
	}
	for _, t := range sh.Sections {
		line(t)
	}
	line(scaleTotal{Section: "whole instrument", Strings: len(sh.Strings), TensionN: sh.TotalTensionN,
		MinMargin: sh.MinMargin, MaxMargin: sh.MaxMargin})
	if u != tension.Newton {
		ew.printf("  (%.0f N in all)\n", sh.TotalTensionN)
	}
}

func writeScaleNotes(ew *scaleWriter, sh *scaleSheet) {
	counts := map[string]int{}
	for _, r := range sh.Strings {
		counts[r.Flag]++
	}
	ew.printf("\nTarget = the first partial, as a tuner shows it; tension, margin and B are computed from\n")
	ew.printf("f0 = target/√(1+B), the ideal-string fundamental that sounds it.\n")
	ew.printf("Flags: warn above %s %% of breaking load (%d; the config's margin_warn, capped at %s %%),\n",
		scalePct(sh.MarginWarn), counts[scaleFlagWarn], scalePct(tension.CautionFloor))
	ew.printf("ALARM above %s %% (%d): trade figures; low below %s %% (%d): engineering judgement, a string\n",
		scalePct(sh.MarginAlarm), counts[scaleFlagAlarm], scalePct(sh.MarginLow), counts[scaleFlagLow])
	ew.printf("that slack may buzz, drift or be the wrong gauge.\n")
	ew.printf("Mass per length from geometry; * = weighed value from the config.\n")
	ew.printf("B is predicted from the core alone: a lower bound for wound strings.\n")
	ew.printf("Margin = tension / breaking load of the core. Strength basis, by core material:\n")
	for _, b := range sh.Bases {
		ew.printf("  %-16s %s\n", strings.ReplaceAll(b.Material, "_", " "), b.Basis)
	}
	ew.printf("The margin depends on that basis; it is a guide, never a guarantee.\n")
	if sh.Caution != "" {
		ew.printf("\n%s\n", cautionText(sh.Caution))
	}
}

// scalePct prints a share as a percentage without trailing zeros: 0.7 → "70", 0.725 → "72.5".
func scalePct(share float64) string {
	return strconv.FormatFloat(math.Round(1000*share)/10, 'f', -1, 64)
}

// cautionText is the caution as printed: headed CAUTION and wrapped for a terminal.
func cautionText(caution string) string {
	return wrapWords("CAUTION: "+caution, 88)
}

// wrapWords breaks text into lines of at most width bytes at spaces.
func wrapWords(text string, width int) string {
	var b strings.Builder
	n := 0
	for i, w := range strings.Fields(text) {
		if i > 0 && n+1+len(w) > width {
			b.WriteByte('\n')
			n = 0
		} else if i > 0 {
			b.WriteByte(' ')
			n++
		}
		b.WriteString(w)
		n += len(w)
	}
	return b.String()
}

// writeScaleCSV prints one row per string, units in the header.
func writeScaleCSV(w io.Writer, sh *scaleSheet, u tension.ForceUnit) error {
	cw := csv.NewWriter(w)
	sym := u.Symbol
	if sym == "N" {
		sym = "n"
	}
	_ = cw.Write([]string{"id", "note", "section", "target_hz", "f0_hz", "length_mm", "construction", "mass_g_per_m",
		"mass_weighed", "tension_" + sym, "breaking_" + sym, "margin", "inharmonicity", "flag", "strength_basis"})
	f := func(x float64, prec int) string { return strconv.FormatFloat(x, 'f', prec, 64) }
	for _, r := range sh.Strings {
		_ = cw.Write([]string{r.ID, r.Note, r.Section, f(r.TargetHz, 3), f(r.F0Hz, 3), f(tension.ToMM(r.LengthM), 1),
			r.Construction, f(1000*r.MassPerMKg, 3), strconv.FormatBool(r.MassWeighed),
			f(u.From(r.TensionN), 2), f(u.From(r.BreakingN), 2), f(r.Margin, 4),
			strconv.FormatFloat(r.Inharmonicity, 'e', 3, 64), r.Flag, r.StrengthBasis})
	}
	cw.Flush()
	return cw.Error()
}

// scaleWriter keeps the first write error so that formatting code stays linear.
type scaleWriter struct {
	w   io.Writer
	err error
}

func (e *scaleWriter) printf(format string, a ...any) {
	if e.err == nil {
		_, e.err = fmt.Fprintf(e.w, format, a...)
	}
}

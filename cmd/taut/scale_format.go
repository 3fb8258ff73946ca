package main

import (
	"encoding/csv"
	"fmt"
	"io"
	"strconv"
	"strings"

	"taut/monitor/tension"
)

// writeSheetText prints the scale sheet for people.
func writeSheetText(w io.Writer, sh *sheet, u tension.ForceUnit) error {
	ew := &errWriter{w: w}
	ew.printf("Scale sheet: %s\n", sh.Instrument)
	ew.printf("config %s, A4 = %g Hz, forces in %s, lengths and diameters in mm\n\n", sh.Config, sh.ReferenceHz, u.Symbol)
	idW, conW := len("id"), len("construction")
	for _, r := range sh.Strings {
		idW, conW = max(idW, len(r.ID)), max(conW, len(r.Construction))
	}
	force := "tension " + u.Symbol
	brk := "break " + u.Symbol
	ew.printf("%-*s  %-4s  %9s  %6s  %-*s  %9s  %10s  %10s  %6s  %8s  %s\n",
		idW, "id", "note", "target Hz", "length", conW, "construction", "mass g/m", force, brk, "margin", "B (core)", "flag")
	for _, r := range sh.Strings {
		weighed := " "
		if r.MassWeighed {
			weighed = "*"
		}
		row := fmt.Sprintf("%-*s  %-4s  %9.2f  %6.0f  %-*s  %8.2f%s  %10.1f  %10.1f  %5.1f%%  %8.2e  %s",
			idW, r.ID, r.Note, r.TargetHz, tension.ToMM(r.LengthM), conW, r.Construction,
			1000*r.MassPerMKg, weighed, u.From(r.TensionN), u.From(r.BreakingN), 100*r.Margin, r.Inharmonicity, r.Flag)
		ew.printf("%s\n", strings.TrimRight(row, " "))
	}
	writeTotals(ew, sh, u)
	writeNotes(ew, sh)
	return ew.err
}

func writeTotals(ew *errWriter, sh *sheet, u tension.ForceUnit) {
	ew.printf("\nTotals%14s  %7s  %12s  %s\n", "", "strings", "tension "+u.Symbol, "margin min-max")
	line := func(t sectionTotal) {
		name := t.Section
		if name == "" {
			name = "(no section)"
		}
		ew.printf("  %-18s  %7d  %12.1f  %.1f-%.1f %%\n", name, t.Strings, u.From(t.TensionN), 100*t.MinMargin, 100*t.MaxMargin)
	}
	for _, t := range sh.Sections {
		line(t)
	}
	line(sectionTotal{Section: "whole instrument", Strings: len(sh.Strings), TensionN: sh.TotalTensionN,
		MinMargin: sh.MinMargin, MaxMargin: sh.MaxMargin})
	if u != tension.Newton {
		ew.printf("  (%.0f N in all)\n", sh.TotalTensionN)
	}
}

func writeNotes(ew *errWriter, sh *sheet) {
	counts := map[string]int{}
	for _, r := range sh.Strings {
		counts[r.Flag]++
	}
	ew.printf("\nFlags: warn above %.0f %% of breaking load (%d), ALARM above %.0f %% (%d): trade figures;\n",
		100*sh.MarginWarn, counts[flagWarn], 100*sh.MarginAlarm, counts[flagAlarm])
	ew.printf("low below %.0f %% (%d): engineering judgement, a string that slack may buzz, drift or be the wrong gauge.\n",
		100*sh.MarginLow, counts[flagLow])
	ew.printf("Mass per length from geometry; * = weighed value from the config.\n")
	ew.printf("B is predicted from the core alone: a lower bound for wound strings.\n")
	ew.printf("Margin = tension / breaking load of the core. Strength basis, by core material:\n")
	for _, b := range sh.Bases {
		ew.printf("  %-16s %s\n", strings.ReplaceAll(b.Material, "_", " "), b.Basis)
	}
	ew.printf("The margin depends on that basis; it is a guide, never a guarantee.\n")
	if sh.Caution != "" {
		ew.printf("\n%s\n", sh.Caution)
	}
}

// writeSheetCSV prints one row per string, units in the header.
func writeSheetCSV(w io.Writer, sh *sheet, u tension.ForceUnit) error {
	cw := csv.NewWriter(w)
	sym := u.Symbol
	if sym == "N" {
		sym = "n"
	}
	_ = cw.Write([]string{"id", "note", "section", "target_hz", "length_mm", "construction", "mass_g_per_m",
		"mass_weighed", "tension_" + sym, "breaking_" + sym, "margin", "inharmonicity", "flag", "strength_basis"})
	f := func(x float64, prec int) string { return strconv.FormatFloat(x, 'f', prec, 64) }
	for _, r := range sh.Strings {
		_ = cw.Write([]string{r.ID, r.Note, r.Section, f(r.TargetHz, 3), f(tension.ToMM(r.LengthM), 1),
			r.Construction, f(1000*r.MassPerMKg, 3), strconv.FormatBool(r.MassWeighed),
			f(u.From(r.TensionN), 2), f(u.From(r.BreakingN), 2), f(r.Margin, 4),
			strconv.FormatFloat(r.Inharmonicity, 'e', 3, 64), r.Flag, r.StrengthBasis})
	}
	cw.Flush()
	return cw.Error()
}

// errWriter keeps the first write error so that formatting code stays linear.
type errWriter struct {
	w   io.Writer
	err error
}

func (e *errWriter) printf(format string, a ...any) {
	if e.err == nil {
		_, e.err = fmt.Fprintf(e.w, format, a...)
	}
}

package main

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"taut/monitor/instrument"
	"taut/monitor/tension"
)

// scaleLowMargin flags suspiciously low tension: below 20 % of breaking load. An
// engineering judgement, under the 24 % low end of the trade's range for short piano
// scales (reference-values §4.1): such a string may be slack and buzz, drift more, or
// be strung with the wrong gauge.
const scaleLowMargin = 0.20

// Flags of one string on the scale sheet.
const (
	scaleFlagLow   = "low"
	scaleFlagWarn  = "warn"
	scaleFlagAlarm = "ALARM"
)

// scaleRow is one string on the scale sheet, in SI. The target is the pitch of the
// first partial (what a tuner shows); f0 is the ideal-string fundamental that sounds
// it, and every tension figure comes from f0 (tension package doc, "Target pitch").
type scaleRow struct {
	ID             string  `json:"id"`
	Note           string  `json:"note"`
	Section        string  `json:"section"`
	TargetHz       float64 `json:"target_hz"` // first partial
	LengthM        float64 `json:"length_m"`
	F0Hz           float64 `json:"f0_hz"`            // ideal-string f0 = target/√(1+B)
	FirstPartialHz float64 `json:"first_partial_hz"` // f0·√(1+B), equal to the target: a check
	Construction   string  `json:"construction"`
	MassPerMKg     float64 `json:"mass_per_m_kg"`
	MassWeighed    bool    `json:"mass_weighed"`
	TensionN       float64 `json:"tension_n"`
	BreakingN      float64 `json:"breaking_n"`
	Margin         float64 `json:"margin"`
	Inharmonicity  float64 `json:"inharmonicity"`
	BreakingHz     float64 `json:"breaking_hz"`
	Flag           string  `json:"flag"`
	StrengthBasis  string  `json:"strength_basis"`
}

// scaleTotal sums one section, or the whole instrument.
type scaleTotal struct {
	Section   string  `json:"section"`
	Strings   int     `json:"strings"`
	TensionN  float64 `json:"tension_n"`
	MinMargin float64 `json:"min_margin"`
	MaxMargin float64 `json:"max_margin"`
}

// scaleSheet is the whole scale sheet; its JSON form is the stable --json output.
type scaleSheet struct {
	Instrument    string       `json:"instrument"`
	Config        string       `json:"config"`
	ReferenceHz   float64      `json:"reference_hz"`
	Strings       []scaleRow   `json:"strings"`
	Sections      []scaleTotal `json:"sections"`
	TotalTensionN float64      `json:"total_tension_n"`
	MinMargin     float64      `json:"min_margin"`
	MaxMargin     float64      `json:"max_margin"`
	MarginWarn    float64      `json:"margin_warn"` // the lower of the config's margin_warn and tension.CautionFloor
	MarginAlarm   float64      `json:"margin_alarm"`
	MarginLow     float64      `json:"margin_low"`
	Bases         []scaleBasis `json:"strength_basis"`
	Caution       string       `json:"caution,omitempty"`
}

// scaleBasis states the strength basis of one core material in use.
type scaleBasis struct {
	Material string `json:"material"`
	Basis    string `json:"basis"`
}

// scaleWarnAt is the margin above which a string is flagged and the caution shown:
// the config's margin_warn, but never above tension.CautionFloor (a config may warn
// earlier, never later).
func scaleWarnAt(l instrument.Listen) float64 {
	if l.MarginWarn > 0 {
		return min(l.MarginWarn, tension.CautionFloor)
	}
	return tension.CautionFloor
}

func newScaleSheet(cfg *instrument.Config) (*scaleSheet, error) {
	in := &cfg.Instrument
	sh := &scaleSheet{
		Instrument: in.Name, Config: cfg.Path, ReferenceHz: in.ReferenceHz,
		MarginWarn: scaleWarnAt(cfg.Listen), MarginAlarm: cfg.Listen.MarginAlarm, MarginLow: scaleLowMargin,
	}
	seen := map[string]bool{}
	for i := range in.Strings {
		r, err := scaleRowOf(&in.Strings[i], sh.MarginWarn, sh.MarginAlarm)
		if err != nil {
			return nil, err
		}
		sh.Strings = append(sh.Strings, r)
		if m := in.Strings[i].Phys.Core.Material; !seen[m.Name] {
			seen[m.Name] = true
			sh.Bases = append(sh.Bases, scaleBasis{m.Name, m.Basis})
		}
		if r.Flag == scaleFlagWarn || r.Flag == scaleFlagAlarm {
			sh.Caution = tension.Caution
		}
	}
	all := scaleSum("all", sh.Strings)
	sh.TotalTensionN, sh.MinMargin, sh.MaxMargin = all.TensionN, all.MinMargin, all.MaxMargin
	for _, name := range scaleSections(sh.Strings) {
		var rows []scaleRow
		for _, r := range sh.Strings {
			if r.Section == name {
				rows = append(rows, r)
			}
		}
		sh.Sections = append(sh.Sections, scaleSum(name, rows))
	}
	return sh, nil
}

// scaleRowOf computes one string's figures from the ideal f0 that sounds its target
// as the first partial, and flags it against warnAt and alarmAt.
func scaleRowOf(s *instrument.String, warnAt, alarmAt float64) (scaleRow, error) {
	p := &s.Phys
	f0, err := p.F0ForFirstPartial(s.TargetHz)
	if err != nil {
		return scaleRow{}, fmt.Errorf("string %s: target %.2f Hz: %w", s.ID, s.TargetHz, err)
	}
	t := p.Tension(f0)
	r := scaleRow{
		ID: s.ID, Note: s.Note, Section: s.Section, TargetHz: s.TargetHz, LengthM: p.LengthM,
		F0Hz: f0, FirstPartialHz: p.FirstPartialHz(f0),
		Construction: scaleConstruction(p), MassPerMKg: p.MassPerLength(), MassWeighed: p.MeasuredMuKgM > 0,
		TensionN: t, BreakingN: p.BreakingLoad(), Margin: p.Margin(t), Inharmonicity: p.Inharmonicity(t),
		BreakingHz: p.BreakingHz(), StrengthBasis: p.Core.Material.Basis,
	}
	// Warn above margin_warn (default 70 %: "the commonly accepted maximum upper
	// tension limit", and bass strings "never intentionally… exceed 70 %"), never later
	// than the 70 % caution floor, and alarm above margin_alarm (default 85 %, about
	// 1.4 semitones below breaking) — trade figures, reference-values §4.1.
	switch {
	case r.Margin > alarmAt:
		r.Flag = scaleFlagAlarm
	case r.Margin > warnAt:
		r.Flag = scaleFlagWarn
	case r.Margin < scaleLowMargin:
		r.Flag = scaleFlagLow
	}
	return r, nil
}

// rounded returns a copy with every number rounded to 7 significant digits, so
// that the JSON output does not change with the last bits of floating point
// (fused multiply-add on some CPUs).
func (sh *scaleSheet) rounded() *scaleSheet {
	c := *sh
	c.ReferenceHz, c.TotalTensionN = sig7(c.ReferenceHz), sig7(c.TotalTensionN)
	c.MinMargin, c.MaxMargin = sig7(c.MinMargin), sig7(c.MaxMargin)
	c.Strings = make([]scaleRow, len(sh.Strings))
	for i, r := range sh.Strings {
		for _, p := range []*float64{&r.TargetHz, &r.LengthM, &r.F0Hz, &r.FirstPartialHz, &r.MassPerMKg,
			&r.TensionN, &r.BreakingN, &r.Margin, &r.Inharmonicity, &r.BreakingHz} {
			*p = sig7(*p)
		}
		c.Strings[i] = r
	}
	c.Sections = make([]scaleTotal, len(sh.Sections))
	for i, t := range sh.Sections {
		t.TensionN, t.MinMargin, t.MaxMargin = sig7(t.TensionN), sig7(t.MinMargin), sig7(t.MaxMargin)
		c.Sections[i] = t
	}
	return &c
}

func sig7(x float64) float64 {
	v, _ := strconv.ParseFloat(strconv.FormatFloat(x, 'g', 7, 64), 64)
	return v
}

// scaleSections lists sections in the order they first appear (lowest string first).
func scaleSections(rows []scaleRow) []string {
	var names []string
	seen := map[string]bool{}
	for _, r := range rows {
		if !seen[r.Section] {
			seen[r.Section] = true
			names = append(names, r.Section)
		}
	}
	return names
}

func scaleSum(name string, rows []scaleRow) scaleTotal {
	t := scaleTotal{Section: name, Strings: len(rows), MinMargin: math.Inf(1), MaxMargin: math.Inf(-1)}
	for _, r := range rows {
		t.TensionN += r.TensionN
		t.MinMargin = math.Min(t.MinMargin, r.Margin)
		t.MaxMargin = math.Max(t.MaxMargin, r.Margin)
	}
	if len(rows) == 0 {
		t.MinMargin, t.MaxMargin = 0, 0
	}
	return t
}

// scaleMaterialLabel is how a material reads on the sheet: its config name with
// spaces ("music wire", "phosphor bronze"), the same for a core, a wrap and the
// strength-basis list.
func scaleMaterialLabel(m *tension.Material) string {
	return strings.ReplaceAll(m.Name, "_", " ")
}

// scaleConstruction describes a string, e.g. "music wire 1.05 mm" or
// "music wire 1.50 + copper 1.00 mm".
func scaleConstruction(p *tension.String) string {
	parts := []string{fmt.Sprintf("%s %.2f", scaleMaterialLabel(p.Core.Material), tension.ToMM(p.Core.DiameterM))}
	for _, w := range p.Wraps {
		parts = append(parts, fmt.Sprintf("%s %.2f", scaleMaterialLabel(w.Material), tension.ToMM(w.DiameterM)))
	}
	return strings.Join(parts, " + ") + " mm"
}

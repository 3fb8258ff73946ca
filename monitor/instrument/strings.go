package instrument

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"taut/monitor/tension"
	"taut/pitch/note"
)

// cell is one value of a string: a decoded TOML value or a CSV cell.
type cell struct {
	v  any
	at pos
}

// row is one string as written, inline or in a CSV table, keyed by colDef.key.
type row struct {
	at    pos // where the string starts; field names the string for messages
	cells map[string]cell
	scale map[string]float64 // factor to SI of each numeric key, from its column name
	bad   map[string]bool    // keys given under a bad name, already reported
	bent  bool               // an error was already reported for this row
}

func newRow(at pos) *row {
	return &row{at: at, cells: map[string]cell{}, scale: map[string]float64{}, bad: map[string]bool{}}
}

// missing reports whether key was not given at all (not even under a bad name).
func (r *row) missing(key string) bool {
	_, has := r.cells[key]
	return !has && !r.bad[key]
}

// set classifies a column name and stores its value; a bad name is an error.
func (p *parser) set(r *row, name string, v any, at pos) {
	d, bad := classify(name)
	if bad != "" {
		p.c.add(at, nil, "%s", bad)
		r.bad[d.key], r.bent = true, true
		return
	}
	if prev, dup := r.cells[d.key]; dup {
		p.c.add(at, v, "the same quantity is given twice (also as %s); want one of %s",
			prev.at.field, quoteList(namesFor(d.key)))
		r.bent = true
		return
	}
	if s, isText := v.(string); isText && strings.TrimSpace(s) == "" {
		return // an empty cell is an absent value
	}
	r.cells[d.key] = cell{v: v, at: at}
	r.scale[d.key] = d.scale
}

func (p *parser) text(r *row, key string) (string, bool) {
	c, ok := r.cells[key]
	if !ok {
		return "", false
	}
	s, isText := c.v.(string)
	if !isText {
		p.c.add(c.at, c.v, "want a quoted name")
		return "", false
	}
	return strings.TrimSpace(s), true
}

// quantity returns a numeric value in SI; present reports whether it was given.
func (p *parser) quantity(r *row, key, want string, check func(float64) bool) (v float64, present, ok bool) {
	c, present := r.cells[key]
	if !present {
		return 0, false, false
	}
	f, ok := p.c.number(c.at, c.v, want)
	if !ok {
		return 0, true, false
	}
	if check != nil && !check(f) {
		p.c.add(c.at, c.v, "want %s", want)
		return 0, true, false
	}
	return f * r.scale[key], true, true
}

// strings builds every string, from the CSV table first and then the inline ones,
// and returns them in scale order (lowest target first).
func (p *parser) strings(raw *rawFile, in *Instrument) []String {
	var rows []*row
	if raw.StringTable != nil {
		rows = append(rows, p.csvRows(raw.StringTable)...)
	}
	for i, m := range raw.String {
		base := fmt.Sprintf("string.%d", i)
		r := newRow(pos{file: p.file, line: p.loc.line(base), field: fmt.Sprintf("string#%d", i+1)})
		keys := make([]string, 0, len(m))
		for k := range m {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		for _, k := range keys {
			at := pos{file: p.file, line: p.loc.line(base + "." + k), field: r.at.field + "." + k}
			if at.line == 0 {
				at.line = r.at.line
			}
			p.set(r, k, m[k], at)
		}
		rows = append(rows, r)
	}
	if len(rows) == 0 && raw.StringTable == nil {
		p.c.add(pos{file: p.file, line: 1, field: "string"}, nil,
			"no strings; want [[string]] tables or string_table = \"FILE.csv\"")
	}
	out := make([]String, 0, len(rows))
	ids := map[string]pos{}
	for _, r := range rows {
		if c, ok := r.cells["id"]; ok {
			if id, isText := c.v.(string); isText {
				id = strings.TrimSpace(id)
				if first, dup := ids[id]; dup {
					p.c.add(c.at, id, "duplicate id (first used at %s); want a unique id per string, e.g. C4a, C4b, C4c for a unison",
						p.where(first))
				} else {
					ids[id] = c.at
				}
			}
		}
		if s, ok := p.buildString(r, in); ok {
			out = append(out, s)
			p.pinAt[s.ID] = r.cells["exciter_pin"].at
		}
	}
	sort.SliceStable(out, func(i, j int) bool { return out[i].TargetHz < out[j].TargetHz })
	return out
}

func (p *parser) where(at pos) string {
	if at.line > 0 {
		return fmt.Sprintf("%s:%d", at.file, at.line)
	}
	return at.file
}

// buildString turns one row into a String; ok is false when it had errors.
func (p *parser) buildString(r *row, in *Instrument) (String, bool) {
	before := len(p.c.list)
	var s String
	id, _ := p.text(r, "id")
	if r.missing("id") {
		p.c.add(r.at, nil, "missing id; want a unique id such as C4a")
	}
	s.ID = id
	s.Section, _ = p.text(r, "section")
	s.ExciterPin, _ = p.text(r, "exciter_pin")
	if ch, present, ok := p.quantity(r, "channel", "a whole input channel number from 0 (none) to 64",
		func(f float64) bool { return f == math.Trunc(f) && f >= 0 && f <= 64 }); present && ok {
		s.Channel = int(ch)
	}
	p.target(r, in.ReferenceHz, &s)
	p.physics(r, in.Materials, &s.Phys)
	if len(p.c.list) > before || r.bent {
		return s, false
	}
	return s, p.breakingCheck(r, &s)
}

// target fills Note, TargetHz and CentsOffset from note and/or target_hz and cents_offset.
func (p *parser) target(r *row, refHz float64, s *String) {
	name, hasNote := p.text(r, "note")
	hz, hasHz, hzOK := p.quantity(r, "target", "a frequency in Hz above 0 and below 20000", between(1e-9, 20000))
	cents, _, _ := p.quantity(r, "cents", "an offset in cents from -100 to 100 (set reference_hz for another pitch standard)", between(-100, 100))
	s.CentsOffset = cents
	if r.missing("note") && r.missing("target") {
		p.c.add(r.at, nil, "missing note; want a note name (e.g. C4, F#3) or target_hz")
	}
	if !hasNote && !hasHz {
		return
	}
	if hasHz && !hzOK {
		return
	}
	if !hasNote {
		midi, _ := note.Nearest(hz, refHz)
		s.Note, s.TargetHz = note.Name(midi), hz*math.Exp2(cents/1200)
		return
	}
	midi, err := note.Parse(name)
	if err != nil {
		c := r.cells["note"]
		p.c.add(c.at, c.v, "want a note name: a letter A-G, optional # or b, and an octave, e.g. C4, F#3, Bb2")
		return
	}
	s.Note = name
	noteHz := note.Hz(midi, refHz)
	if !hasHz {
		s.TargetHz = noteHz * math.Exp2(cents/1200)
		return
	}
	if off := note.Cents(hz, noteHz); math.Abs(off) > 50 {
		c := r.cells["target"]
		p.c.add(c.at, c.v, "target is %+.0f cents from %s (%.2f Hz at A4 = %g); want a target within 50 cents of the note, or give only one of them",
			off, name, noteHz, refHz)
		return
	}
	s.TargetHz = hz * math.Exp2(cents/1200)
}

// physics fills the tension data: length, core, wraps and measured mass.
func (p *parser) physics(r *row, mats map[string]*tension.Material, ph *tension.String) {
	l, _, _ := p.quantity(r, "length", "a positive speaking length up to 5 m", func(f float64) bool {
		return f > 0 && f*r.scale["length"] <= 5
	})
	if r.missing("length") {
		p.c.add(r.at, nil, "missing speaking length; want length_mm (or length_in, length_m)")
	}
	ph.LengthM = l
	coreMat, hasCore := p.text(r, "core")
	_, hasWrap := r.cells["wrap1"]
	switch {
	case !hasCore && hasWrap:
		p.c.add(r.at, nil, "wrap without core: a wound string needs its core; want core and core_mm")
	case !hasCore:
		p.c.add(r.at, nil, "missing core; want the core material (e.g. music_wire, nylon) and core_mm")
	}
	ph.Core = p.layer(r, mats, "core", coreMat, hasCore)
	for _, k := range []string{"wrap1", "wrap2"} {
		m, has := p.text(r, k)
		_, hasD := r.cells[k+"_d"]
		if !has && !hasD {
			continue
		}
		if k == "wrap2" && !hasWrap {
			p.c.add(r.cells["wrap2"].at, r.cells["wrap2"].v, "a second wrap layer needs a first; want wrap1 and wrap1_mm before wrap2")
		}
		if !has {
			p.c.add(r.cells[k+"_d"].at, nil, "wrap diameter without material; want %s (e.g. copper) as well", k)
		}
		ph.Wraps = append(ph.Wraps, p.layer(r, mats, k, m, has))
	}
	if mu, has, ok := p.quantity(r, "mass", "a positive weighed mass per length", positive); has && ok {
		ph.MeasuredMuKgM = mu
	}
}

// layer reads one material and its diameter column (key and key_d).
func (p *parser) layer(r *row, mats map[string]*tension.Material, key, matName string, hasMat bool) tension.Layer {
	var l tension.Layer
	if hasMat {
		if m, ok := mats[matName]; ok {
			l.Material = m
		} else {
			c := r.cells[key]
			p.c.add(c.at, c.v, "unknown material%s; want one of %s or a [materials.%s] table",
				suggest(matName, materialNames(mats)), strings.Join(materialNames(mats), ", "), matName)
		}
	}
	d, hasD, _ := p.quantity(r, key+"_d", "a positive wire diameter up to 20 mm", func(f float64) bool {
		return f > 0 && f*r.scale[key+"_d"] <= 0.020
	})
	if hasMat && !hasD && r.missing(key+"_d") {
		p.c.add(r.at, nil, "%s has no diameter; want %s_mm (or %s_in)", key, key, key)
	}
	l.DiameterM = d
	return l
}

// breakingCheck rejects a string whose target is at or above its breaking pitch. The
// target is a first partial (tension package doc, "Target pitch"), so the comparison
// uses the ideal-string f0 that sounds it: f0 = √(f1² − K), and tension T(f0).
func (p *parser) breakingCheck(r *row, s *String) bool {
	if err := s.Phys.Validate(); err != nil {
		p.c.add(r.at, nil, "%v", err)
		return false
	}
	c, ok := r.cells["note"]
	if _, hasHz := r.cells["target"]; hasHz || !ok {
		c = r.cells["target"]
	}
	f0, err := s.Phys.F0ForFirstPartial(s.TargetHz)
	if err != nil {
		p.c.add(c.at, c.v, "target %.2f Hz cannot be reached on this string: %v", s.TargetHz, err)
		return false
	}
	t := s.Phys.Tension(f0)
	if m := s.Phys.Margin(t); m >= 1 {
		brk := s.Phys.BreakingHz()
		p.c.add(c.at, c.v, "target %.2f Hz is above the breaking pitch %.2f Hz of this string (first partials; ideal-string f0 %.2f Hz "+
			"against %.2f Hz at breaking: tension %.0f N is %.0f %% of the %.0f N breaking load, %s); want a lower pitch, a longer or different string",
			s.TargetHz, s.Phys.FirstPartialHz(brk), f0, brk, t, 100*m, s.Phys.BreakingLoad(), s.Phys.Core.Material.Basis)
		return false
	}
	return true
}

func materialNames(mats map[string]*tension.Material) []string {
	names := make([]string, 0, len(mats))
	for n := range mats {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}

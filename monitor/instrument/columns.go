package instrument

import (
	"sort"
	"strings"
)

// A string is described by the same columns inline ([[string]] keys) and in a CSV
// table (header names). Units are part of the column name, e.g. length_mm or
// length_in; values are converted to SI on reading.
//
//	id            unique string id, e.g. C4a (required)
//	note          note name, e.g. C4, F#3, Bb2 (note or target_hz required)
//	section       group for totals, e.g. treble, tenor, bass
//	length_mm     speaking length (also length_in, length_m; required)
//	core          core material, e.g. music_wire (required)
//	core_mm       core diameter (also core_in; required)
//	wrap1         first wrap layer's material; wrap1_mm / wrap1_in its wire diameter
//	wrap2         second wrap layer's material; wrap2_mm / wrap2_in
//	mass_g_per_m  weighed mass per length, wins over geometry (also mass_kg_per_m)
//	cents_offset  added to the target (stretch, or a chosen temperament), cents
//	target_hz     explicit target instead of, or checking, the note's 12-TET pitch
//	channel       input channel (1-based) of a pickup on this string, 0 = none
//	exciter_pin   GPIO pin of this string's exciter, e.g. GPIO23

type colKind int

const (
	textCol colKind = iota
	numberCol
)

// colDef is what a column name means: the field it fills and the factor to SI.
type colDef struct {
	key   string
	kind  colKind
	scale float64
}

var colDefs = map[string]colDef{
	"id":            {key: "id"},
	"note":          {key: "note"},
	"section":       {key: "section"},
	"core":          {key: "core"},
	"wrap1":         {key: "wrap1"},
	"wrap2":         {key: "wrap2"},
	"exciter_pin":   {key: "exciter_pin"},
	"length_mm":     {key: "length", kind: numberCol, scale: 1e-3},
	"length_in":     {key: "length", kind: numberCol, scale: 0.0254},
	"length_m":      {key: "length", kind: numberCol, scale: 1},
	"core_mm":       {key: "core_d", kind: numberCol, scale: 1e-3},
	"core_in":       {key: "core_d", kind: numberCol, scale: 0.0254},
	"wrap1_mm":      {key: "wrap1_d", kind: numberCol, scale: 1e-3},
	"wrap1_in":      {key: "wrap1_d", kind: numberCol, scale: 0.0254},
	"wrap2_mm":      {key: "wrap2_d", kind: numberCol, scale: 1e-3},
	"wrap2_in":      {key: "wrap2_d", kind: numberCol, scale: 0.0254},
	"mass_g_per_m":  {key: "mass", kind: numberCol, scale: 1e-3},
	"mass_kg_per_m": {key: "mass", kind: numberCol, scale: 1},
	"cents_offset":  {key: "cents", kind: numberCol, scale: 1},
	"target_hz":     {key: "target", kind: numberCol, scale: 1},
	"channel":       {key: "channel", kind: numberCol, scale: 1},
}

// unitFamilies maps the quantities whose column names carry a unit to the key
// they fill.
var unitFamilies = map[string]string{
	"length": "length", "core": "core_d", "wrap1": "wrap1_d", "wrap2": "wrap2_d",
	"mass": "mass", "target": "target", "cents": "cents",
}

func columnNames() []string {
	names := make([]string, 0, len(colDefs))
	for n := range colDefs {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}

// namesFor lists the accepted names that fill one key, e.g. length_mm, length_in, length_m.
func namesFor(key string) []string {
	var out []string
	for _, n := range columnNames() {
		if colDefs[n].key == key {
			out = append(out, n)
		}
	}
	return out
}

// classify returns the meaning of a column name, or the expectation for a bad one:
// a known quantity with a unit we do not accept, or an unknown name. With a bad name
// the colDef still names the key the user probably meant, so that it does not also
// count as missing.
func classify(name string) (colDef, string) {
	if d, ok := colDefs[name]; ok {
		return d, ""
	}
	for fam, key := range unitFamilies {
		if name == fam || strings.HasPrefix(name, fam+"_") {
			return colDef{key: key}, "unit not accepted (the unit is part of the name); want one of " +
				quoteList(namesFor(key))
		}
	}
	var likely colDef // the column the user probably meant, so it is not also "missing"
	if c := closest(name, columnNames()); c != "" {
		likely = colDefs[c]
	}
	return likely, "unknown column" + suggest(name, columnNames()) +
		"; want one of " + strings.Join(columnNames(), ", ")
}

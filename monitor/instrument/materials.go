package instrument

import (
	"fmt"
	"path/filepath"
	"regexp"
	"sort"
	"strings"

	"taut/monitor/tension"
)

// rawMaterial is one [materials.NAME] table. Naming a built-in material overrides the
// given values; a new name adds a material, starting from `like` when given.
type rawMaterial struct {
	Like        any `toml:"like"`          // built-in to start from, e.g. "nylon"
	DensityKgM3 any `toml:"density_kg_m3"` // ρ
	YoungGPa    any `toml:"young_gpa"`     // E
	StrengthMPa any `toml:"strength_mpa"`  // tensile strength, replaces any strength table
	Basis       any `toml:"basis"`         // where the strength comes from, shown beside margins
}

var materialNameRE = regexp.MustCompile(`^[a-z][a-z0-9_]*$`)

// materials returns the built-in materials with the config's overrides and additions.
func (p *parser) materials(raw map[string]rawMaterial) map[string]*tension.Material {
	mats := tension.Builtin()
	names := make([]string, 0, len(raw))
	for n := range raw {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, name := range names {
		if m := p.material(name, raw[name], mats); m != nil {
			mats[name] = m
		}
	}
	return mats
}

func (p *parser) material(name string, r rawMaterial, mats map[string]*tension.Material) *tension.Material {
	key := "materials." + name
	at := func(k string) pos {
		a := p.at(key + "." + k)
		if a.line == 0 {
			a.line = p.loc.line(key)
		}
		return a
	}
	if !materialNameRE.MatchString(name) {
		p.c.add(p.at(key), name, "want a material name of lower-case letters, digits and _, e.g. silk_core")
		return nil
	}
	before := len(p.c.list)
	m, builtin := mats[name]
	if like := p.c.optString(at("like"), r.Like, ""); like != "" {
		base, ok := tension.Builtin()[like]
		if !ok {
			p.c.add(at("like"), like, "want a built-in material%s: %s", suggest(like, builtinNames()), strings.Join(builtinNames(), ", "))
			return nil
		}
		m, builtin = base, true
	}
	if !builtin {
		m = &tension.Material{}
		for _, req := range []struct {
			v    any
			name string
		}{{r.DensityKgM3, "density_kg_m3"}, {r.YoungGPa, "young_gpa"}, {r.StrengthMPa, "strength_mpa"}} {
			if req.v == nil {
				p.c.add(p.at(key), nil, "new material needs %s (or like = \"a built-in material\")", req.name)
			}
		}
	}
	m = m.Clone()
	m.Name = name
	m.DensityKgM3 = p.c.optNumber(at("density_kg_m3"), r.DensityKgM3, m.DensityKgM3,
		"a density in kg/m³ from 500 to 25000", between(500, 25000))
	m.YoungPa = 1e9 * p.c.optNumber(at("young_gpa"), r.YoungGPa, m.YoungPa/1e9,
		"Young's modulus in GPa from 0.1 to 500", between(0.1, 500))
	if r.StrengthMPa != nil {
		m.StrengthPa = 1e6 * p.c.optNumber(at("strength_mpa"), r.StrengthMPa, 0,
			"a tensile strength in MPa from 10 to 5000", between(10, 5000))
		m.StrengthTable = nil
		m.Basis = fmt.Sprintf("%s (config file)", filepath.Base(p.file))
	}
	m.Basis = p.c.optString(at("basis"), r.Basis, m.Basis)
	if len(p.c.list) > before {
		return nil
	}
	return m
}

func builtinNames() []string {
	var names []string
	for n := range tension.Builtin() {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}

package tension

import (
	"math"
	"sort"
)

// Unit constants used to state the published figures exactly as printed.
const (
	metrePerInch = 0.0254
	paPerKsi     = 6.894757e6 // 1 ksi = 6.894757 MPa
)

// astmA228Min is the minimum tensile strength of music wire against diameter,
// ASTM A228/A228M Table 1 (inch-pound), as reproduced in reference-values §3.1
// (the table was seen in a distributor's reproduction, not in the standard itself;
// the reproduction's 0.036 in typo is corrected there). Columns: d (in), UTS min (ksi).
var astmA228Min = [][2]float64{
	{0.004, 439}, {0.005, 426}, {0.006, 415}, {0.007, 407}, {0.008, 399},
	{0.009, 393}, {0.010, 387}, {0.011, 382}, {0.012, 377}, {0.013, 373},
	{0.014, 369}, {0.015, 365}, {0.016, 362}, {0.018, 356}, {0.020, 350},
	{0.022, 345}, {0.024, 341}, {0.026, 337}, {0.028, 333}, {0.030, 330},
	{0.032, 327}, {0.034, 324}, {0.036, 321}, {0.038, 318}, {0.040, 315},
	{0.042, 313}, {0.045, 309}, {0.048, 306}, {0.051, 303}, {0.055, 300},
	{0.059, 296}, {0.063, 293}, {0.067, 290}, {0.072, 287}, {0.076, 284},
	{0.080, 282}, {0.085, 279}, {0.090, 276}, {0.095, 274}, {0.100, 271},
	{0.102, 270}, {0.107, 268}, {0.110, 267}, {0.112, 266}, {0.121, 263},
	{0.125, 261}, {0.130, 259}, {0.135, 258}, {0.140, 256}, {0.145, 254},
	{0.150, 253}, {0.156, 251}, {0.162, 249}, {0.177, 245}, {0.192, 241},
	{0.207, 238}, {0.225, 235}, {0.250, 230},
}

// BasisASTMA228 is the strength basis stated beside every music-wire margin.
const BasisASTMA228 = "ASTM A228 minimum (as reproduced, see reference-values §3.1)"

// inchKsiTable converts a (d in, ksi) table to SI strength points.
func inchKsiTable(rows [][2]float64) []StrengthPoint {
	pts := make([]StrengthPoint, len(rows))
	for i, r := range rows {
		pts[i] = StrengthPoint{DiameterM: r[0] * metrePerInch, StrengthPa: r[1] * paPerKsi}
	}
	return pts
}

// Strength returns the tensile strength in Pa of a wire of the given diameter.
// With a StrengthTable it interpolates linearly in diameter between rows (ASTM A228
// allows interpolation for intermediate sizes — from memory, reference-values §3.1)
// and holds the end values outside the table; otherwise it returns StrengthPa.
func (m *Material) Strength(diameterM float64) float64 {
	t := m.StrengthTable
	if len(t) == 0 {
		return m.StrengthPa
	}
	if diameterM <= t[0].DiameterM {
		return t[0].StrengthPa
	}
	last := t[len(t)-1]
	if diameterM >= last.DiameterM {
		return last.StrengthPa
	}
	i := sort.Search(len(t), func(i int) bool { return t[i].DiameterM >= diameterM })
	lo, hi := t[i-1], t[i]
	w := (diameterM - lo.DiameterM) / (hi.DiameterM - lo.DiameterM)
	return lo.StrengthPa + w*(hi.StrengthPa-lo.StrengthPa)
}

// Clone returns a deep copy, so that config overrides never change a shared value.
func (m *Material) Clone() *Material {
	c := *m
	c.StrengthTable = append([]StrengthPoint(nil), m.StrengthTable...)
	return &c
}

// Validate reports a material whose constants cannot give a meaningful answer.
func (m *Material) Validate() error {
	switch {
	case !(m.DensityKgM3 > 0) || math.IsInf(m.DensityKgM3, 0):
		return errorf("material %q: density %g kg/m³: want a positive number", m.Name, m.DensityKgM3)
	case !(m.YoungPa > 0) || math.IsInf(m.YoungPa, 0):
		return errorf("material %q: Young's modulus %g Pa: want a positive number", m.Name, m.YoungPa)
	case len(m.StrengthTable) == 0 && (!(m.StrengthPa > 0) || math.IsInf(m.StrengthPa, 0)):
		return errorf("material %q: tensile strength %g Pa: want a positive number", m.Name, m.StrengthPa)
	}
	for i, p := range m.StrengthTable {
		if !(p.DiameterM > 0) || !(p.StrengthPa > 0) {
			return errorf("material %q: strength table row %d: want positive diameter and strength", m.Name, i+1)
		}
		if i > 0 && p.DiameterM <= m.StrengthTable[i-1].DiameterM {
			return errorf("material %q: strength table row %d: diameters must ascend", m.Name, i+1)
		}
	}
	return nil
}

// Builtin returns fresh copies of the built-in materials, keyed music_wire, stainless,
// phosphor_bronze, brass, copper, nylon, gut and fluorocarbon. Callers may change
// them freely. Sources are given beside each value; "from memory" values are the
// ones reference-values §3.2 marks Memory.
func Builtin() map[string]*Material {
	return map[string]*Material{
		"music_wire": {
			Name: "music_wire",
			// ρ 7850 kg/m³: reference-values §3.2 (materials-data sheet 7.8 g/cm³,
			// spring-design data 7861; Young 1952 E/ρ = 25.5e6 m²/s² gives E ≈ 200 GPa at 7850).
			DensityKgM3: 7850,
			YoungPa:     200e9, // reference-values §3.2: 200 GPa (190–207 across sources)
			// Strength: ASTM A228 minimum against diameter, reference-values §3.1.
			StrengthTable: inchKsiTable(astmA228Min),
			Basis:         BasisASTMA228,
		},
		"stainless": {
			Name:        "stainless",
			DensityKgM3: 7916,  // 302 stainless: 0.286 lb/in³ (spring-design data, reference-values §3.2)
			YoungPa:     193e9, // 28e6 psi (spring-design data, reference-values §3.2)
			// The ASTM A313 table was not found; the open spring-design data's interpolation
			// anchors for 302 are 330 ksi at 0.010 in and 145 ksi at 0.400 in (reference-values §3.2).
			StrengthTable: inchKsiTable([][2]float64{{0.010, 330}, {0.400, 145}}),
			Basis:         "spring-design data anchors for 302 stainless, linear (not the ASTM A313 table; reference-values §3.2)",
		},
		"phosphor_bronze": {
			Name:        "phosphor_bronze",
			DensityKgM3: 8860,  // C51000: reference-values §3.2 (materials-data sheet 8.8 g/cm³, spring-design data 0.320 lb/in³)
			YoungPa:     110e9, // C51000 materials-data sheet, reference-values §3.2 (spring-design data use 103)
			StrengthPa:  1000e6,
			Basis:       "spring-temper wire ≈145 ksi at 0.010 in (spring-design data, reference-values §3.2)",
		},
		"brass": {
			Name:        "brass",
			DensityKgM3: 8525,  // 70/30 spring brass: 0.308 lb/in³ (spring-design data, reference-values §3.2)
			YoungPa:     110e9, // 16e6 psi (spring-design data, reference-values §3.2)
			StrengthPa:  900e6,
			Basis:       "small spring wire ≈130 ksi (spring-design data, reference-values §3.2)",
		},
		"copper": {
			Name:        "copper",
			DensityKgM3: 8890,  // IEC 1913 standard value, Copper Development Association (reference-values §3.2)
			YoungPa:     120e9, // C11600 materials-data sheet, reference-values §3.2 (117–130)
			StrengthPa:  220e6,
			Basis:       "annealed copper ≈220 MPa (from memory, reference-values §3.2)",
		},
		"nylon": {
			Name:        "nylon",
			DensityKgM3: 1140, // nylon 6.6: 1.14 Mg/m³, reference-values §3.2 (bulk nylon 6.6 handbook values)
			// Oriented harp monofilament is stiffer and much stronger than the bulk resin
			// (1.6–3.8 GPa, 60–90 MPa). Both string figures below are from memory, low confidence.
			YoungPa:    4e9,
			StrengthPa: 400e6,
			Basis:      "nylon monofilament ≈400 MPa (from memory, low confidence)",
		},
		"gut": {
			Name:        "gut",
			DensityKgM3: 1300,  // from memory, reference-values §3.2 (1250–1350)
			YoungPa:     4.5e9, // from memory, reference-values §3.2 (3–6 GPa)
			StrengthPa:  350e6, // from memory, reference-values §3.2 (300–450 MPa)
			Basis:       "gut ≈350 MPa (from memory, low confidence)",
		},
		"fluorocarbon": {
			Name:        "fluorocarbon",
			DensityKgM3: 1780, // PVDF, from memory, reference-values §3.2
			// Strings are stiffer and stronger than bulk PVDF (1–3 GPa, 40–60 MPa);
			// both figures are from memory, low confidence.
			YoungPa:    4e9,
			StrengthPa: 350e6,
			Basis:      "fluorocarbon monofilament ≈350 MPa (from memory, low confidence)",
		},
	}
}

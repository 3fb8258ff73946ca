package tension

import (
	"math"
	"testing"
)

func TestMaterial_StrengthASTMA228(t *testing.T) {
	mw := Builtin()["music_wire"]
	// reference-values §3.1 (ASTM A228 minimum as reproduced): rows d (in) → UTS min (MPa), min break (N).
	for _, c := range []struct {
		name             string
		dIn, mpa, break_ float64
	}{
		{"Row0004", 0.004, 3027, 25},
		{"Row0030", 0.030, 2275, 1038},
		{"Row0040", 0.040, 2172, 1761},
		{"Row0051", 0.051, 2089, 2753},
		{"Row0100", 0.100, 1868, 9468},
		{"Row0250", 0.250, 1586, 50221},
	} {
		t.Run(c.name, func(t *testing.T) {
			d := Inches(c.dIn)
			if got := mw.Strength(d) / 1e6; math.Abs(got-c.mpa) > 0.5 {
				t.Errorf("Strength(%g in) = %.1f MPa, want %g", c.dIn, got, c.mpa)
			}
			s := plain(mw, 1, d)
			if got := s.BreakingLoad(); math.Abs(got-c.break_) > 0.005*c.break_+0.5 {
				t.Errorf("BreakingLoad(%g in) = %.1f N, want %g", c.dIn, got, c.break_)
			}
		})
	}
	t.Run("Interpolated", func(t *testing.T) {
		// reference-values §4.1: ≈0.031 in interpolates to 328.5 ksi ≈ 2265 MPa.
		if got := mw.Strength(Inches(0.031)) / 1e6; math.Abs(got-2265) > 1 {
			t.Errorf("Strength(0.031 in) = %.1f MPa, want ≈2265", got)
		}
	})
	t.Run("ClampedOutside", func(t *testing.T) {
		if got, want := mw.Strength(Inches(0.3)), mw.Strength(Inches(0.25)); got != want {
			t.Errorf("Strength beyond table = %g, want end value %g", got, want)
		}
		if got, want := mw.Strength(Inches(0.001)), mw.Strength(Inches(0.004)); got != want {
			t.Errorf("Strength below table = %g, want end value %g", got, want)
		}
	})
	t.Run("FallsWithDiameter", func(t *testing.T) {
		prev := math.Inf(1)
		for d := 0.1e-3; d < 6.5e-3; d += 0.01e-3 {
			s := mw.Strength(d)
			if s > prev {
				t.Fatalf("strength rises at %g m", d)
			}
			prev = s
		}
	})
}

func TestBuiltin(t *testing.T) {
	a := Builtin()
	want := []string{"music_wire", "stainless", "phosphor_bronze", "brass", "copper", "nylon", "gut", "fluorocarbon"}
	if len(a) != len(want) {
		t.Errorf("Builtin() has %d materials, want %d", len(a), len(want))
	}
	for _, name := range want {
		m, ok := a[name]
		if !ok {
			t.Errorf("Builtin() lacks %q", name)
			continue
		}
		if m.Name != name {
			t.Errorf("material %q has Name %q", name, m.Name)
		}
		if err := m.Validate(); err != nil {
			t.Error(err)
		}
		if m.Basis == "" {
			t.Errorf("material %q has no strength basis", name)
		}
	}
	// Fresh copies: changing one must not change the next call's values.
	a["music_wire"].StrengthTable[0].StrengthPa = 1
	a["nylon"].DensityKgM3 = 1
	b := Builtin()
	if b["music_wire"].StrengthTable[0].StrengthPa == 1 || b["nylon"].DensityKgM3 == 1 {
		t.Error("Builtin() returned shared values")
	}
	c := b["music_wire"].Clone()
	c.StrengthTable[0].StrengthPa = 2
	if b["music_wire"].StrengthTable[0].StrengthPa == 2 {
		t.Error("Clone shares its strength table")
	}
}

func TestParseForceUnit(t *testing.T) {
	for in, want := range map[string]string{"si": "N", "N": "N", "KGF": "kgf", "lbf": "lbf"} {
		u, err := ParseForceUnit(in)
		if err != nil || u.Symbol != want {
			t.Errorf("ParseForceUnit(%q) = %v, %v; want %s", in, u, err, want)
		}
	}
	if _, err := ParseForceUnit("ton"); err == nil {
		t.Error("ParseForceUnit(ton) = nil error")
	}
	// reference-values "Units": 1 kgf = 9.80665 N, 1 lbf = 4.448222 N.
	near(t, "kgf", Kgf.From(9.80665), 1, 1e-12)
	near(t, "lbf", Lbf.From(4.448222), 1, 1e-6)
	near(t, "inch", Inches(1), 0.0254, 0)
	near(t, "to inch", ToInches(0.0254), 1, 1e-12)
	near(t, "mm", ToMM(MM(1.25)), 1.25, 1e-12)
}

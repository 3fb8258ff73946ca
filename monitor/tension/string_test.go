package tension

import (
	"math"
	"math/rand/v2"
	"testing"
)

func near(t *testing.T, what string, got, want, relTol float64) {
	t.Helper()
	if math.Abs(got-want) > relTol*math.Abs(want) {
		t.Errorf("%s = %.7g, want %.7g (rel tol %g)", what, got, want, relTol)
	}
}

func musicWire(t *testing.T) *Material {
	t.Helper()
	return Builtin()["music_wire"]
}

// steel7850 is plain steel with the density the worked examples use and a flat
// strength, so the examples do not depend on the ASTM table.
func steel(rho float64) *Material {
	return &Material{Name: "steel", DensityKgM3: rho, YoungPa: 200e9, StrengthPa: 2265e6}
}

func plain(m *Material, lengthM, dM float64) *String {
	return &String{LengthM: lengthM, Core: Layer{Material: m, DiameterM: dM}}
}

func TestString_WorkedExamples(t *testing.T) {
	const tol = 1e-6 // reference-values §1.2: relative error ≤ 1e-6 against recomputed values
	t.Run("E1WaveSpeed", func(t *testing.T) {
		// reference-values §1.2 E1 (OpenStax University Physics Vol. 1, Example 16.5):
		// v = 2·L·f0, so take L = 0.5 m and read v from the frequency.
		hi := &String{LengthM: 0.5, MeasuredMuKgM: 3.09e-4, Core: Layer{steel(7850), 1e-3}}
		near(t, "v high E", hi.Frequency(56.40), 427.2285943668333, tol)
		lo := &String{LengthM: 0.5, MeasuredMuKgM: 5.78e-3, Core: Layer{steel(7850), 1e-3}}
		near(t, "T low E for 427.23 m/s", lo.Tension(hi.Frequency(56.40)), 1054.990291262136, tol)
		near(t, "T low E vs OpenStax answer", lo.Tension(427.23), 1055.0, 0.005) // textbook answer ±0.5 %
	})
	t.Run("E2Frequency", func(t *testing.T) {
		// reference-values §1.2 E2 (Cutnell & Johnson style problem): 765 N, 0.400 m, 3.00 g → 399.2 Hz
		s := &String{LengthM: 0.400, MeasuredMuKgM: 3.00e-3 / 0.400, Core: Layer{steel(7850), 1e-3}}
		near(t, "f1", s.Frequency(765), 399.21798556678283, tol)
		near(t, "f1 vs textbook", s.Frequency(765), 399.2, 0.005)
	})
	t.Run("E3Tension", func(t *testing.T) {
		// reference-values §1.2 E3 (Serway & Jewett style): 0.7000 m, 4.100 g, 261.6 Hz → 785.6 N
		s := &String{LengthM: 0.7, MeasuredMuKgM: 4.1e-3 / 0.7, Core: Layer{steel(7850), 1e-3}}
		near(t, "T", s.Tension(261.6), 785.6287488, tol)
	})
	t.Run("E5PianoWire", func(t *testing.T) {
		// reference-values §1.2 E5 (steel piano string textbook problem): 49.4 in,
		// 0.0421 in, 123 Hz, 7.86 g/cm³ → 672.6 N = 151.2 lbf; 228 strings = 17.24 short tons.
		s := plain(steel(7860), Inches(49.4), Inches(0.0421))
		near(t, "mu", s.MassPerLength(), 7.05901414779376e-3, tol)
		tn := s.Tension(123)
		near(t, "T", tn, 672.5670667326633, tol)
		near(t, "T lbf", Lbf.From(tn), 151.1990914358425, tol)
		near(t, "228 strings, short tons", 228*Lbf.From(tn)/2000, 17.24, 0.001)
	})
	t.Run("E6TopC8", func(t *testing.T) {
		// reference-values §1.2 E6 (trade figure from a technicians' mailing list, 2000): C8, 54.0 mm, 0.785 mm,
		// ρ 7850 → 776.5 N = 79.2 kgf; reference-values §4.1: 70.8 % of the ASTM minimum.
		s := plain(musicWire(t), MM(54.0), MM(0.785))
		tn := s.Tension(4186.009)
		near(t, "T", tn, 776.5093296, tol)
		near(t, "T kgf", Kgf.From(tn), 79.18191529, tol)
		near(t, "breaking load", s.BreakingLoad(), 1096.6571396649113, tol)
		near(t, "margin", s.Margin(tn), 0.708, 0.001)
		// reference-values §2.2: B = 0.0162 at E = 200 GPa.
		near(t, "B", s.Inharmonicity(tn), 0.0162, 0.005)
	})
	t.Run("E7MiddleC", func(t *testing.T) {
		// reference-values §1.2 E7 (own illustrative example): C4, 0.62 m, 1.00 mm → 648.9 N
		s := plain(steel(7850), 0.62, MM(1.00))
		near(t, "T", s.Tension(261.6256), 648.8784980, 1e-5) // C4 given to 7 digits
	})
}

func TestString_Wound(t *testing.T) {
	// reference-values §2.3 worked example (derived, illustrative inputs): 1.50 mm steel
	// (7850) + 1.00 mm copper (8960); μ = 0.069142 kg/m; A1, 1.20 m → 1204.7 N,
	// core stress 682 MPa, B_core = 2.83e-4 (E = 200 GPa).
	cu := &Material{Name: "cu", DensityKgM3: 8960, YoungPa: 120e9, StrengthPa: 220e6}
	s := &String{LengthM: 1.20, Core: Layer{steel(7850), MM(1.5)}, Wraps: []Layer{{cu, MM(1.0)}}}
	near(t, "mu", s.MassPerLength(), 0.069142, 1e-5)
	tn := s.Tension(55.0)
	near(t, "T", tn, 1204.7, 1e-4)
	near(t, "core stress", tn/s.CoreArea(), 682e6, 0.001)
	near(t, "B core", s.Inharmonicity(tn), 2.83e-4, 0.002)
	// Filling-factor identity (reference-values §2.3): wrap mass = (π/4)·ρw·(π/4)·(Do² − dc²).
	do := MM(1.5 + 2*1.0)
	near(t, "fill factor form", s.MassPerLength()-s.Core.Material.DensityKgM3*s.CoreArea(),
		math.Pi/4*8960*math.Pi/4*(do*do-MM(1.5)*MM(1.5)), 1e-12)

	t.Run("SecondLayer", func(t *testing.T) {
		// reference-values §2.3: second layer ρw2·π²·dw2·(dc + 2·dw1 + dw2)/4.
		two := &String{LengthM: 1.2, Core: s.Core, Wraps: []Layer{{cu, MM(1.0)}, {cu, MM(0.8)}}}
		want := s.MassPerLength() + 8960*math.Pi*math.Pi*MM(0.8)*MM(1.5+2+0.8)/4
		near(t, "mu", two.MassPerLength(), want, 1e-12)
	})
	t.Run("MeasuredWins", func(t *testing.T) {
		w := *s
		w.MeasuredMuKgM = 0.0712
		near(t, "mu", w.MassPerLength(), 0.0712, 0)
		near(t, "breaking load ignores mu", w.BreakingLoad(), s.BreakingLoad(), 0)
	})
}

func TestString_RoundTrip(t *testing.T) {
	// Property: Frequency(Tension(f)) == f across plain and wound strings.
	rng := rand.New(rand.NewPCG(1, 1))
	mats := Builtin()
	names := []string{"music_wire", "stainless", "nylon", "gut", "fluorocarbon"}
	for i := range 500 {
		s := &String{
			LengthM: 0.05 + 1.5*rng.Float64(),
			Core:    Layer{mats[names[i%len(names)]], MM(0.3 + 2*rng.Float64())},
		}
		if i%3 == 1 {
			s.Wraps = []Layer{{mats["copper"], MM(0.1 + rng.Float64())}}
		}
		f := 20 + 4000*rng.Float64()
		if got := s.Frequency(s.Tension(f)); math.Abs(got-f) > 1e-12*f {
			t.Fatalf("case %d: Frequency(Tension(%g)) = %.15g", i, f, got)
		}
		if got := s.Tension(s.Frequency(700)); math.Abs(got-700) > 1e-9 {
			t.Fatalf("case %d: Tension(Frequency(700)) = %.15g", i, got)
		}
	}
}

func TestString_BreakingPitch(t *testing.T) {
	// reference-values §3.2: f_break·L = ½·√(σ/ρ) = 268.58 Hz·m at 2265 MPa, ρ 7850,
	// whatever the diameter.
	for _, dMM := range []float64{0.7, 1.0, 1.3} {
		for _, lengthM := range []float64{0.05, 0.4, 1.1} {
			s := plain(steel(7850), lengthM, MM(dMM))
			near(t, "f·L", s.BreakingHz()*lengthM, 268.5772848953974, 1e-9)
			if m := s.Margin(s.Tension(s.BreakingHz())); math.Abs(m-1) > 1e-12 {
				t.Errorf("margin at breaking pitch = %g, want 1", m)
			}
		}
	}
}

func TestRaiseSemitones(t *testing.T) {
	// reference-values §4.1 conversion: −6·log2(p): 50 % → 6.00, 70 % → 3.09, 80 % → 1.93, 89.1 % → 1.00.
	for _, c := range []struct {
		name    string
		p, want float64
	}{
		{"Fifty", 0.5, 6.00}, {"Seventy", 0.7, 3.09}, {"Eighty", 0.8, 1.93}, {"EightyNine", 0.891, 1.00},
	} {
		t.Run(c.name, func(t *testing.T) {
			if got := RaiseSemitones(c.p, 1); math.Abs(got-c.want) > 0.005 {
				t.Errorf("RaiseSemitones(%g, 1) = %.4f, want %.2f", c.p, got, c.want)
			}
		})
	}
	t.Run("MethodMatchesTension", func(t *testing.T) {
		s := plain(musicWire(t), 0.62, MM(1.0))
		st := s.RaiseToMargin(261.6256, 0.70)
		f := 261.6256 * math.Exp2(st/12)
		near(t, "margin after raise", s.Margin(s.Tension(f)), 0.70, 1e-9)
	})
}

func TestString_FirstPartial(t *testing.T) {
	s := plain(musicWire(t), MM(54), MM(0.785))
	b := s.Inharmonicity(s.Tension(4186.009))
	near(t, "f1", s.FirstPartialHz(4186.009), 4186.009*math.Sqrt(1+b), 1e-12)
}

func TestYoungConstant(t *testing.T) {
	// reference-values §2.1: Young 1952 rule I_n = 3.4e13·n²·d²/(ν0²·l⁴) cents (d, l in cm),
	// with E/ρ = 25.5e10 cm²/s²; consistency with Fletcher's B gives 3.404e13.
	m := &Material{Name: "young", DensityKgM3: 7850, YoungPa: 25.5e6 * 7850, StrengthPa: 2e9}
	s := plain(m, 0.62, MM(1.0))
	f0, n := 261.6256, 2.0
	b := s.Inharmonicity(s.Tension(f0))
	cents := 1200 * math.Log2(math.Sqrt(1+b*n*n)) // stiff partial n against n·ν0
	dCM, lCM := 0.1, 62.0
	k := cents * f0 * f0 * math.Pow(lCM, 4) / (n * n * dCM * dCM)
	near(t, "Young's constant (derived)", k, 3.404e13, 0.001)
	near(t, "Young's constant (Young 1952)", k, 3.4e13, 0.01)
}

func TestString_Validate(t *testing.T) {
	mw := Builtin()["music_wire"]
	for _, c := range []struct {
		name string
		s    String
	}{
		{"ZeroLength", String{Core: Layer{mw, 1e-3}}},
		{"NegativeLength", String{LengthM: -1, Core: Layer{mw, 1e-3}}},
		{"NoCoreMaterial", String{LengthM: 1, Core: Layer{nil, 1e-3}}},
		{"ZeroCore", String{LengthM: 1, Core: Layer{mw, 0}}},
		{"NaNWrap", String{LengthM: 1, Core: Layer{mw, 1e-3}, Wraps: []Layer{{mw, math.NaN()}}}},
		{"ThreeWraps", String{LengthM: 1, Core: Layer{mw, 1e-3}, Wraps: []Layer{{mw, 1e-3}, {mw, 1e-3}, {mw, 1e-3}}}},
		{"NegativeMu", String{LengthM: 1, Core: Layer{mw, 1e-3}, MeasuredMuKgM: -1}},
		{"BadMaterial", String{LengthM: 1, Core: Layer{&Material{Name: "x"}, 1e-3}}},
	} {
		t.Run(c.name, func(t *testing.T) {
			if err := c.s.Validate(); err == nil {
				t.Error("Validate() = nil, want an error")
			}
		})
	}
	ok := plain(mw, 1, 1e-3)
	if err := ok.Validate(); err != nil {
		t.Errorf("valid string: %v", err)
	}
}

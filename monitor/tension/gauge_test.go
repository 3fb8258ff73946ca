package tension

import (
	"math"
	"math/rand/v2"
	"testing"
)

func TestGaugeFromB_Inverse(t *testing.T) {
	// Property: predict B for a plain wire, then recover its diameter and tension.
	mw := Builtin()["music_wire"]
	rng := rand.New(rand.NewPCG(1, 1))
	for i := range 200 {
		dM := MM(0.7 + 0.6*rng.Float64())
		lengthM := 0.05 + 1.2*rng.Float64()
		f0 := 60 + 4000*rng.Float64()
		s := plain(mw, lengthM, dM)
		tn := s.Tension(f0)
		g, err := GaugeFromB(mw, lengthM, f0, s.Inharmonicity(tn), TypicalUncertainty)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(g.DiameterM-dM) > 1e-12*dM || math.Abs(g.TensionN-tn) > 1e-9*tn {
			t.Fatalf("case %d: got d %g T %g, want %g %g", i, g.DiameterM, g.TensionN, dM, tn)
		}
	}
}

func TestGaugeFromB_E6(t *testing.T) {
	// reference-values §2.2: C8, 54 mm, 0.785 mm wire, B = 0.0162 (E = 200 GPa) → d ≈ 0.785 mm,
	// T ≈ 776.5 N (E6).
	g, err := GaugeFromB(Builtin()["music_wire"], MM(54), 4186.009, 0.0162, TypicalUncertainty)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "d", g.DiameterM, MM(0.785), 0.002)
	near(t, "T", g.TensionN, 776.5, 0.004)
	// Uncertainty: δd/d = √((0.05/2)² + (0.04/2)² + (2·0.005)²) = 3.35 %;
	// δT/T = √(0.05² + 0.04² + 0.01² + (6·0.005)²) = 7.14 %.
	near(t, "δd/d", g.DiameterErrM/g.DiameterM, math.Sqrt(0.025*0.025+0.02*0.02+0.01*0.01), 1e-12)
	near(t, "δT/T", g.TensionErrN/g.TensionN, math.Sqrt(0.0025+0.0016+0.0001+0.0009), 1e-12)
}

func TestGaugeFromB_Errors(t *testing.T) {
	mw := Builtin()["music_wire"]
	for _, c := range []struct {
		name    string
		l, f, b float64
		m       *Material
	}{
		{"ZeroB", 1, 100, 0, mw},
		{"NaNB", 1, 100, math.NaN(), mw},
		{"ZeroLength", 0, 100, 1e-4, mw},
		{"NegativeF0", 1, -1, 1e-4, mw},
		{"BadMaterial", 1, 100, 1e-4, &Material{Name: "x"}},
	} {
		t.Run(c.name, func(t *testing.T) {
			if _, err := GaugeFromB(c.m, c.l, c.f, c.b, TypicalUncertainty); err == nil {
				t.Error("want an error")
			}
		})
	}
}

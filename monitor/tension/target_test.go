package tension

import (
	"math"
	"math/rand/v2"
	"testing"
)

func TestF0ForFirstPartial_RoundTrip(t *testing.T) {
	// Property: FirstPartialHz(F0ForFirstPartial(f1)) == f1 to 1e-12 relative, across
	// plain and wound strings of every built-in core material and across the compass.
	rng := rand.New(rand.NewPCG(1, 1))
	mats := Builtin()
	names := []string{"music_wire", "stainless", "phosphor_bronze", "nylon", "gut", "fluorocarbon"}
	checked := 0
	for i := range 2000 {
		s := &String{
			LengthM: 0.04 + 1.6*rng.Float64(),
			Core:    Layer{mats[names[i%len(names)]], MM(0.2 + 2*rng.Float64())},
		}
		if i%3 == 1 {
			s.Wraps = []Layer{{mats["copper"], MM(0.1 + rng.Float64())}}
		}
		f1 := 20 + 4500*rng.Float64()
		f0, err := s.F0ForFirstPartial(f1)
		if err != nil {
			continue // below the bare core's own pitch: TestF0ForFirstPartial_Errors
		}
		checked++
		if f0 > f1 {
			t.Fatalf("case %d: f0 %.15g above f1 %.15g", i, f0, f1)
		}
		if got := s.FirstPartialHz(f0); math.Abs(got-f1) > 1e-12*f1 {
			t.Fatalf("case %d: FirstPartialHz(F0ForFirstPartial(%.15g)) = %.15g", i, f1, got)
		}
	}
	if checked < 1900 {
		t.Errorf("only %d of 2000 random strings had a solution; the generator is off", checked)
	}
}

// fixedPointF0 solves f1 = f0·√(1+B(T(f0))) by the plain iteration f0 ← f1/√(1+B(T(f0))),
// independently of the closed form.
func fixedPointF0(s *String, f1 float64) float64 {
	f0 := f1
	for range 200 {
		next := f1 / math.Sqrt(1+s.Inharmonicity(s.Tension(f0)))
		if math.Abs(next-f0) <= 1e-15*f1 {
			return next
		}
		f0 = next
	}
	return f0
}

func TestF0ForFirstPartial_MatchesIteration(t *testing.T) {
	mw := musicWire(t)
	for _, c := range []struct {
		name          string
		lengthM, dM   float64
		f1            float64
		wound         bool
		wantIteration bool
	}{
		{"C8Plain", MM(54), MM(0.785), 4186.009, false, true}, // reference-values §1.2 E6
		{"C4Plain", 0.62, MM(1.0), 261.6256, false, true},     // reference-values §1.2 E7
		{"A1Wound", 1.20, MM(1.5), 55.0, true, true},          // reference-values §2.3 example
	} {
		t.Run(c.name, func(t *testing.T) {
			s := plain(mw, c.lengthM, c.dM)
			if c.wound {
				s.Wraps = []Layer{{Builtin()["copper"], MM(1.0)}}
			}
			f0, err := s.F0ForFirstPartial(c.f1)
			if err != nil {
				t.Fatal(err)
			}
			near(t, "f0 vs fixed-point iteration", f0, fixedPointF0(s, c.f1), 1e-12)
		})
	}
}

func TestF0ForFirstPartial_TopC(t *testing.T) {
	// reference-values §1.2 E6 (trade figure from a technicians' mailing list, 2000):
	// C8, 54.0 mm, 0.785 mm music wire; §2.2: B = 0.0162 at f0 = 4186.009 Hz, so a string
	// whose FIRST PARTIAL a tuner reads as C8 has f0 = f1·√(1 − K/f1²) with
	// K = B·f0² (derived): f0 4151.86 Hz, 14.18 cents below C8; tension 763.9 N,
	// 69.7 % of the ASTM minimum, not the 70.8 % of reading C8 as f0.
	s := plain(musicWire(t), MM(54.0), MM(0.785))
	const f1 = 4186.009 // ISO 16 / reference-values §5: C8
	f0, err := s.F0ForFirstPartial(f1)
	if err != nil {
		t.Fatal(err)
	}
	bAtC8 := s.Inharmonicity(s.Tension(f1)) // B if C8 were the ideal f0: 0.0162 (§2.2)
	near(t, "B at f0 = C8", bAtC8, 0.0162, 0.005)
	near(t, "f0", f0, f1*math.Sqrt(1-bAtC8), 1e-12) // K/f1² = B(f0 = f1)
	near(t, "f0 (derived)", f0, 4151.859, 1e-6)
	// The error this corrects: 600·log2(1+B) cents, ~14 cents at C8.
	b := s.Inharmonicity(s.Tension(f0))
	near(t, "f1/f0 in cents", 1200*math.Log2(f1/f0), 600*math.Log2(1+b), 1e-9)
	near(t, "f1/f0 ≈ 14 cents (derived)", 1200*math.Log2(f1/f0), 14.18, 0.001)
	tn := s.Tension(f0)
	near(t, "T at first partial C8", tn, 776.5093296*(1-bAtC8), 1e-9) // E6 tension × (1 − B)
	near(t, "margin", s.Margin(tn), 0.6966, 0.001)
}

func TestF0ForFirstPartial_Errors(t *testing.T) {
	// A 2 mm music-wire core on 50 mm rings, as a bare hinged bar, near 1.59 kHz
	// (√K, package doc, derived): no tension gives a first partial at or below that.
	bar := plain(musicWire(t), 0.05, MM(2.0))
	k := math.Sqrt(bar.stiffnessHz2())
	near(t, "bare core pitch (derived)", k, 1585.733, 1e-6)
	for _, c := range []struct {
		name string
		f1   float64
	}{
		{"BelowBareCore", 0.9 * k},
		{"AtBareCore", k},
		{"Zero", 0},
		{"Negative", -440},
		{"NaN", math.NaN()},
		{"Inf", math.Inf(1)},
	} {
		t.Run(c.name, func(t *testing.T) {
			if f0, err := bar.F0ForFirstPartial(c.f1); err == nil {
				t.Errorf("F0ForFirstPartial(%g) = %g, nil; want an error", c.f1, f0)
			}
		})
	}
	if f0, err := bar.F0ForFirstPartial(1.01 * k); err != nil || !(f0 > 0) {
		t.Errorf("just above the bare core: %g, %v; want a small positive f0", f0, err)
	}
}

package tension_test

import (
	"fmt"
	"math"

	"taut/monitor/tension"
)

// A plain music-wire string: the top C of a piano (reference-values §1.2 E6).
func ExampleString_Tension() {
	mw := tension.Builtin()["music_wire"]
	s := &tension.String{LengthM: tension.MM(54.0), Core: tension.Layer{Material: mw, DiameterM: tension.MM(0.785)}}
	t := s.Tension(4186.009)
	fmt.Printf("tension %.1f N (%.1f kgf)\n", t, tension.Kgf.From(t))
	fmt.Printf("breaking load %.0f N, margin %.1f %% (%s)\n", s.BreakingLoad(), 100*s.Margin(t), mw.Basis)
	fmt.Printf("B %.4f, %.2f semitones below breaking\n", s.Inharmonicity(t), tension.RaiseSemitones(s.Margin(t), 1))
	// Output:
	// tension 776.5 N (79.2 kgf)
	// breaking load 1097 N, margin 70.8 % (ASTM A228 minimum (as reproduced, see reference-values §3.1))
	// B 0.0162, 2.99 semitones below breaking
}

// A target pitch is a first partial: a tuner reading C8 on the top string hears f1, and
// the tension follows from the lower ideal f0 (reference-values §1.2 E6, §2.2).
func ExampleString_F0ForFirstPartial() {
	mw := tension.Builtin()["music_wire"]
	s := &tension.String{LengthM: tension.MM(54.0), Core: tension.Layer{Material: mw, DiameterM: tension.MM(0.785)}}
	f0, err := s.F0ForFirstPartial(4186.009) // C8 as a tuner shows it
	if err != nil {
		fmt.Println(err)
		return
	}
	t := s.Tension(f0)
	fmt.Printf("f0 %.2f Hz, %.1f cents below the first partial\n", f0, 1200*math.Log2(4186.009/f0))
	fmt.Printf("tension %.1f N, margin %.1f %%, B %.4f\n", t, 100*s.Margin(t), s.Inharmonicity(t))
	// Output:
	// f0 4151.86 Hz, 14.2 cents below the first partial
	// tension 763.9 N, margin 69.7 %, B 0.0165
}

// A wound bass string: steel core and one copper layer (reference-values §2.3).
func ExampleString_MassPerLength() {
	m := tension.Builtin()
	s := &tension.String{
		LengthM: 1.20,
		Core:    tension.Layer{Material: m["music_wire"], DiameterM: tension.MM(1.5)},
		Wraps:   []tension.Layer{{Material: m["copper"], DiameterM: tension.MM(1.0)}},
	}
	t := s.Tension(55.0) // A1
	fmt.Printf("mu %.5f kg/m, tension %.0f N, margin %.0f %%, B >= %.2e\n",
		s.MassPerLength(), t, 100*s.Margin(t), s.Inharmonicity(t))
	// Output:
	// mu 0.06871 kg/m, tension 1197 N, margin 33 %, B >= 2.85e-04
}

// The gauge implied by a measured inharmonicity, with its uncertainty.
func ExampleGaugeFromB() {
	g, err := tension.GaugeFromB(tension.Builtin()["music_wire"], 0.62, 261.63, 3.5e-4, tension.TypicalUncertainty)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("d = %.3f ± %.3f mm, T = %.0f ± %.0f N\n",
		tension.ToMM(g.DiameterM), tension.ToMM(g.DiameterErrM), g.TensionN, g.TensionErrN)
	// Output:
	// d = 0.949 ± 0.032 mm, T = 585 ± 42 N
}

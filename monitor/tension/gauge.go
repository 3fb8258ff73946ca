package tension

import "math"

// Uncertainty holds relative one-sigma uncertainties (0.05 = 5 %) of the inputs of
// GaugeFromB.
type Uncertainty struct {
	B        float64 // the measured inharmonicity coefficient
	EOverRho float64 // the material's E/ρ
	Density  float64 // the material's ρ (tension only)
	Length   float64 // the speaking length
}

// TypicalUncertainty is an engineering judgement, not a published figure: B from a
// partials fit to 5 %; music-wire E spans 190–207 GPa across sources (reference-values
// §3.2), about ±4 %; density to 1 %; a speaking length measured to 0.5 %.
var TypicalUncertainty = Uncertainty{B: 0.05, EOverRho: 0.04, Density: 0.01, Length: 0.005}

// Gauge is a plain-wire diameter and tension inferred from a measured B and f0.
type Gauge struct {
	DiameterM    float64
	DiameterErrM float64 // one sigma
	TensionN     float64 // independent of the nominal gauge
	TensionErrN  float64 // one sigma
}

// GaugeFromB returns the diameter of a plain wire of material m implied by a measured
// inharmonicity b at ideal fundamental f0Hz on speaking length lengthM, inverting
//
//	B = π²·(E/ρ)·d² / (64·L⁴·f0²)   ⇒   d = (8·L²·f0/π)·√(B·ρ/E)
//
// and the tension that goes with it, T = π·ρ·d²·L²·f0² = 64·ρ²·L⁶·f0⁴·B / (π·E).
// First-order propagation of relative errors gives
//
//	δd/d = √((δB/2)² + (δ(E/ρ)/2)² + (2·δL)²)
//	δT/T = √(δB² + δ(E/ρ)² + δρ² + (6·δL)²)
//
// (f0 is known far better than the rest and is left out). The tension is six times as
// sensitive to the length as to B. The formula assumes hinged ends and a plain wire;
// clamped ends raise the measured B slightly, so d is then a little overstated. Do not
// use it for wound strings, whose stiffness the core-only formula underestimates.
func GaugeFromB(m *Material, lengthM, f0Hz, b float64, u Uncertainty) (Gauge, error) {
	if err := m.Validate(); err != nil {
		return Gauge{}, err
	}
	switch {
	case !(b > 0) || math.IsInf(b, 0):
		return Gauge{}, errorf("inharmonicity %g: want a positive coefficient", b)
	case !(lengthM > 0) || math.IsInf(lengthM, 0):
		return Gauge{}, errorf("speaking length %g m: want a positive length", lengthM)
	case !(f0Hz > 0) || math.IsInf(f0Hz, 0):
		return Gauge{}, errorf("f0 %g Hz: want a positive frequency", f0Hz)
	}
	rho, e := m.DensityKgM3, m.YoungPa
	d := 8 * lengthM * lengthM * f0Hz / math.Pi * math.Sqrt(b*rho/e)
	t := math.Pi * rho * d * d * lengthM * lengthM * f0Hz * f0Hz
	relD := math.Sqrt(sq(u.B/2) + sq(u.EOverRho/2) + sq(2*u.Length))
	relT := math.Sqrt(sq(u.B) + sq(u.EOverRho) + sq(u.Density) + sq(6*u.Length))
	return Gauge{DiameterM: d, DiameterErrM: d * relD, TensionN: t, TensionErrN: t * relT}, nil
}

func sq(x float64) float64 { return x * x }

package tension

import (
	"fmt"
	"math"
)

func errorf(format string, a ...any) error {
	return fmt.Errorf("tension: "+format, a...)
}

// MaxWraps is the number of wrap layers the geometry formulas cover.
const MaxWraps = 2

// Wound reports whether the string has at least one wrap layer.
func (s *String) Wound() bool { return len(s.Wraps) > 0 }

// Validate reports data that cannot give a meaningful answer: a non-positive
// length or diameter, a missing material, too many wraps, or a bad material.
func (s *String) Validate() error {
	if !(s.LengthM > 0) || math.IsInf(s.LengthM, 0) {
		return errorf("speaking length %g m: want a positive length", s.LengthM)
	}
	if err := validLayer("core", s.Core); err != nil {
		return err
	}
	if len(s.Wraps) > MaxWraps {
		return errorf("%d wrap layers: at most %d are supported", len(s.Wraps), MaxWraps)
	}
	for i, w := range s.Wraps {
		if err := validLayer(fmt.Sprintf("wrap %d", i+1), w); err != nil {
			return err
		}
	}
	if s.MeasuredMuKgM < 0 || math.IsNaN(s.MeasuredMuKgM) || math.IsInf(s.MeasuredMuKgM, 0) {
		return errorf("measured mass per length %g kg/m: want a positive number or 0 (none)", s.MeasuredMuKgM)
	}
	return nil
}

func validLayer(what string, l Layer) error {
	if l.Material == nil {
		return errorf("%s: no material", what)
	}
	if !(l.DiameterM > 0) || math.IsInf(l.DiameterM, 0) {
		return errorf("%s diameter %g m: want a positive diameter", what, l.DiameterM)
	}
	return l.Material.Validate()
}

// MassPerLength returns μ in kg/m: the measured value when one is set, otherwise
// the geometry of reference-values §2.3:
//
//	core:            ρc·π·dc²/4
//	first wrap:      ρw1·π²·dw1·(dc + dw1)/4
//	second wrap:     ρw2·π²·dw2·(dc + 2·dw1 + dw2)/4
//
// Each close-wound layer of round wire has a centre-line helix of diameter
// (inner diameter + dw) and one turn per dw of length; the pitch term is neglected.
func (s *String) MassPerLength() float64 {
	if s.MeasuredMuKgM > 0 {
		return s.MeasuredMuKgM
	}
	c := s.Core
	mu := c.Material.DensityKgM3 * math.Pi * c.DiameterM * c.DiameterM / 4
	inner := c.DiameterM
	for _, w := range s.Wraps {
		mu += w.Material.DensityKgM3 * math.Pi * math.Pi * w.DiameterM * (inner + w.DiameterM) / 4
		inner += 2 * w.DiameterM
	}
	return mu
}

// Tension returns the tension in N that tunes the string to the ideal (flexible
// string) fundamental f0Hz: T = 4·L²·μ·f0² (Taylor / Mersenne). Pass the fitted
// f0, not the measured first partial, which stiffness raises by √(1+B).
func (s *String) Tension(f0Hz float64) float64 {
	return 4 * s.LengthM * s.LengthM * s.MassPerLength() * f0Hz * f0Hz
}

// Frequency returns the ideal fundamental in Hz at a tension: f0 = √(T/μ)/(2L).
func (s *String) Frequency(tensionN float64) float64 {
	return math.Sqrt(tensionN/s.MassPerLength()) / (2 * s.LengthM)
}

// CoreArea returns the cross-section of the core in m².
func (s *String) CoreArea() float64 {
	return math.Pi * s.Core.DiameterM * s.Core.DiameterM / 4
}

// BreakingLoad returns the load in N at which the core reaches its tensile strength:
// strength at the core diameter × core area. Wraps are taken to carry no load.
func (s *String) BreakingLoad() float64 {
	return s.Core.Material.Strength(s.Core.DiameterM) * s.CoreArea()
}

// Margin returns tension / breaking load (0.5 = 50 % of breaking load).
func (s *String) Margin(tensionN float64) float64 {
	return tensionN / s.BreakingLoad()
}

// Inharmonicity returns the predicted coefficient B = π³·E·d⁴/(64·T·L²) (Fletcher
// 1964) from the core alone. For a wound string the winding adds some stiffness,
// so this is a lower bound (reference-values §2.3).
func (s *String) Inharmonicity(tensionN float64) float64 {
	d := s.Core.DiameterM
	return math.Pow(math.Pi, 3) * s.Core.Material.YoungPa * d * d * d * d /
		(64 * tensionN * s.LengthM * s.LengthM)
}

// FirstPartialHz returns the predicted first partial of the stiff string tuned to
// the ideal fundamental f0Hz: f1 = f0·√(1+B), hinged ends.
func (s *String) FirstPartialHz(f0Hz float64) float64 {
	return f0Hz * math.Sqrt(1+s.Inharmonicity(s.Tension(f0Hz)))
}

// stiffnessHz2 returns K = B·f0² in Hz², the same at every tension because Fletcher's
// B = π³·E·d⁴/(64·T·L²) falls as 1/T and T = 4·L²·μ·f0² rises as f0²:
//
//	K = π³·E·d⁴ / (256·L⁴·μ)
//
// √K is the first partial of the core as a hinged bar with no tension at all.
func (s *String) stiffnessHz2() float64 {
	d, l := s.Core.DiameterM, s.LengthM
	return math.Pow(math.Pi, 3) * s.Core.Material.YoungPa * d * d * d * d /
		(256 * l * l * l * l * s.MassPerLength())
}

// F0ForFirstPartial returns the ideal-string fundamental f0 in Hz of the string
// whose first partial sounds at f1Hz: the f0 that solves f1 = f0·√(1+B(T(f0))) with
// Fletcher's B. A target pitch is a first partial (what a tuner hears); tension,
// margin and B must be computed from this f0 (package doc, "Target pitch").
//
// B·f0² is the constant K of stiffnessHz2, so the equation is f1² = f0² + K and its
// one positive root is f0 = √(f1² − K): exact, no iteration. It fails when f1 is not
// above √K, the pitch the bare core rings at with no tension; no tension gives such
// a first partial.
func (s *String) F0ForFirstPartial(f1Hz float64) (float64, error) {
	if !(f1Hz > 0) || math.IsInf(f1Hz, 0) {
		return 0, errorf("first partial %g Hz: want a positive frequency", f1Hz)
	}
	k := s.stiffnessHz2()
	if !(k >= 0) || math.IsInf(k, 0) {
		return 0, errorf("stiffness of this string is not a number (%g Hz²): check its length, core and mass", k)
	}
	if f1Hz*f1Hz <= k {
		return 0, errorf("first partial %.4g Hz is at or below %.4g Hz, the pitch of the bare core's stiffness "+
			"at zero tension; want a higher pitch, a longer string or a thinner core", f1Hz, math.Sqrt(k))
	}
	return math.Sqrt(f1Hz*f1Hz - k), nil
}

// BreakingHz returns the ideal fundamental at which the tension reaches the
// breaking load. For a plain string f·L = ½·√(σ/ρ) whatever the diameter
// (reference-values §3.2).
func (s *String) BreakingHz() float64 {
	return s.Frequency(s.BreakingLoad())
}

// RaiseToMargin returns the pitch raise in semitones, from f0Hz, that brings the
// string to the given margin (negative when it is already above it).
func (s *String) RaiseToMargin(f0Hz, margin float64) float64 {
	return RaiseSemitones(s.Margin(s.Tension(f0Hz)), margin)
}

// RaiseSemitones returns the pitch change in semitones that takes a string from
// one margin to another. Tension goes with f², so the change is
// 12·log2(√(to/from)) = 6·log2(to/from); to the breaking load (to = 1) it is the
// −6·log2(p) of reference-values §4.1.
func RaiseSemitones(fromMargin, toMargin float64) float64 {
	return 6 * math.Log2(toMargin/fromMargin)
}

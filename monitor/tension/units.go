package tension

import (
	"fmt"
	"strings"
)

// Conversion factors (reference-values, "Units").
const (
	MetresPerInch = metrePerInch
	NewtonsPerKgf = 9.80665         // 1 kgf
	NewtonsPerLbf = 4.4482216152605 // 1 lbf
)

// MM converts millimetres to metres.
func MM(mm float64) float64 { return mm / 1000 }

// Inches converts inches to metres.
func Inches(in float64) float64 { return in * MetresPerInch }

// ToMM converts metres to millimetres.
func ToMM(m float64) float64 { return m * 1000 }

// ToInches converts metres to inches.
func ToInches(m float64) float64 { return m / MetresPerInch }

// ForceUnit is a unit of force for display.
type ForceUnit struct {
	Symbol    string  // "N", "kgf" or "lbf"
	PerNewton float64 // units per newton
}

// Force units.
var (
	Newton = ForceUnit{"N", 1}
	Kgf    = ForceUnit{"kgf", 1 / NewtonsPerKgf}
	Lbf    = ForceUnit{"lbf", 1 / NewtonsPerLbf}
)

// From converts newtons to this unit.
func (u ForceUnit) From(newtons float64) float64 { return newtons * u.PerNewton }

// ParseForceUnit accepts si (or N), kgf and lbf, in any case.
func ParseForceUnit(s string) (ForceUnit, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "si", "n":
		return Newton, nil
	case "kgf":
		return Kgf, nil
	case "lbf":
		return Lbf, nil
	}
	return ForceUnit{}, fmt.Errorf("tension: unit %q: want si, kgf or lbf", s)
}

package settle

import "math"

// curve is one settling model written as a linear combination of basis functions
// whose shape depends on at most one nonlinear parameter θ (variable projection:
// for a fixed θ the best linear coefficients come from one least-squares solve).
type curve struct {
	model  Model
	names  []string // linear coefficients, then θ when nonlinear
	nlin   int
	nonlin bool
	basis  func(dst []float64, tau, theta float64)
	// rate is dc/dτ at τ for params = linear coefficients then θ.
	rate func(p []float64, tau float64) float64
	// untilRate returns τ at which |rate| first falls to thr (−Inf when never above).
	untilRate func(p []float64, thr float64) float64
	// thetaRange gives the search range of θ for data spanning span hours.
	thetaRange func(span float64) (lo, hi float64)
}

// logCreep is c(τ) = a − b·ln(1 + τ/t0): linear-in-log-time creep of a viscoelastic
// string (reference-values §4.3 suggestion; the usual polymer creep approximation).
var logCreep = &curve{
	model: ModelLogCreep, names: []string{"a", "b", "t0_h"}, nlin: 2, nonlin: true,
	basis: func(dst []float64, tau, t0 float64) {
		dst[0], dst[1] = 1, -math.Log1p(tau/t0)
	},
	rate: func(p []float64, tau float64) float64 { return -p[1] / (p[2] + tau) },
	untilRate: func(p []float64, thr float64) float64 {
		return math.Abs(p[1])/thr - p[2]
	},
	thetaRange: func(span float64) (float64, float64) { return span / 2000, span * 50 },
}

// expApproach is c(τ) = c∞ + A·e^(−τ/T): settling towards a final pitch.
var expApproach = &curve{
	model: ModelExp, names: []string{"c_inf", "A", "tau_h"}, nlin: 2, nonlin: true,
	basis: func(dst []float64, tau, tc float64) {
		dst[0], dst[1] = 1, math.Exp(-tau/tc)
	},
	rate: func(p []float64, tau float64) float64 { return -p[1] / p[2] * math.Exp(-tau/p[2]) },
	untilRate: func(p []float64, thr float64) float64 {
		r0 := math.Abs(p[1]) / p[2]
		if r0 <= thr {
			return math.Inf(-1)
		}
		return p[2] * math.Log(r0/thr)
	},
	thetaRange: func(span float64) (float64, float64) { return span / 100, span * 20 },
}

// straight is c(τ) = c0 + s·τ.
var straight = &curve{
	model: ModelLine, names: []string{"c0", "slope_per_h"}, nlin: 2,
	basis: func(dst []float64, tau, _ float64) { dst[0], dst[1] = 1, tau },
	rate:  func(p []float64, _ float64) float64 { return p[1] },
	untilRate: func(p []float64, thr float64) float64 {
		if math.Abs(p[1]) < thr {
			return math.Inf(-1)
		}
		return math.Inf(1)
	},
}

// level is c(τ) = c0: a single reading.
var level = &curve{
	model: ModelSingle, names: []string{"c0"}, nlin: 1,
	basis:     func(dst []float64, _, _ float64) { dst[0] = 1 },
	rate:      func([]float64, float64) float64 { return math.NaN() },
	untilRate: func([]float64, float64) float64 { return math.NaN() },
}

// value evaluates the curve (without step shifts) for params p at τ.
func (c *curve) value(p []float64, tau float64) float64 {
	var b [4]float64
	theta := 0.0
	if c.nonlin {
		theta = p[c.nlin]
	}
	c.basis(b[:c.nlin], tau, theta)
	v := 0.0
	for j := range c.nlin {
		v += p[j] * b[j]
	}
	return v
}

// nparams is the number of curve parameters (without steps).
func (c *curve) nparams() int {
	if c.nonlin {
		return c.nlin + 1
	}
	return c.nlin
}

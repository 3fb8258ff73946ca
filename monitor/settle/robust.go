package settle

import (
	"math"
	"slices"
)

// fitLevel describes a single reading: its pitch, nothing else.
func fitLevel(d segData) Fit {
	nan := math.NaN()
	return Fit{
		Model: ModelSingle, Names: level.names, Params: []float64{d.y[0]},
		ParamSE: []float64{nan}, StepCents: []float64{}, ResidualSD: nan, AICc: nan,
		N: 1, cur: level, originH: d.origin,
	}
}

// theilSen fits a straight line robustly: the slope is the median of all pairwise
// slopes (Theil 1950, Sen 1968), the intercept the median of y − slope·τ. Steps found
// by the detector are removed first using the detector's estimate of their size.
// The standard errors are approximate: the least-squares formulas with σ taken as
// 1.4826·MAD of the residuals (NaN with fewer than three points).
func theilSen(d segData) Fit {
	y := slices.Clone(d.y)
	for k, st := range d.stepTau {
		for i, t := range d.tau {
			if t >= st {
				y[i] -= d.stepEv[k]
			}
		}
	}
	var slopes []float64
	for i := range d.tau {
		for j := i + 1; j < len(d.tau); j++ {
			if dt := d.tau[j] - d.tau[i]; dt > 0 {
				slopes = append(slopes, (y[j]-y[i])/dt)
			}
		}
	}
	f := Fit{Model: ModelLine, Names: straight.names, Robust: true, N: len(d.tau),
		cur: straight, originH: d.origin, AICc: math.NaN(), ResidualSD: math.NaN(),
		StepCents: slices.Clone(d.stepEv), StepHours: d.stepHours()}
	if len(slopes) == 0 { // all at one time: a level
		f.Params = []float64{Median(y), 0}
		f.ParamSE = []float64{math.NaN(), math.NaN()}
		return f
	}
	slope := Median(slopes)
	res := make([]float64, len(y))
	for i := range y {
		res[i] = y[i] - slope*d.tau[i]
	}
	c0 := Median(res)
	f.Params = []float64{c0, slope}
	for i := range res {
		res[i] -= c0
	}
	if len(y) >= 3 {
		f.ResidualSD = 1.4826 * mad(res)
	}
	f.cov = lineCov(d.tau, f.ResidualSD, len(d.stepTau))
	f.ParamSE = []float64{math.NaN(), math.NaN()}
	if f.cov != nil {
		f.ParamSE = []float64{math.Sqrt(f.cov[0][0]), math.Sqrt(f.cov[1][1])}
	}
	return f
}

// lineCov is σ²·(XᵀX)⁻¹ for X = [1, τ]; each step gets variance 2σ² (a difference of
// two readings) and no covariance.
func lineCov(tau []float64, sd float64, steps int) [][]float64 {
	if math.IsNaN(sd) {
		return nil
	}
	var s1, st, stt float64
	for _, t := range tau {
		s1++
		st += t
		stt += t * t
	}
	det := s1*stt - st*st
	if det <= 0 {
		return nil
	}
	s2 := sd * sd
	cov := make([][]float64, 2+steps)
	for i := range cov {
		cov[i] = make([]float64, 2+steps)
	}
	cov[0][0], cov[0][1], cov[1][0], cov[1][1] = s2*stt/det, -s2*st/det, -s2*st/det, s2*s1/det
	for k := range steps {
		cov[2+k][2+k] = 2 * s2
	}
	return cov
}

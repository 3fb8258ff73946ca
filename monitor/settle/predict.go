package settle

import (
	"fmt"
	"math"
	"slices"
)

// Segment is a stretch of readings between two pull-ups.
type Segment struct {
	First, Last          int     // indices into Analysis.Points
	StartHours, EndHours float64 // times of the first and last point
	RiseCents            float64 // size of the pull-up that opened it (0 for the first segment)
	// FallCents is how far the string fell back after the pull-up, steps excluded,
	// from the segment's first to its last reading (NaN without a pull-up or with a
	// single reading). For the latest segment it is the fall so far.
	FallCents float64
	FallShare float64 // FallCents / RiseCents
	Complete  bool    // ended by a later pull-up
}

// predict fills the "now" and "ahead" figures from the fit, with standard errors by
// the delta method: var g = ∇gᵀ·C·∇g over all parameters (curve, then steps).
func predict(an *Analysis, o Options) {
	f := &an.Fit
	an.HoursNow = an.Points[len(an.Points)-1].Hours
	tNow := an.HoursNow - f.originH
	tAhead := tNow + o.HorizonHours
	full := append(slices.Clone(f.Params), f.StepCents...)
	np := len(f.Params)
	at := func(tau float64) func([]float64) float64 {
		return func(q []float64) float64 {
			v := f.cur.value(q[:np], tau)
			for _, s := range q[np:] {
				v += s // every step in the segment lies before now
			}
			return v
		}
	}
	rate := func(q []float64) float64 { return f.cur.rate(q[:np], tNow) }
	an.CentsNow, an.CentsNowSE = at(tNow)(full), deltaSE(at(tNow), full, f.cov)
	an.RateNow, an.RateSE = rate(full), deltaSE(rate, full, f.cov)
	an.CentsAhead, an.CentsAheadSE = at(tAhead)(full), deltaSE(at(tAhead), full, f.cov)
	if f.Model == ModelSingle {
		an.CentsAhead, an.CentsAheadSE = math.NaN(), math.NaN()
	}
	an.Steady = math.Abs(an.RateNow) < o.SteadyCentsPerHour
	an.HoursToSteady = math.NaN()
	if until := f.cur.untilRate(f.Params, o.SteadyCentsPerHour); !math.IsNaN(until) {
		an.HoursToSteady = math.Max(0, until-tNow)
	}
	if an.Steady {
		an.HoursToSteady = 0
	}
}

// deltaSE is the first-order standard error of g at p for parameter covariance cov,
// with ∇g by central differences. NaN when cov is unknown.
func deltaSE(g func([]float64) float64, p []float64, cov [][]float64) float64 {
	if cov == nil || len(cov) != len(p) {
		return math.NaN()
	}
	grad := make([]float64, len(p))
	q := slices.Clone(p)
	for j := range p {
		h := 1e-6 * math.Max(math.Abs(p[j]), 1e-3)
		q[j] = p[j] + h
		up := g(q)
		q[j] = p[j] - h
		dn := g(q)
		q[j] = p[j]
		grad[j] = (up - dn) / (2 * h)
	}
	var v float64
	for i := range grad {
		for j := range grad {
			v += grad[i] * cov[i][j] * grad[j]
		}
	}
	return math.Sqrt(math.Max(v, 0))
}

// measureFalls fills FallCents and FallShare of every segment that began with a
// pull-up and has at least two readings: how much of the raise the string gave back
// between its first and last reading, steps excluded. For the latest segment this is
// the fall observed so far.
func measureFalls(an *Analysis) {
	skip := map[int]bool{}
	for _, e := range an.Events {
		if e.Kind == EventOutlier {
			skip[e.Index] = true
		}
	}
	for i := range an.Segments {
		s := &an.Segments[i]
		last := s.Last
		for last > s.First && skip[last] {
			last--
		}
		if s.RiseCents <= 0 || last == s.First {
			continue
		}
		s.FallCents = an.Points[s.First].Cents - an.Points[last].Cents + stepSum(an.Events, s)
		s.FallShare = s.FallCents / s.RiseCents
	}
}

// stepSum is the total of the steps (negative for drops) inside segment s.
func stepSum(ev []Event, s *Segment) float64 {
	var sum float64
	for _, e := range ev {
		if e.Kind == EventStep && e.Index > s.First && e.Index <= s.Last {
			sum += e.Cents
		}
	}
	return sum
}

// suggest proposes the next pull-up. A raise R is expected to fall back by the share
// s of R, so to land on target from the present pitch c_now the string is raised by
// R = −c_now/(1−s), i.e. tuned now to c_now + R above target. The share is the median
// of this string's own observed shares, or the trade figure when it has none. A sharp
// string is lowered by its excess (no fall-back assumed); within the tolerance nothing
// is suggested.
func suggest(an *Analysis, o Options) Suggestion {
	share, basis := historyShare(an.Segments)
	if math.IsNaN(share) {
		share = o.TradeShare
		basis = fmt.Sprintf("trade figure %.0f %% (a raise falls back ~25–35 %% in the treble, ~10 %% in the bass; "+
			"reference-values §4.3, common practice)", 100*share)
	}
	c := an.CentsNow
	s := Suggestion{Share: share, Basis: basis, AimCents: c}
	switch {
	case c < -o.ToleranceCents:
		s.RaiseCents = -c / (1 - share)
	case c > o.ToleranceCents:
		s.RaiseCents = -c
	}
	s.AimCents += s.RaiseCents
	return s
}

// historyShare is the median share of the past pull-ups, clamped to [0, 0.9].
func historyShare(segs []Segment) (float64, string) {
	var sh []float64
	for _, s := range segs {
		if s.RiseCents > 0 && !math.IsNaN(s.FallShare) {
			sh = append(sh, math.Min(math.Max(s.FallShare, 0), 0.9))
		}
	}
	if len(sh) == 0 {
		return math.NaN(), ""
	}
	m := Median(sh)
	return m, fmt.Sprintf("this string's history: %d pull-up(s), median fall-back %.0f %%", len(sh), 100*m)
}

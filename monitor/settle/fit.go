package settle

import (
	"math"
)

// segData is the latest segment ready for fitting: times relative to its first point,
// outliers removed, and the relative time of each step inside it.
type segData struct {
	origin  float64
	tau, y  []float64
	stepTau []float64
	stepEv  []float64 // the detector's estimate of each step (used by Theil–Sen)
}

func segmentData(pts []Point, ev []Event, seg Segment) segData {
	skip := map[int]bool{}
	d := segData{origin: pts[seg.First].Hours}
	for _, e := range ev {
		switch {
		case e.Kind == EventOutlier:
			skip[e.Index] = true
		case e.Kind == EventStep && e.Index > seg.First && e.Index <= seg.Last:
			d.stepTau = append(d.stepTau, e.Hours-d.origin)
			d.stepEv = append(d.stepEv, e.Cents)
		}
	}
	for i := seg.First; i <= seg.Last; i++ {
		if !skip[i] {
			d.tau = append(d.tau, pts[i].Hours-d.origin)
			d.y = append(d.y, pts[i].Cents)
		}
	}
	return d
}

// fitSegment fits the latest segment: one point gives a level, fewer than
// MinCurvePoints a Theil–Sen line, otherwise the least-squares line, log-creep and
// exponential models compete on AICc.
func fitSegment(pts []Point, ev []Event, seg Segment, o Options) Fit {
	d := segmentData(pts, ev, seg)
	switch n := len(d.tau); {
	case n == 1:
		return fitLevel(d)
	case n < o.MinCurvePoints:
		return theilSen(d)
	}
	var best Fit
	var others []Alternative
	for _, c := range []*curve{straight, logCreep, expApproach} {
		f, ok := leastSquares(c, d)
		if !ok {
			continue
		}
		if best.cur == nil || f.AICc < best.AICc {
			if best.cur != nil {
				others = append(others, Alternative{best.Model, best.AICc})
			}
			best = f
			continue
		}
		others = append(others, Alternative{f.Model, f.AICc})
	}
	if best.cur == nil {
		return theilSen(d)
	}
	best.Others = others
	return best
}

// design builds the columns of the linear part for θ: the curve's basis, then one
// indicator column per step (1 from the step on).
func design(c *curve, d segData, theta float64) [][]float64 {
	n := len(d.tau)
	cols := make([][]float64, c.nlin+len(d.stepTau))
	for j := range cols {
		cols[j] = make([]float64, n)
	}
	var b [4]float64
	for i, t := range d.tau {
		c.basis(b[:c.nlin], t, theta)
		for j := range c.nlin {
			cols[j][i] = b[j]
		}
		for k, st := range d.stepTau {
			if t >= st {
				cols[c.nlin+k][i] = 1
			}
		}
	}
	return cols
}

// leastSquares fits curve c to d. For a nonlinear curve θ is found by a log-spaced
// grid followed by golden-section refinement of the projected residual sum of squares.
func leastSquares(c *curve, d segData) (Fit, bool) {
	n := len(d.tau)
	p := c.nparams() + len(d.stepTau)
	k := p + 1 // + the noise variance
	if n-k-1 < 1 {
		return Fit{}, false
	}
	theta := 0.0
	if c.nonlin {
		var ok bool
		if theta, ok = bestTheta(c, d); !ok {
			return Fit{}, false
		}
	}
	beta, rss, ok := lstsq(design(c, d, theta), d.y)
	if !ok {
		return Fit{}, false
	}
	params := append([]float64{}, beta[:c.nlin]...)
	if c.nonlin {
		params = append(params, theta)
	}
	f := Fit{
		Model: c.model, Names: c.names, Params: params, StepCents: beta[c.nlin:],
		StepHours: d.stepHours(), N: n, cur: c, originH: d.origin,
		ResidualSD: math.Sqrt(rss / float64(n-p)),
		AICc:       aicc(rss, n, k),
	}
	f.cov = covariance(c, d, f, rss/float64(n-p))
	f.ParamSE = make([]float64, len(params))
	for j := range f.ParamSE {
		f.ParamSE[j] = math.NaN()
		if f.cov != nil {
			f.ParamSE[j] = math.Sqrt(f.cov[j][j])
		}
	}
	return f, true
}

// aicc is the small-sample corrected Akaike information criterion of a Gaussian
// least-squares fit: n·ln(RSS/n) + 2k + 2k(k+1)/(n−k−1), k counting the variance.
func aicc(rss float64, n, k int) float64 {
	fn := float64(n)
	rss = math.Max(rss, fn*1e-18) // exact data: keep the log finite
	return fn*math.Log(rss/fn) + 2*float64(k) + 2*float64(k*(k+1))/float64(n-k-1)
}

func bestTheta(c *curve, d segData) (float64, bool) {
	span := d.tau[len(d.tau)-1] - d.tau[0]
	if span <= 0 {
		return 0, false
	}
	lo, hi := c.thetaRange(span)
	rssAt := func(logTheta float64) float64 {
		_, rss, ok := lstsq(design(c, d, math.Exp(logTheta)), d.y)
		if !ok {
			return math.Inf(1)
		}
		return rss
	}
	const grid = 48
	a, b := math.Log(lo), math.Log(hi)
	step := (b - a) / (grid - 1)
	bi, br := 0, math.Inf(1)
	for i := range grid {
		if r := rssAt(a + float64(i)*step); r < br {
			bi, br = i, r
		}
	}
	if math.IsInf(br, 1) {
		return 0, false
	}
	l := a + float64(max(bi-1, 0))*step
	r := a + float64(min(bi+1, grid-1))*step
	return math.Exp(golden(rssAt, l, r)), true
}

// golden minimises f on [a, b] by golden-section search.
func golden(f func(float64) float64, a, b float64) float64 {
	g := (math.Sqrt(5) - 1) / 2
	x1, x2 := b-g*(b-a), a+g*(b-a)
	f1, f2 := f(x1), f(x2)
	for range 60 {
		if f1 <= f2 {
			b, x2, f2 = x2, x1, f1
			x1 = b - g*(b-a)
			f1 = f(x1)
		} else {
			a, x1, f1 = x1, x2, f2
			x2 = a + g*(b-a)
			f2 = f(x2)
		}
	}
	return (a + b) / 2
}

// covariance is s²·(JᵀJ)⁻¹ with J the Jacobian of the model at the fit with respect
// to all parameters (curve parameters, then steps); ∂/∂θ by central differences.
func covariance(c *curve, d segData, f Fit, s2 float64) [][]float64 {
	cols := design(c, d, thetaOf(c, f.Params))
	if c.nonlin {
		th := f.Params[c.nlin]
		h := th * 1e-5
		up, dn := append([]float64{}, f.Params...), append([]float64{}, f.Params...)
		up[c.nlin], dn[c.nlin] = th+h, th-h
		dcol := make([]float64, len(d.tau))
		for i, t := range d.tau {
			dcol[i] = (c.value(up, t) - c.value(dn, t)) / (2 * h)
		}
		cols = append(cols[:c.nlin], append([][]float64{dcol}, cols[c.nlin:]...)...)
	}
	p := len(cols)
	jtj := make([][]float64, p)
	for i := range jtj {
		jtj[i] = make([]float64, p)
		for j := range p {
			jtj[i][j] = dot(cols[i], cols[j])
		}
	}
	inv, ok := invert(jtj)
	if !ok {
		return nil
	}
	for i := range inv {
		for j := range inv[i] {
			inv[i][j] *= s2
		}
	}
	return inv
}

func thetaOf(c *curve, p []float64) float64 {
	if c.nonlin {
		return p[c.nlin]
	}
	return 0
}

func (d segData) stepHours() []float64 {
	out := make([]float64, len(d.stepTau))
	for i, t := range d.stepTau {
		out[i] = t + d.origin
	}
	return out
}

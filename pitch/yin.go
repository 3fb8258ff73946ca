package pitch

import (
	"fmt"
	"math"
)

const (
	yinThreshold   = 0.1  // absolute threshold of step 4 (the paper's value)
	yinMinWinS     = 0.01 // shortest integration window, seconds
	yinSplit       = 4    // the long-lag band covers pitches below maxHz/yinSplit …
	yinSplitLevels = 2    // … at a rate 2^yinSplitLevels times lower
	yinFrames      = 3    // frames for the best local estimate (step 6)
	yinRangeTol    = 0.2  // step 6 re-search range: ±20 % of the best frame's period
)

// yinLevel picks the pyramid level for YIN: the lowest rate that still holds maxHz at
// four or more samples per period, so the difference function stays well sampled.
func yinLevel(rate, maxHz float64) int {
	k := 0
	for k < maxLevels && maxHz <= 0.25*levelRate(rate, k+1) {
		k++
	}
	return k
}

// A yinBand is one stretch of the lag axis and the pyramid level it is computed at.
type yinBand struct {
	level, tauMin, tauMax, w int
}

// yinBands splits the search range in two: the short lags (high notes) at the rate the
// highest pitch needs, and the long lags (below maxHz/4) at a four times lower rate,
// where the same periods take four times fewer samples. Each band is a complete YIN
// from lag 1 on its level; see the package doc.
func yinBands(dst *[2]yinBand, rate, minHz, maxHz float64) []yinBand {
	split := maxHz / yinSplit
	k := yinLevel(rate, maxHz)
	if minHz >= split || k+yinSplitLevels > maxLevels {
		dst[0] = newYINBand(rate, minHz, maxHz, k)
		return dst[:1]
	}
	dst[0] = newYINBand(rate, split, maxHz, k)
	dst[1] = newYINBand(rate, minHz, split, k+yinSplitLevels)
	return dst[:2]
}

func newYINBand(rate, loHz, hiHz float64, k int) yinBand {
	r := levelRate(rate, k)
	tauMax := int(math.Ceil(r/loHz)) + 1
	return yinBand{
		level:  k,
		tauMin: max(2, int(r/hiHz)),
		tauMax: tauMax,
		w:      max(tauMax, int(math.Ceil(yinMinWinS*r))),
	}
}

// yinNeed is the fewest input samples YIN accepts: in every band one frame with a
// window of one longest period.
func yinNeed(rate, minHz, maxHz float64) int {
	var bands [2]yinBand
	n := 0
	for _, b := range yinBands(&bands, rate, minHz, maxHz) {
		n = max(n, inputLen(b.level, 2*b.tauMax+1))
	}
	return n
}

// yinSpan is the number of input samples that all YIN frames together use.
func yinSpan(rate, minHz, maxHz float64) int {
	var bands [2]yinBand
	n := 0
	for _, b := range yinBands(&bands, rate, minHz, maxHz) {
		n = max(n, inputLen(b.level, 2*((b.tauMax+1)/2)+b.w+b.tauMax+1))
	}
	return n
}

// yin estimates the pitch with the YIN method (de Cheveigné & Kawahara 2002), steps 2–6.
// The bands are searched from short lags to long, so the first dip below the threshold
// wins as in the paper. sure is false when no band has such a dip; hz is then the
// deepest dip found.
func (a *Analyzer) yin(minHz, maxHz float64) (hz float64, sure bool, err error) {
	var bands [2]yinBand
	a.cands = a.cands[:0]
	bestDP := math.Inf(1)
	for _, b := range yinBands(&bands, a.rate, minHz, maxHz) {
		period, dp, below, err := a.yinRun(b)
		if err != nil {
			return 0, false, err
		}
		f := levelRate(a.rate, b.level) / period
		if below {
			return f, true, nil
		}
		if dp < bestDP {
			hz, bestDP = f, dp
		}
	}
	return hz, false, nil
}

// yinRun runs steps 2–6 on one band and returns the period (samples at the band's
// level), the dip's d′ and whether it is below the threshold. Without such a dip it
// also records the band's deepest dips as candidates.
func (a *Analyzer) yinRun(b yinBand) (period, dp float64, below bool, err error) {
	hop := (b.tauMax + 1) / 2
	y := a.pyr.level(b.level, 2*hop+b.w+b.tauMax+1)
	frames, w := yinFrames, b.w
	for frames > 1 && len(y) < (frames-1)*hop+w+b.tauMax+1 {
		frames--
	}
	if frames == 1 {
		w = min(w, len(y)-b.tauMax-1)
	}
	if w < b.tauMax {
		return 0, 0, false, fmt.Errorf("%w: YIN needs %d samples at level %d, got %d", ErrTooShort, 2*b.tauMax+1, b.level, len(y))
	}
	a.prefixEnergy(y)
	m := fftSize(w + b.tauMax + 1)
	best := 0
	var taus [yinFrames]int
	var vals [yinFrames]float64
	for f := 0; f < frames; f++ {
		d, dpf := a.yinD[f][:b.tauMax+1], a.yinDP[f][:b.tauMax+1]
		a.difference(d, y, f*hop, w, m)
		cumulativeMeanNormalize(dpf, d)
		taus[f], vals[f], _ = absoluteThreshold(dpf, b.tauMin, b.tauMax-1)
		if vals[f] < vals[best] {
			best = f
		}
	}
	// Step 6, the best local estimate: search the centre frame again within ±20 % of
	// the period found in the frame with the deepest dip.
	c := (frames - 1) / 2
	lo := max(b.tauMin, int(math.Floor((1-yinRangeTol)*float64(taus[best]))))
	hi := min(b.tauMax-1, int(math.Ceil((1+yinRangeTol)*float64(taus[best]))))
	tau, v, below := absoluteThreshold(a.yinDP[c][:b.tauMax+1], lo, hi)
	if !below {
		a.addCandidates(a.yinDP[c][:b.tauMax+1], a.yinD[c][:b.tauMax+1], b)
	}
	return parabolicMin(a.yinD[c][:b.tauMax+1], tau), v, below, nil
}

// prefixEnergy stores running sums of squares of y in a.yinEnergy.
func (a *Analyzer) prefixEnergy(y []float64) {
	e := a.yinEnergy[:len(y)+1]
	e[0] = 0
	var s float64
	for i, v := range y {
		s += v * v
		e[i+1] = s
	}
}

// difference computes step 2, d(τ) = Σ_{j<W} (y_{t+j} − y_{t+j+τ})², for τ = 0..len(d)-1,
// exactly but fast through d(τ) = r_t(0) + r_{t+τ}(0) − 2·r_t(τ): the energies come from
// running sums and the cross-correlation r_t(τ) from one FFT product (size m ≥ W+τmax, so
// the circular correlation does not wrap).
func (a *Analyzer) difference(d, y []float64, t, w, m int) {
	tauMax := len(d) - 1
	fft := a.plan(m)
	in := a.fftIn[:m]
	copy(in, y[t:t+w])
	clear(in[w:])
	fa := fft.Coefficients(a.specA[:m/2+1], in)
	copy(in, y[t:t+w+tauMax])
	clear(in[w+tauMax:])
	fb := fft.Coefficients(a.specB[:m/2+1], in)
	for i, v := range fa {
		fa[i] = complex(real(v), -imag(v)) * fb[i]
	}
	r := fft.Sequence(a.corr[:m], fa)
	e := a.yinEnergy
	ea := e[t+w] - e[t]
	scale := 2 / float64(m)
	for tau := range d {
		eb := e[t+tau+w] - e[t+tau]
		d[tau] = max(ea+eb-scale*r[tau], 0)
	}
}

// cumulativeMeanNormalize is step 3: d′(0) = 1, d′(τ) = d(τ)·τ / Σ_{j=1..τ} d(j).
func cumulativeMeanNormalize(dp, d []float64) {
	dp[0] = 1
	var sum float64
	for tau := 1; tau < len(d); tau++ {
		sum += d[tau]
		if sum > 0 {
			dp[tau] = d[tau] * float64(tau) / sum
		} else {
			dp[tau] = 1
		}
	}
}

// absoluteThreshold is step 4 with the dip selection of step 5: the first local
// minimum of d′ in [lo, hi] whose parabola-interpolated value is below the threshold;
// failing that, the global minimum. It returns the lag, the dip's interpolated d′ and
// whether it is below the threshold. lo ≥ 1 and hi < len(dp)-1.
func absoluteThreshold(dp []float64, lo, hi int) (tau int, v float64, below bool) {
	best, bestV := lo, math.Inf(1)
	for t := lo; t <= hi; t++ {
		if dp[t] > dp[t-1] || dp[t] > dp[t+1] {
			continue
		}
		v := parabolicValue(dp, t)
		if v < yinThreshold {
			return t, v, true
		}
		if v < bestV {
			best, bestV = t, v
		}
	}
	if math.IsInf(bestV, 1) { // no interior minimum: the lower end of the range
		best, bestV = lo, dp[lo]
		if dp[hi] < dp[lo] {
			best, bestV = hi, dp[hi]
		}
	}
	return best, bestV, false
}

// parabolicValue is the minimum of the parabola through f at t-1, t, t+1.
func parabolicValue(f []float64, t int) float64 {
	l, c, r := f[t-1], f[t], f[t+1]
	den := l - 2*c + r
	if den <= 0 {
		return c
	}
	return c - (l-r)*(l-r)/(8*den)
}

// parabolicMin is step 5: the abscissa of the parabola through the raw difference
// function at τ-1, τ, τ+1 (the raw d avoids the bias of interpolating d′).
func parabolicMin(d []float64, tau int) float64 {
	if tau < 1 || tau+1 >= len(d) {
		return float64(tau)
	}
	l, c, r := d[tau-1], d[tau], d[tau+1]
	den := l - 2*c + r
	if den <= 0 {
		return float64(tau)
	}
	delta := 0.5 * (l - r) / den
	return float64(tau) + math.Max(-1, math.Min(1, delta))
}

// addCandidates records the two deepest interior dips of d′ in the band as alternative
// periods for the case where YIN has no dip below the threshold.
func (a *Analyzer) addCandidates(dp, d []float64, b yinBand) {
	var best [2]int
	var vals = [2]float64{math.Inf(1), math.Inf(1)}
	for t := b.tauMin; t < b.tauMax; t++ {
		if dp[t] > dp[t-1] || dp[t] > dp[t+1] {
			continue
		}
		v := parabolicValue(dp, t)
		switch {
		case v < vals[0]:
			best[1], vals[1] = best[0], vals[0]
			best[0], vals[0] = t, v
		case v < vals[1]:
			best[1], vals[1] = t, v
		}
	}
	r := levelRate(a.rate, b.level)
	for i := range best {
		if !math.IsInf(vals[i], 1) && len(a.cands) < cap(a.cands) {
			a.cands = append(a.cands, r/parabolicMin(d, best[i]))
		}
	}
}

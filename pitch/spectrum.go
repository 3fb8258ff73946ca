package pitch

import (
	"fmt"
	"math"
)

const (
	wideR         = 4.0  // the Gaussian window spans ±4 standard deviations …
	narrowR       = 5.0  // … or ±5 when the first partial is close to 0 Hz in bins
	narrowBelow   = 40   // periods in the window below which the narrow window is used
	floorQuantile = 0.2  // local noise floor: this quantile of the nearby bins' power
	scratchHalf   = 128  // local noise floor looks at most this many bins each side …
	floorHalfMin  = 48   // … and at least this many
	edge0         = 0.47 // highest usable frequency at the full rate, share of the rate
	stretchRoom   = 1.3  // room for inharmonic stretch when choosing the band
	specPad       = 2    // zero-padding: the FFT is at least this many times the window
)

// floorToMean converts the floorQuantile of exponentially distributed noise power to its
// mean: the q-quantile of an exponential law is −ln(1−q)·mean.
var floorToMean = -1 / math.Log(1-floorQuantile)

// spectrum is the power spectrum of one Gaussian-windowed stretch of one pyramid level.
type spectrum struct {
	level int
	rate  float64 // sample rate of the level, Hz
	l     int     // window length, samples at the level
	m     int     // FFT size (zero-padded, see fftSize)
	binHz float64 // rate/m
	wsum  float64 // sum of the window, for amplitudes
	r     float64 // the window spans ±r standard deviations
	sigma float64 // standard deviation of a partial's spectral peak, FFT bins
	kmax  int     // highest usable bin
	full  float64 // peak power of a sinusoid holding all the windowed signal's power
	floor float64 // mean noise power per bin over the band (for the fit's weights)
	power []float64
}

// spectrumFor prepares a.spec for a tone near fHz: it picks the pyramid level that holds
// MaxPartials stretched partials and the window length of specWant (at most what was
// loaded), and computes the power spectrum and the band's noise floor.
func (a *Analyzer) spectrumFor(fHz float64) error {
	n := a.pyr.n[0]
	want := min(n, specWant(a.rate, fHz))
	k := specLevel(a.rate, float64(a.cfg.MaxPartials)*fHz*stretchRoom)
	y := a.pyr.level(k, want>>k)
	need := int(math.Ceil(specMinPeriods / fHz * a.rate))
	if len(y)<<k < need {
		return fmt.Errorf("%w: need %d samples for %.4g Hz, got %d", ErrTooShort, need, fHz, n)
	}
	sp := &a.spec
	sp.level, sp.rate, sp.l = k, levelRate(a.rate, k), len(y)
	sp.m = fftSize(specPad * sp.l)
	sp.binHz = sp.rate / float64(sp.m)
	sp.r = wideR
	if float64(sp.l)*fHz/sp.rate < narrowBelow {
		sp.r = narrowR
	}
	sp.sigma = float64(sp.m) * sp.r / (math.Pi * float64(sp.l))
	edge := edge0 * sp.rate
	if k > 0 {
		edge = passEdge * sp.rate
	}
	sp.kmax = min(sp.m/2-1, int(edge/sp.binHz))
	var wsq, esq float64
	sp.wsum, wsq, esq = gaussianWindow(a.fftIn[:sp.m], y, sp.r)
	sp.full = esq * sp.wsum * sp.wsum / (2 * wsq)
	x := a.plan(sp.m).Coefficients(a.specA[:sp.m/2+1], a.fftIn[:sp.m])
	sp.power = a.power[:sp.kmax+2]
	for i := range sp.power {
		sp.power[i] = real(x[i])*real(x[i]) + imag(x[i])*imag(x[i])
	}
	lo := min(sp.kmax, max(1, int(0.5*fHz/sp.binHz)))
	band := a.bandScratch[:sp.kmax-lo+1]
	copy(band, sp.power[lo:sp.kmax+1])
	sp.floor = quantile(band, floorQuantile) * floorToMean
	return nil
}

// specWant is the wanted spectral window for a tone at fHz, in samples at the full rate:
// specPeriods periods to resolve the partials, lengthened towards specLongPeriods
// periods (up to specLongS) for precision, and kept within specMinS..specMaxS.
func specWant(rate, fHz float64) int {
	s := math.Max(specPeriods/fHz, math.Min(specLongS, specLongPeriods/fHz))
	return int(math.Ceil(math.Max(specMinS, math.Min(specMaxS, s)) * rate))
}

// specSpan is the number of input samples the spectral window for a tone at fHz uses.
func specSpan(rate, fHz float64, maxPartials int) int {
	k := specLevel(rate, float64(maxPartials)*fHz*stretchRoom)
	return inputLen(k, specWant(rate, fHz)>>k)
}

// specLevel returns the deepest pyramid level whose alias-free band reaches fHiHz.
func specLevel(rate, fHiHz float64) int {
	k := 0
	for k < maxLevels && fHiHz <= passEdge*levelRate(rate, k+1) {
		k++
	}
	return k
}

// gaussianWindow writes y·w into dst (zero-padding the rest) for a Gaussian window w
// spanning ±r standard deviations over len(y) samples, and returns Σw, Σw² and
// Σ(y·w)². The window is built by a recurrence: w_{i+1}/w_i = ρ_i and
// ρ_{i+1}/ρ_i = exp(−1/s²).
func gaussianWindow(dst, y []float64, r float64) (sum, sumSq, energy float64) {
	l := len(y)
	s := float64(l) / (2 * r)
	c := float64(l-1) / 2
	w := math.Exp(-0.5 * (c / s) * (c / s))
	rho := math.Exp((2*c - 1) / (2 * s * s))
	q := math.Exp(-1 / (s * s))
	for i, v := range y {
		u := v * w
		dst[i] = u
		sum += w
		sumSq += w * w
		energy += u * u
		w *= rho
		rho *= q
	}
	clear(dst[l:])
	return sum, sumSq, energy
}

// localMax returns the strongest local maximum of the power between loHz and hiHz,
// or -1.
func (sp *spectrum) localMax(loHz, hiHz float64) int {
	lo := max(1, int(math.Ceil(loHz/sp.binHz)))
	hi := min(sp.kmax, int(hiHz/sp.binHz))
	best := -1
	p := sp.power
	for k := lo; k <= hi; k++ {
		if p[k] > p[k-1] && p[k] >= p[k+1] && (best < 0 || p[k] > p[best]) {
			best = k
		}
	}
	return best
}

// peak interpolates the peak at bin k. The log of a Gaussian window's spectrum is a
// parabola, also for an exponentially decaying partial (a Gaussian times an exponential
// is a shifted Gaussian), so the parabola through the log power at k-1, k, k+1 gives
// the frequency with a bias below 1e-4 bin.
func (sp *spectrum) peak(k int) (hz, power float64) {
	const tiny = 1e-300
	l := math.Log(sp.power[k-1] + tiny)
	c := math.Log(sp.power[k] + tiny)
	r := math.Log(sp.power[k+1] + tiny)
	den := l - 2*c + r
	delta := 0.0
	if den < 0 {
		delta = math.Max(-1, math.Min(1, 0.5*(l-r)/den))
	}
	return (float64(k) + delta) * sp.binHz, math.Exp(c - 0.25*(l-r)*delta)
}

// amplitudeDB converts a peak power to the amplitude of the sinusoid in dBFS.
func (sp *spectrum) amplitudeDB(power float64) float64 {
	return 20 * math.Log10(2*math.Sqrt(power)/sp.wsum)
}

// binSigmaHz is the standard deviation of a partial's frequency estimate for a peak
// power snr times the noise floor, plus a floor for the residual interpolation bias
// and leakage. In bins of the unpadded window the Cramér–Rao bound is
// sqrt(12·sqrt(π)/(8π²·r·snr)) (the window's effective length is sqrt(π)·L/r); this
// estimator's error is measured at 2.7 (r = 4) and 3.5 (r = 5) times that.
func (sp *spectrum) binSigmaHz(snr float64) float64 {
	const biasBins = 1e-4
	ratio := 2.7
	if sp.r == narrowR {
		ratio = 3.5
	}
	c2 := ratio * ratio * 12 * math.Sqrt(math.Pi) / (8 * math.Pi * math.Pi * sp.r)
	return sp.rate / float64(sp.l) * math.Sqrt(c2/snr+biasBins*biasBins)
}

// localFloor estimates the mean noise power near bin k from a low quantile of the power
// within about ±2·f0Hz (the quantile skips the partials' own peaks; the window is wide
// because neighbouring bins of a windowed, zero-padded spectrum are correlated).
func (a *Analyzer) localFloor(k int, f0Hz float64) float64 {
	sp := &a.spec
	h := min(scratchHalf, max(floorHalfMin, int(2*f0Hz/sp.binHz)))
	lo, hi := max(0, k-h), min(sp.kmax+1, k+h)
	s := a.scratch[:hi-lo+1]
	copy(s, sp.power[lo:hi+1])
	return quantile(s, floorQuantile) * floorToMean
}

// quantile returns the q-quantile of s (reordering s) by quickselect.
func quantile(s []float64, q float64) float64 {
	k := int(q * float64(len(s)-1))
	lo, hi := 0, len(s)-1
	for lo < hi {
		pivot := median3(s[lo], s[(lo+hi)/2], s[hi])
		i, j := lo, hi
		for i <= j {
			for s[i] < pivot {
				i++
			}
			for s[j] > pivot {
				j--
			}
			if i <= j {
				s[i], s[j] = s[j], s[i]
				i++
				j--
			}
		}
		switch {
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return s[k]
		}
	}
	return s[k]
}

func median3(a, b, c float64) float64 {
	if a > b {
		a, b = b, a
	}
	if b > c {
		b = c
	}
	return math.Max(a, b)
}

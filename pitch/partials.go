package pitch

import (
	"fmt"
	"math"
)

const (
	detectRatio      = 50   // a partial's peak must exceed the mean local noise power this much (17 dB) …
	loneRatio        = 1000 // … and a lone partial (a plain sine) this much (30 dB)
	relFloor         = 1e-6 // … and be within 60 dB of the strongest partial found
	searchWidth      = 0.25 // search ±this share of f0 around each predicted partial …
	retrackWidth     = 0.05 // … and, in the second pass around the fitted series, ±this share
	outlierZ         = 6.0  // drop a partial whose fit residual exceeds this many standard deviations
	outlierFloorBins = 0.05 // … with at least this deviation in bins allowed for
	maxFixes         = 3    // octave corrections per note
	maxMissingLow    = 3    // a series must show one of its first three partials
	semitone         = 1.0594630943592953
)

// partialEst is one detected partial with what the fit needs.
type partialEst struct {
	n               int
	hz, db, snr, sd float64 // frequency, level, peak-to-floor power ratio, std. dev. (Hz)
	local           float64 // peak power over the local noise floor
	k               int     // peak bin
}

// result is the outcome of the spectral stage.
type result struct {
	f0Hz, b, clarity float64
	share            float64 // share of the windowed signal's energy in the partials
	explained        float64 // share of the band's significant peak power in the partials
	used             int
}

// refine turns the YIN estimate into partials and a fitted f0 and B. It recomputes the
// spectrum when the partial pattern shows that YIN was an octave (or a twelfth) off.
func (a *Analyzer) refine(res *result, yinHz, minHz, maxHz float64) error {
	start := yinHz
	for fix := 0; ; fix++ {
		if err := a.spectrumFor(start); err != nil {
			return err
		}
		a.track(start)
		if len(a.parts) == 0 {
			return ErrNoPitch
		}
		f0, b := a.fitPartials()
		a.retrack(f0, b)
		f0, b = a.fitPartials()
		if len(a.parts) == 1 && a.parts[0].local < loneRatio {
			return ErrNoPitch
		}
		next, wrong, err := a.octaveCheck(f0, b, minHz, maxHz)
		switch {
		case err != nil:
			return err
		case wrong && fix == maxFixes:
			return fmt.Errorf("%w: the partial series does not settle on one fundamental", ErrNoPitch)
		case wrong:
			start = next
			continue
		}
		return a.finish(res, f0, b, minHz, maxHz)
	}
}

// finish checks the fitted series against the search range and the clarity floor and
// fills res.
func (a *Analyzer) finish(res *result, f0, b, minHz, maxHz float64) error {
	if f1 := modelHz(1, f0, b); f1 < minHz/semitone || f1 > maxHz*semitone {
		return fmt.Errorf("%w: %.4g Hz is outside the search range %.4g–%.4g Hz", ErrNoPitch, f1, minHz, maxHz)
	}
	res.f0Hz, res.b, res.used = f0, b, a.spec.l<<a.spec.level
	res.clarity = a.clarity(f0)
	res.explained = a.explained(f0)
	res.share = 0
	for _, p := range a.parts {
		res.share += a.spec.power[p.k]
	}
	res.share /= a.spec.full
	if res.clarity < minClarity {
		return ErrNoPitch
	}
	return nil
}

// track searches partials n = 1..MaxPartials near n·f0·sqrt(1+B·n²), starting from
// f0 = startHz, B = 0, refitting f0 and B after every partial found so that the
// prediction follows the stretch of the series.
func (a *Analyzer) track(startHz float64) {
	a.parts = a.parts[:0]
	f0, b := startHz, 0.0
	var strongest float64
	for n := 1; n <= a.cfg.MaxPartials; n++ {
		p, ok, past := a.detect(n, modelHz(n, f0, b), searchWidth*f0, f0, strongest)
		if past {
			break
		}
		if ok {
			strongest = math.Max(strongest, a.spec.power[p.k])
			a.parts = append(a.parts, p)
			f0, b = a.predictModel(f0, b)
		}
	}
}

// retrack searches all partials again close to the fitted series, which recovers
// partials that the first pass missed while its prediction was still rough (or took
// from a neighbouring line and later dropped). It keeps the new list unless it is
// shorter.
func (a *Analyzer) retrack(f0, b float64) {
	prev := a.parts
	a.parts = a.parts2[:0]
	half := math.Max(retrackWidth*f0, 3*a.spec.binHz)
	var strongest float64
	for _, p := range prev {
		strongest = math.Max(strongest, a.spec.power[p.k])
	}
	for n := 1; n <= a.cfg.MaxPartials; n++ {
		p, ok, past := a.detect(n, modelHz(n, f0, b), half, f0, strongest)
		if past {
			break
		}
		if ok {
			a.parts = append(a.parts, p)
		}
	}
	a.parts2 = prev
	if len(a.parts) < len(prev) {
		a.parts, a.parts2 = prev, a.parts
	}
}

// detect looks for partial n within ±halfHz of predHz. past reports that the
// prediction lies beyond the band.
func (a *Analyzer) detect(n int, predHz, halfHz, f0, strongest float64) (p partialEst, ok, past bool) {
	sp := &a.spec
	if predHz > float64(sp.kmax)*sp.binHz {
		return p, false, true
	}
	k := sp.localMax(predHz-halfHz, predHz+halfHz)
	if k < 0 {
		return p, false, false
	}
	floor := a.localFloor(k, f0)
	if sp.power[k] < detectRatio*floor || sp.power[k] < relFloor*max(strongest, sp.full) {
		return p, false, false
	}
	hz, power := sp.peak(k)
	// The fit's weights use the band's noise floor: local floors between closely spaced
	// partials are set by the partials' own skirts, not by the noise.
	snr := power / math.Max(sp.floor, 1e-300)
	return partialEst{n: n, hz: hz, db: sp.amplitudeDB(power), snr: snr, sd: sp.binSigmaHz(snr),
		local: sp.power[k] / math.Max(floor, 1e-300), k: k}, true, false
}

// predictModel updates the running f0 and B from the partials found so far. B is kept
// non-negative for prediction only.
func (a *Analyzer) predictModel(f0, b float64) (float64, float64) {
	if len(a.parts) == 1 {
		p := a.parts[0]
		return p.hz / modelHz(p.n, 1, b), b
	}
	var s fitSums
	for _, p := range a.parts {
		s.add(p.n, p.hz, p.weight())
	}
	if nf0, nb, ok := s.solve(); ok {
		return nf0, math.Max(0, nb)
	}
	return f0, b
}

// weight is 1/variance of y = (f/n)², the fit's ordinate.
func (p partialEst) weight() float64 {
	sy := 2 * p.hz / float64(p.n) * p.sd / float64(p.n)
	return 1 / (sy * sy)
}

// fitPartials fits f0 and B by weighted least squares, dropping (from a.parts) partials
// whose residual is an outlier. With one partial, f0 = f_n/n and B = 0.
func (a *Analyzer) fitPartials() (f0, b float64) {
	for {
		if len(a.parts) == 1 {
			return a.parts[0].hz / float64(a.parts[0].n), 0
		}
		var s fitSums
		for _, p := range a.parts {
			s.add(p.n, p.hz, p.weight())
		}
		f0, b, ok := s.solve()
		if !ok {
			a.parts = a.parts[:1]
			continue
		}
		// Residuals are judged against the noise and a floor of a twentieth of a bin:
		// other sounds' lines nearby shift strong partials by more than their noise
		// alone would allow, and such partials are still good.
		floor := outlierFloorBins * a.spec.rate / float64(a.spec.l)
		worst, worstZ := -1, outlierZ
		for i, p := range a.parts {
			if z := math.Abs(p.hz-modelHz(p.n, f0, b)) / math.Hypot(p.sd, floor); z > worstZ {
				worst, worstZ = i, z
			}
		}
		if worst < 0 || len(a.parts) <= 3 {
			return f0, b
		}
		a.parts = append(a.parts[:worst], a.parts[worst+1:]...)
	}
}

// octaveCheck looks for a wrong period. If every partial number shares a factor g > 1,
// the true series starts at partial g (YIN chose a period g times too long); a lone
// partial is taken as partial 1, and so is the lowest partial when partials 1 to 3 are
// all missing. If the
// spectrum holds partials between the found ones at 1/d of the spacing (d = 2 or 3),
// the true fundamental is f0/d (YIN chose a period d times too short). It returns the
// start frequency for the corrected search.
// A series that continues outside the search range is reported as no pitch rather than
// measured at the wrong octave.
func (a *Analyzer) octaveCheck(f0, b, minHz, maxHz float64) (float64, bool, error) {
	g, nmin := 0, a.parts[0].n
	for _, p := range a.parts {
		g = gcd(g, p.n)
	}
	if nmin > maxMissingLow {
		// Partials 1 to 3 all missing is not a string's series but a common
		// subharmonic of something else (often of two notes sounding together): start
		// again from the lowest line as partial 1.
		g = nmin
	}
	if g > 1 {
		f1 := modelHz(g, f0, b)
		if f1 > maxHz*semitone {
			return 0, false, fmt.Errorf("%w: the partial series starts at %.4g Hz, above the search range", ErrNoPitch, f1)
		}
		return f1, true, nil
	}
	for d := 2; d <= 3; d++ {
		fs, bs := f0/float64(d), b/float64(d*d)
		if !a.subPartials(fs, bs, d) {
			continue
		}
		if f1 := modelHz(1, fs, bs); f1 >= minHz/semitone {
			return f1, true, nil
		}
		return 0, false, fmt.Errorf("%w: the partial series continues below the search range, at %.4g Hz",
			ErrNoPitch, modelHz(1, fs, bs))
	}
	return 0, false, nil
}

// subPartials reports whether the partials m (m not a multiple of d) of the series
// (fs, bs) stand out: at least two of them and at least a third of those tested, up to
// the highest partial found.
func (a *Analyzer) subPartials(fs, bs float64, d int) bool {
	var strongest float64
	for _, p := range a.parts {
		strongest = math.Max(strongest, a.spec.power[p.k])
	}
	tested, hits := 0, 0
	for m := 1; m <= d*a.parts[len(a.parts)-1].n+1; m++ {
		if m%d == 0 {
			continue
		}
		_, ok, past := a.detect(m, modelHz(m, fs, bs), searchWidth*fs, fs, strongest)
		if past {
			break
		}
		tested++
		if ok {
			hits++
		}
	}
	return hits >= 2 && 3*hits >= tested
}

// clarity is the share of the power between half the fundamental and the last partial
// that lies within the found partials' peaks.
func (a *Analyzer) clarity(f0 float64) float64 {
	sp := &a.spec
	lo, hi := a.band(f0)
	var total, in float64
	for k := lo; k <= hi; k++ {
		total += sp.power[k]
	}
	half := min(int(math.Ceil(3*sp.sigma)), int(0.45*f0/sp.binHz))
	for _, p := range a.parts {
		c := int(math.Round(p.hz / sp.binHz))
		for k := max(lo, c-half); k <= min(hi, c+half); k++ {
			in += sp.power[k]
		}
	}
	if total <= 0 {
		return 0
	}
	return math.Min(1, in/total)
}

// explained is the share of the power of all significant spectral peaks (local maxima
// above the detection threshold) up to the last partial that the found partials hold.
// It is near 1 when the series accounts for every line in the spectrum.
func (a *Analyzer) explained(f0 float64) float64 {
	sp := &a.spec
	lo, hi := a.band(f0)
	thr := math.Max(detectRatio*sp.floor, relFloor*sp.full)
	p := sp.power
	var all, in float64
	for k := max(lo, 1); k <= min(hi, sp.kmax); k++ {
		if p[k] > p[k-1] && p[k] >= p[k+1] && p[k] >= thr {
			all += p[k]
		}
	}
	for _, q := range a.parts {
		in += p[q.k]
	}
	if all <= 0 {
		return 1
	}
	return math.Min(1, in/all)
}

// band returns the bins from half the fundamental to half a partial spacing above the
// last partial found.
func (a *Analyzer) band(f0 float64) (lo, hi int) {
	sp := &a.spec
	last := a.parts[len(a.parts)-1].hz
	return max(0, int(0.5*f0/sp.binHz)), min(sp.kmax, int((last+0.5*f0)/sp.binHz))
}

func gcd(a, b int) int {
	for b != 0 {
		a, b = b, a%b
	}
	return a
}

package pitch

const (
	minExplained = 0.9 // a series leaving more line power unexplained is checked against alternatives
	maxCands     = 8
)

// bestCandidate is the slow path, taken when YIN found no dip below its threshold or
// the partial series it led to is missing or leaves strong spectral lines unexplained.
// It weighs YIN's estimate (whose refinement res and err already hold), YIN's other deep
// dips, and the strongest line of the spectrum taken as partial 1, 2 or 3, and returns
// the start frequency whose partial series holds the largest share of the energy in its
// analysis window (a share, so that windows of different lengths over a decaying note
// compare fairly). The octave check inside refine settles the remaining ties between a
// series and its sub-series.
func (a *Analyzer) bestCandidate(res *result, err error, yinHz, minHz, maxHz float64) float64 {
	best, bestShare := yinHz, -1.0
	if err == nil {
		bestShare = res.share
	}
	a.addSpectralCandidates(minHz, maxHz)
	for i := 0; i < len(a.cands); i++ {
		f := a.cands[i]
		if a.refine(res, f, minHz, maxHz) != nil {
			continue
		}
		if res.share > bestShare*(1+1e-9) {
			best, bestShare = f, res.share
		}
	}
	return best
}

// addSpectralCandidates takes the strongest peak of the current spectrum as partial 1,
// 2 or 3 of the note.
func (a *Analyzer) addSpectralCandidates(minHz, maxHz float64) {
	sp := &a.spec
	if sp.power == nil {
		return
	}
	k := sp.localMax(0, float64(sp.kmax)*sp.binHz)
	if k < 0 {
		return
	}
	hz, _ := sp.peak(k)
	for d := 1.0; d <= 3; d++ {
		f := hz / d
		if f >= minHz/semitone && f <= maxHz*semitone && len(a.cands) < cap(a.cands) {
			a.cands = append(a.cands, f)
		}
	}
}

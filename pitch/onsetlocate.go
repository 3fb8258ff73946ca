package pitch

import "math"

// decide settles a candidate once enough samples after its span have arrived: the
// level must rise in the span, and go on after the rise.
func (d *OnsetDetector) decide() {
	// The rise needs onsetAfterS after the span; the placement and the sustain check
	// reach at most placeSubs past it, plus what they look at after the onset.
	if d.subs < d.spanHi+int64(max(d.after-1, d.placeSubs+max(d.sus1, onsetSharp))) {
		return
	}
	d.pending = false
	lo := max(d.spanLo, d.lastSub+int64(d.refractory))
	j, ok := d.rises(lo, d.spanHi)
	if !ok {
		return
	}
	j = d.place(max(lo, j-int64(d.placeSubs)), j+int64(d.placeSubs)+1, j)
	if d.mean(&d.subHP, j, j+int64(d.after)) < onsetLevelMin || !d.sustained(j) {
		return
	}
	d.last, d.lastSub, d.found = d.onsetSample(j), j, true
}

// rises returns the sub-block in [lo, hi) where the level rises the most: the mean
// power of the onsetAfterS after it over that of the onsetBeforeS before it, in the
// high-passed signal or in its first difference (which stresses the broadband noise of
// a strike or pluck); of equal rises the last. It fails when no rise reaches
// onsetRiseMin.
func (d *OnsetDetector) rises(lo, hi int64) (int64, bool) {
	best, bestJ := 0.0, int64(-1)
	for j := lo; j < hi; j++ {
		r := max(ratio(d.mean(&d.subHP, j, j+int64(d.after)), d.mean(&d.subHP, j-int64(d.before), j)),
			ratio(d.mean(&d.subDif, j, j+int64(d.after)), d.mean(&d.subDif, j-int64(d.before), j)))
		if r >= best {
			best, bestJ = r, j
		}
	}
	return bestJ, bestJ >= 0 && best >= onsetRiseMin
}

// place returns the first sub-block in [lo, hi) whose level over the next onsetSharp
// sub-blocks exceeds the loudest sub-block of the onsetBeforeS before it by at least
// half (in dB) the largest such jump in the range: the leading edge of the rise, to a
// sub-block when it is steep. Without any jump it returns j.
func (d *OnsetDetector) place(lo, hi, j int64) int64 {
	var best float64
	for i := lo; i < hi; i++ {
		best = max(best, d.jump(i))
	}
	if best <= 1 {
		return j
	}
	for i := lo; i < hi; i++ {
		if d.jump(i) >= math.Sqrt(best) {
			return i
		}
	}
	return j
}

// jump is the larger, in the two bands, of the mean power over the onsetSharp
// sub-blocks from j over the loudest sub-block of the onsetBeforeS before j.
func (d *OnsetDetector) jump(j int64) float64 {
	return max(ratio(d.mean(&d.subHP, j, j+onsetSharp), d.peak(&d.subHP, j-int64(d.before), j)),
		ratio(d.mean(&d.subDif, j, j+onsetSharp), d.peak(&d.subDif, j-int64(d.before), j)))
}

func ratio(after, before float64) float64 {
	switch {
	case before > 0:
		return after / before
	case after > 0:
		return math.Inf(1)
	}
	return 0
}

// peak returns the largest of e over sub-blocks [lo, hi); those before the stream
// count as silence.
func (d *OnsetDetector) peak(e *[subRing]float64, lo, hi int64) float64 {
	var p float64
	for i := max(0, lo); i < hi; i++ {
		p = max(p, e[i%subRing])
	}
	return p
}

// mean returns the mean of e over sub-blocks [lo, hi); those before the stream count
// as silence.
func (d *OnsetDetector) mean(e *[subRing]float64, lo, hi int64) float64 {
	var s float64
	for i := max(0, lo); i < hi; i++ {
		s += e[i%subRing]
	}
	return s / float64(hi-lo)
}

// sustained reports whether the sound starting in sub-block j goes on: its level from
// onsetSustainS0 to onsetSustainS1 after the onset stays within onsetSustainDB of the
// loudest sub-block before that. A click, a knock without resonance or a step of the
// offset dies away faster and is no note.
func (d *OnsetDetector) sustained(j int64) bool {
	var peak float64
	for i := j; i < j+int64(d.sus0); i++ {
		peak = max(peak, d.subHP[i%subRing])
	}
	sus := d.mean(&d.subHP, j+int64(d.sus0), j+int64(d.sus1))
	return sus >= peak*math.Pow(10, -onsetSustainDB/10)
}

// onsetSample returns the input sample where the onset in sub-block j begins: the first
// analysed sample whose step from its predecessor reaches a third of the sub-block's
// largest step.
func (d *OnsetDetector) onsetSample(j int64) int64 {
	first := j * int64(d.sub)
	var prev float64
	if first > 0 {
		prev = d.ring[(first-1)&ringMask]
	}
	var peak float64
	p := prev
	for i := first; i < first+int64(d.sub); i++ {
		y := d.ring[i&ringMask]
		peak = max(peak, math.Abs(y-p))
		p = y
	}
	p = prev
	for i := first; i < first+int64(d.sub); i++ {
		y := d.ring[i&ringMask]
		if math.Abs(y-p) >= peak/3 {
			return i * int64(d.dec)
		}
		p = y
	}
	return first * int64(d.dec)
}

// AttackSkip returns the number of samples (50 ms) to skip after an onset before the
// analysis window starts, so that the hammer or pluck transient is not analysed.
func AttackSkip(rateHz float64) int {
	return int(math.Round(attackSkipS * rateHz))
}

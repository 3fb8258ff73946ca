package pitch

import "math"

// decide settles a candidate once enough samples after its span have arrived: the
// level must rise in the span, at the onset and after its attack.
func (d *OnsetDetector) decide() {
	// The onset lies at most placeSubs past the span; the last look is at the level
	// from attack to attack+after sub-blocks after it.
	for d.pending && d.subs >= d.spanHi+int64(d.placeSubs+d.attack+d.after) {
		d.settle()
		d.pending, d.spanLo, d.spanHi = d.queued, d.nextLo, d.nextHi
		d.queued = false
	}
}

// settle decides the pending span.
func (d *OnsetDetector) settle() {
	lo := max(d.spanLo, d.lastSub+int64(d.refractory))
	top, ok := d.rises(lo, d.spanHi)
	if !ok {
		return
	}
	// The onset lies at most half onsetBeforeS before the largest rise (which can lead
	// it where a low note's waveform makes the level before uneven).
	j, ok := d.place(max(lo, top-int64(d.before/2)), d.spanHi+int64(d.placeSubs))
	// The level after the attack is compared with that before the onset, or before
	// the largest rise when the onset was placed after it (its new sound is not
	// "before").
	if !ok || d.mean(&d.subHP, j, j+int64(d.after)) < onsetLevelMin ||
		d.rise(j+int64(d.attack), min(j, top)) < onsetHoldRise || !d.sustained(j) {
		return
	}
	d.last, d.lastSub, d.found = d.onsetSample(j), j, true
}

// rises returns the sub-block in [lo, hi) where the level rises the most, rise(j, j),
// of equal rises the last; it fails when no rise reaches onsetRiseMin.
func (d *OnsetDetector) rises(lo, hi int64) (int64, bool) {
	best, bestJ := 0.0, int64(-1)
	for j := lo; j < hi; j++ {
		if r := d.rise(j, j); r >= best {
			best, bestJ = r, j
		}
	}
	return bestJ, bestJ >= 0 && best >= onsetRiseMin
}

// rise is the mean power over the onsetAfterS from sub-block from over the mean power
// over the onsetBeforeS before sub-block j (from ≥ j), in the high-passed signal or in
// its first difference (which stresses the broadband noise of a strike or pluck),
// whichever rises more.
func (d *OnsetDetector) rise(from, j int64) float64 {
	to, b := from+int64(d.after), j-int64(d.before)
	return max(ratio(d.mean(&d.subHP, from, to), d.mean(&d.subHP, b, j)),
		ratio(d.mean(&d.subDif, from, to), d.mean(&d.subDif, b, j)))
}

// place returns the first sub-block in [lo, hi) whose level exceeds the loudest
// sub-block of the onsetBeforeS before it by onsetJumpEdge (in dB) of the largest such
// jump in the range, or by the largest itself when that is below onsetJumpSure: the
// leading edge of the rise. A ringing note's own waveform repeats within
// onsetBeforeS and decays, so it makes no jump (a few tenths of a dB where partials
// beat). It fails when no jump reaches onsetJumpMin.
func (d *OnsetDetector) place(lo, hi int64) (int64, bool) {
	var best float64
	for i := lo; i < hi; i++ {
		best = max(best, d.jump(i))
	}
	if best < onsetJumpMin {
		return 0, false
	}
	bar := best
	if best >= onsetJumpSure {
		bar = math.Pow(best, onsetJumpEdge)
	}
	for i := lo; i < hi; i++ {
		if d.jump(i) >= bar {
			return i, true
		}
	}
	return 0, false
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

// sustained reports whether the level after the attack of an onset in sub-block j
// (over onsetAfterS from onsetAttackS on, high-passed) stays within onsetSustainDB of
// the attack's loudest sub-block. A click, a knock without resonance or a step of
// the offset dies away faster and is no note.
func (d *OnsetDetector) sustained(j int64) bool {
	peak := d.peak(&d.subHP, j, j+int64(d.attack))
	after := d.mean(&d.subHP, j+int64(d.attack), j+int64(d.attack+d.after))
	return after >= peak*math.Pow(10, -onsetSustainDB/10)
}

// onsetSample returns the input sample where the onset in sub-block j begins: the
// first analysed sample whose step from its predecessor exceeds every step of the
// onsetBeforeS before (the sound or noise that was there) and reaches a third of the
// largest step in j; if none does, the start of the next sub-block, so that the onset
// is not placed before the new sound.
func (d *OnsetDetector) onsetSample(j int64) int64 {
	first, end := j*int64(d.sub), (j+1)*int64(d.sub)
	bar := max(d.maxStep(first-int64(d.before*d.sub), first), d.maxStep(first, end)/3)
	for i := first; i < end; i++ {
		if d.step(i) > bar {
			return i * int64(d.dec)
		}
	}
	return end * int64(d.dec)
}

// maxStep returns the largest step of the analysed samples i in [lo, hi).
func (d *OnsetDetector) maxStep(lo, hi int64) float64 {
	var m float64
	for i := max(0, lo); i < hi; i++ {
		m = max(m, d.step(i))
	}
	return m
}

// step is |y_i − y_{i−1}| of the analysed samples (y_{−1} = 0: silence before the
// stream, which the ring holds until it first wraps).
func (d *OnsetDetector) step(i int64) float64 {
	return math.Abs(float64(d.ring[i&ringMask] - d.ring[(i-1)&ringMask]))
}

// AttackSkip returns the number of samples (50 ms) to skip after an onset before the
// analysis window starts, so that the hammer or pluck transient is not analysed.
func AttackSkip(rateHz float64) int {
	return int(math.Round(attackSkipS * rateHz))
}

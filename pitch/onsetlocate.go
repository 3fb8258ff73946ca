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
	if !d.rises(lo, d.spanHi) {
		return
	}
	j, ok := d.place(lo, d.spanHi+int64(d.placeSubs))
	if !ok || d.mean(&d.subHP, j, j+int64(d.after)) < onsetLevelMin ||
		d.rise(j+int64(d.attack), j) < onsetHoldRise || !d.sustained(j) {
		return
	}
	d.last, d.lastSub, d.found = d.onsetSample(j), j, true
}

// rises reports whether the level rises somewhere in [lo, hi): whether rise(j, j)
// reaches onsetRiseMin.
func (d *OnsetDetector) rises(lo, hi int64) bool {
	for j := lo; j < hi; j++ {
		if d.rise(j, j) >= onsetRiseMin {
			return true
		}
	}
	return false
}

// rise is the mean power over the onsetAfterS from sub-block from over the mean power
// over the onsetBeforeS before sub-block j, in the high-passed signal or in its first
// difference (which stresses the broadband noise of a strike or pluck), whichever
// rises more.
func (d *OnsetDetector) rise(from, j int64) float64 {
	to, b := from+int64(d.after), j-int64(d.before)
	return max(ratio(d.mean(&d.subHP, from, to), d.mean(&d.subHP, b, j)),
		ratio(d.mean(&d.subDif, from, to), d.mean(&d.subDif, b, j)))
}

// place returns the first sub-block in [lo, hi) whose level exceeds the loudest
// sub-block of the onsetBeforeS before it by at least half (in dB) the largest such
// jump in the range: the leading edge of the rise. A ringing note's own waveform
// repeats within onsetBeforeS and decays, so it makes no jump. It fails without any.
func (d *OnsetDetector) place(lo, hi int64) (int64, bool) {
	var best float64
	for i := lo; i < hi; i++ {
		best = max(best, d.jump(i))
	}
	if best <= 1 {
		return 0, false
	}
	for i := lo; i < hi; i++ {
		if d.jump(i) >= math.Sqrt(best) {
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

// onsetSample returns the input sample where the onset in sub-block j begins: the first
// analysed sample whose step from its predecessor reaches a third of the sub-block's
// largest step.
func (d *OnsetDetector) onsetSample(j int64) int64 {
	first := j * int64(d.sub)
	var prev float64
	if first > 0 {
		prev = float64(d.ring[(first-1)&ringMask])
	}
	var peak float64
	p := prev
	for i := first; i < first+int64(d.sub); i++ {
		y := float64(d.ring[i&ringMask])
		peak = max(peak, math.Abs(y-p))
		p = y
	}
	p = prev
	for i := first; i < first+int64(d.sub); i++ {
		y := float64(d.ring[i&ringMask])
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

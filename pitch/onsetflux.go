package pitch

// spectralFrame takes the spectrum of the last n analysed samples and, when its flux
// stands out, marks the frame's span as holding a candidate onset.
func (d *OnsetDetector) spectralFrame() {
	m := d.n / 2
	start := d.nDec - int64(d.n)
	for i := 0; i < d.n; i++ {
		d.frame[i] = d.win[i] * float64(d.ring[(start+int64(i))&ringMask])
	}
	d.fft.power(d.power[:m+1], d.frame[:d.n])
	cur := &d.logs[d.frames%(onsetMemory+1)]
	for k := 0; k <= m; k++ {
		cur[k] = float32(fastLog2(d.power[k]*d.norm + d.floor))
	}
	// The reference is each bin's loudest level over the earlier frames, so that a
	// partial coming back from a beat's null is no rise, widened by a bin each side, so
	// that a partial gliding by a bin is none either.
	ref := d.ref[:m+1]
	copy(ref, d.logs[(d.frames+1)%(onsetMemory+1)][:m+1])
	for back := int64(onsetLag); back < onsetMemory; back++ {
		l := &d.logs[(d.frames-back+onsetMemory+1)%(onsetMemory+1)]
		for k := range ref {
			ref[k] = max(ref[k], l[k])
		}
	}
	// Half-wave rectified flux: only rises count.
	var flux float64
	for k := 1; k < m; k++ {
		r := max(ref[k-1], ref[k], ref[k+1])
		if c := cur[k]; c > r {
			flux += float64(c - r)
		}
	}
	thr := d.fluxMin + onsetFluxRel*d.median()
	d.flux[d.frames%onsetMedianLen] = flux
	d.frames++
	if flux < thr {
		return
	}
	lo := max(0, d.subs-onsetSubs)
	switch {
	case !d.pending:
		d.pending, d.spanLo, d.spanHi = true, lo, d.subs
	case !d.queued: // a rise while an earlier one waits (a stop just before a strike)
		d.queued, d.nextLo, d.nextHi = true, lo, d.subs
	default: // (the queued span never outgrows two frames, so the history holds it)
		d.nextHi = d.subs
		d.nextLo = max(d.nextLo, d.nextHi-2*onsetSubs)
	}
}

// median returns the median flux of the recent frames (zero before there are any).
func (d *OnsetDetector) median() float64 {
	n := int(min(d.frames, onsetMedianLen))
	if n == 0 {
		return 0
	}
	s := d.sorted[:n]
	copy(s, d.flux[:n])
	for i := 1; i < n; i++ { // insertion sort of at most 32 values
		for j := i; j > 0 && s[j] < s[j-1]; j-- {
			s[j], s[j-1] = s[j-1], s[j]
		}
	}
	return s[n/2]
}

package pitch

import (
	"fmt"
	"math"
)

// Clipping is recognised by its flat tops (see the package doc, "Clipping").
const (
	clipNear   = 0.98            // |sample| at or above this is near full scale
	clipFlat   = 1.0 / (1 << 14) // samples within this of a run's first are "the same" (two 16-bit steps)
	clipCorner = 16 * clipFlat   // a step this large into or out of a run is a corner
	clipMinRun = 3               // shortest flat run that can count
	clipMargin = 2               // a run counts, however it starts, beyond this many times a sine's flat
	clipShare  = 0.01            // ErrClipped when this share of samples lie in counted runs
)

// clipLongRun returns the longest flat run, in samples at rateHz, that a full-scale sine
// at minHz (the lowest pitch searched) can show, times clipMargin: a sine stays within
// clipFlat of its peak for sqrt(2·clipFlat)/(π·minHz) seconds.
func clipLongRun(rateHz, minHz float64) int {
	return int(math.Ceil(clipMargin * rateHz * math.Sqrt(2*clipFlat) / (math.Pi * minHz)))
}

// load converts x to float64 into level 0 of the pyramid, keeps prefix sums of squares
// for level measurements, and rejects non-finite or clipped input.
func (a *Analyzer) load(x []float32) error {
	buf := a.pyr.buf[0][:len(x)]
	energy := a.energy[:len(x)+1]
	energy[0] = 0
	var sum float64
	for i, v := range x {
		f := float64(v)
		if f-f != 0 || math.Abs(f) > maxSample { // NaN, ±Inf or absurd
			return fmt.Errorf("%w: sample %d is %v, want a finite value in [-1, 1]", ErrBadSample, i, v)
		}
		buf[i] = f
		sum += f * f
		energy[i+1] = sum
	}
	if clipped := clippedSamples(buf, a.clipLong); float64(clipped) >= clipShare*float64(len(x)) && clipped > 0 {
		return fmt.Errorf("%w: %d of %d samples (%.1f%%) on flat tops at full scale", ErrClipped,
			clipped, len(x), 100*float64(clipped)/float64(len(x)))
	}
	a.levelSum = sum
	a.pyr.reset(len(x))
	return nil
}

// clippedSamples counts the samples of x in flat runs at full scale that are clipping:
// runs of clipMinRun or more samples at or beyond ±clipNear, each within clipFlat of
// the run's first, that are longer than long samples or are entered and left by a step
// of more than clipCorner over two samples (a corner, where a smooth waveform
// flattens gradually).
func clippedSamples(x []float64, long int) int {
	clipped, start := 0, -1
	for i, f := range x {
		if start >= 0 && math.Abs(f-x[start]) <= clipFlat {
			continue // the run goes on (it is near full scale, as its first sample is)
		}
		if start >= 0 {
			clipped += clipRun(x, start, i, long)
		}
		start = -1
		if f >= clipNear || f <= -clipNear {
			start = i
		}
	}
	if start >= 0 {
		clipped += clipRun(x, start, len(x), long)
	}
	return clipped
}

// clipRun returns the length of the flat run x[s:e] if it counts as clipping, else 0.
func clipRun(x []float64, s, e, long int) int {
	n := e - s
	if n < clipMinRun {
		return 0
	}
	if n > long {
		return n
	}
	// The steps are taken over two samples: the one next to the run may lie just off
	// the rail by chance, while a smooth peak flat for three samples within clipFlat
	// falls by at most 8·clipFlat over the two samples beyond.
	sign := math.Copysign(1, x[s])
	entered := s == 0 || sign*(x[s]-x[max(0, s-2)]) > clipCorner
	left := e == len(x) || sign*(x[e-1]-x[min(len(x)-1, e+1)]) > clipCorner
	if entered && left && (s > 0 || e < len(x)) {
		return n
	}
	return 0
}

package pitch

import (
	"fmt"
	"math"
	"slices"
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

// MarkClipped sets dst[i] for every sample x[i] that lies on a clipped flat top, by the
// rule of the package doc ("Clipping"), for audio at rateHz whose lowest pitch of
// interest is minHz. It reuses dst and returns it (len(x)). Callers that filter the
// signal before analysis (a DC blocker turns flat tops into slopes) check the raw
// samples with it.
func MarkClipped(dst []bool, x []float32, rateHz, minHz float64) []bool {
	dst = slices.Grow(dst[:0], len(x))[:len(x)]
	clear(dst)
	clipRuns(x, clipLongRun(rateHz, minHz), func(s, e int) {
		for i := s; i < e; i++ {
			dst[i] = true
		}
	})
	return dst
}

// clippedSamples counts the samples of x in flat runs at full scale that are clipping.
func clippedSamples(x []float64, long int) int {
	return clipRuns(x, long, nil)
}

// clipRuns finds the flat runs at full scale that are clipping: runs of clipMinRun or
// more samples at or beyond ±clipNear, each within clipFlat of the run's first, that
// are longer than long samples or are entered and left by a step of more than
// clipCorner over two samples (a corner, where a smooth waveform flattens gradually).
// It calls mark (when not nil) with each such run [s, e) and returns their total length.
func clipRuns[T float32 | float64](x []T, long int, mark func(s, e int)) int {
	clipped, start := 0, -1
	flush := func(e int) {
		if n := clipRun(x, start, e, long); n > 0 {
			clipped += n
			if mark != nil {
				mark(start, e)
			}
		}
	}
	for i, v := range x {
		f := float64(v)
		if start >= 0 && math.Abs(f-float64(x[start])) <= clipFlat {
			continue // the run goes on (it is near full scale, as its first sample is)
		}
		if start >= 0 {
			flush(i)
		}
		start = -1
		if f >= clipNear || f <= -clipNear {
			start = i
		}
	}
	if start >= 0 {
		flush(len(x))
	}
	return clipped
}

// clipRun returns the length of the flat run x[s:e] if it counts as clipping, else 0.
func clipRun[T float32 | float64](x []T, s, e, long int) int {
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
	sign := math.Copysign(1, float64(x[s]))
	entered := s == 0 || sign*float64(x[s]-x[max(0, s-2)]) > clipCorner
	left := e == len(x) || sign*float64(x[e-1]-x[min(len(x)-1, e+1)]) > clipCorner
	if entered && left && (s > 0 || e < len(x)) {
		return n
	}
	return 0
}

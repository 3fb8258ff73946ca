package pitch

import (
	"fmt"
	"math"
)

const (
	decayDB     = 35.0  // a note's useful sustain ends this far below its attack peak
	peakS       = 0.2   // the attack peak is looked for this long after the onset
	levelBlockS = 0.005 // blocks in which the decay is followed
	guardS      = 0.01  // a window ends this long before the next onset (which may be placed late)
	minRateHz   = 1000
	maxMinHzHz  = 20000
)

// Segment is one note found in a recording, as sample indices: the onset, and the
// analysis window [Start, End) that begins after the attack.
type Segment struct{ Onset, Start, End int }

// Segments finds the notes in a recording x sampled at rateHz and appends one Segment
// per note to dst. Onsets come from an OnsetDetector, the same as a live stream's, so
// a note that starts in the last 100 ms or so of x, too short to measure, is not
// reported. Each window starts AttackSkip samples after its onset and ends at the
// first of: WindowLen samples later (enough for minHz, the lowest pitch expected; zero
// means 25 Hz), 10 ms before the next onset, the point where the level has fallen 35
// dB below the note's attack peak, or the end of x. A window may be too short to
// analyse (Analyze then reports ErrTooShort). Segments panics if rateHz is not
// positive (a caller bug).
func Segments(dst []Segment, x []float32, rateHz, minHz float64) []Segment {
	var d OnsetDetector
	d.init(rateHz)
	first := len(dst)
	step := d.hop * d.dec // less than the refractory time: at most one onset per Push
	for i := 0; i < len(x); i += step {
		if d.Push(x[i:min(i+step, len(x))]) >= 0 {
			dst = append(dst, Segment{Onset: int(d.Last())})
		}
	}
	win, skip := WindowLen(rateHz, minHz), AttackSkip(rateHz)
	guard := int(math.Ceil(guardS * rateHz))
	block := max(1, int(math.Round(levelBlockS*rateHz)))
	for j := first; j < len(dst); j++ {
		s := &dst[j]
		next := len(x)
		if j+1 < len(dst) {
			next = max(s.Onset, dst[j+1].Onset-guard)
		}
		s.Start = min(s.Onset+skip, next)
		s.End = min(s.Start+win, next, decayEnd(x, s.Onset, s.Start, next, block, rateHz))
		s.End = max(s.End, s.Start)
	}
	return dst
}

// decayEnd returns the start of the first block after start whose mean square is
// decayDB below the loudest block within peakS after the onset, or next.
func decayEnd(x []float32, onset, start, next, hop int, rateHz float64) int {
	var peak float64
	peakEnd := min(next, onset+int(peakS*rateHz))
	for i := onset; i < peakEnd; i += hop {
		peak = math.Max(peak, meanSquare(x[i:min(i+hop, peakEnd)]))
	}
	limit := peak * math.Pow(10, -decayDB/10)
	for i := start; i+hop <= next; i += hop {
		if meanSquare(x[i:i+hop]) < limit {
			return i
		}
	}
	return next
}

func meanSquare(x []float32) float64 {
	var s float64
	for _, v := range x {
		f := float64(v)
		if f-f == 0 {
			s += f * f
		}
	}
	return s / float64(max(1, len(x)))
}

// WindowLen returns the analysis window length, in samples at rateHz, that Analyze uses
// at most when the lowest expected pitch is minHz (zero means 25 Hz) with the default
// Config: long enough for YIN's frames and for twelve periods of minHz in the spectral
// window (at least 0.1 s, at most 0.5 s, plus the decimation filters' reach). It panics
// if rateHz is below 1000 Hz or minHz is negative or above 20 kHz (caller bugs).
func WindowLen(rateHz, minHz float64) int {
	if minHz == 0 {
		minHz = defaultMinHz
	}
	if !(rateHz >= minRateHz) || math.IsInf(rateHz, 0) || !(minHz > 0 && minHz <= maxMinHzHz) {
		panic(fmt.Sprintf("pitch: WindowLen(%v, %v): want rateHz >= %d and 0 < minHz <= %d", rateHz, minHz, minRateHz, maxMinHzHz))
	}
	maxHz := math.Min(defaultMaxHz, 0.45*rateHz)
	minHz = math.Min(minHz, 0.5*maxHz)
	return regionLen(rateHz, minHz, maxHz, defaultMaxPartials)
}

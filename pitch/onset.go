package pitch

import (
	"fmt"
	"math"
)

const (
	onsetHopS        = 0.005 // detection block, seconds
	onsetHistory     = 10    // blocks in the reference level (50 ms: longer than a period at 25 Hz)
	onsetRise        = 4.0   // a block must exceed the reference by this power ratio (6 dB)
	onsetFloor       = 1e-6  // mean square below which nothing starts (-60 dBFS)
	onsetRefractoryS = 0.1   // no second onset within this time
	onsetLocate      = 0.3   // the onset is the first sample reaching this share of the block's peak
	attackSkipS      = 0.05  // attack transient skipped before analysis, seconds
	maxHop           = 1024  // longest block (5 ms up to 204.8 kHz)
)

// OnsetDetector finds note onsets in a stream of samples. It compares the power of
// each 5 ms block, both of the signal and of its first difference (which stresses the
// broadband hammer or pluck noise), with the loudest of the previous 50 ms; a rise of
// 6 dB or more above -60 dBFS is an onset, and no second onset is reported within
// 100 ms. A stream that starts with a sounding note has an onset at its first sample.
// It does not allocate after NewOnsetDetector.
type OnsetDetector struct {
	hop        int
	refractory int
	fill       int
	prev       float64
	hf, lf     float64         // sums of squares in the current block: difference, signal
	absD, absX [maxHop]float64 // |difference| and |signal| of the current block's samples
	histHF     [onsetHistory]float64
	histLF     [onsetHistory]float64
	ring       int
	quiet      int   // blocks left in the refractory time
	pos        int64 // samples pushed so far
	last       int64 // absolute index of the latest onset, or -1
}

// NewOnsetDetector returns a detector for samples at rateHz. It panics if rateHz is not
// a positive number (a caller bug).
func NewOnsetDetector(rateHz float64) *OnsetDetector {
	d := new(OnsetDetector)
	d.init(rateHz)
	return d
}

func (d *OnsetDetector) init(rateHz float64) {
	if !(rateHz > 0) || math.IsInf(rateHz, 0) {
		panic(fmt.Sprintf("pitch: NewOnsetDetector: rate %v Hz: want a positive number", rateHz))
	}
	d.hop = min(maxHop, max(1, int(math.Round(onsetHopS*rateHz))))
	d.refractory = int(math.Ceil(onsetRefractoryS * rateHz / float64(d.hop)))
	d.last = -1
}

// Push feeds the next block of samples and returns the index in block of the first
// onset found while processing it, or -1. An onset is confirmed at the end of the 5 ms
// block that holds it; if that block began in an earlier Push, the index is 0 and Last
// gives the exact sample.
func (d *OnsetDetector) Push(block []float32) int {
	first := -1
	start := d.pos
	for i := 0; i < len(block); {
		n := min(len(block)-i, d.hop-d.fill)
		d.accumulate(block[i : i+n])
		i += n
		if d.fill == d.hop && d.endBlock() && first < 0 {
			first = int(max(0, d.last-start))
		}
	}
	return first
}

// Last returns the absolute sample index (counting from the first sample pushed) of
// the latest onset, or -1 if there was none.
func (d *OnsetDetector) Last() int64 { return d.last }

func (d *OnsetDetector) accumulate(x []float32) {
	absD, absX := d.absD[d.fill:d.fill+len(x)], d.absX[d.fill:d.fill+len(x)]
	prev := d.prev
	for i, v := range x {
		f := float64(v)
		if f-f != 0 { // NaN or Inf: hold the previous sample rather than poison the sums
			f = prev
		}
		diff := f - prev
		d.hf += diff * diff
		d.lf += f * f
		absD[i], absX[i] = math.Abs(diff), math.Abs(f)
		prev = f
	}
	d.prev = prev
	d.fill += len(x)
	d.pos += int64(len(x))
}

// endBlock closes the current block and reports whether it holds an onset.
func (d *OnsetDetector) endBlock() bool {
	hf, lf := d.hf/float64(d.hop), d.lf/float64(d.hop)
	var refHF, refLF float64
	for i := range d.histHF {
		refHF = math.Max(refHF, d.histHF[i])
		refLF = math.Max(refLF, d.histLF[i])
	}
	byHF, byLF := hf > onsetRise*refHF, lf > onsetRise*refLF
	onset := d.quiet == 0 && lf >= onsetFloor && (byHF || byLF)
	if onset {
		act := d.absX[:d.hop]
		if byHF {
			act = d.absD[:d.hop]
		}
		d.last = d.pos - int64(d.hop) + int64(firstAbove(act, onsetLocate))
		d.quiet = d.refractory
	} else if d.quiet > 0 {
		d.quiet--
	}
	d.histHF[d.ring], d.histLF[d.ring] = hf, lf
	d.ring = (d.ring + 1) % onsetHistory
	d.hf, d.lf, d.fill = 0, 0, 0
	return onset
}

// firstAbove returns the index of the first value reaching share times the maximum.
func firstAbove(v []float64, share float64) int {
	var peak float64
	for _, x := range v {
		peak = math.Max(peak, x)
	}
	for i, x := range v {
		if x >= share*peak {
			return i
		}
	}
	return 0
}

// AttackSkip returns the number of samples (50 ms) to skip after an onset before the
// analysis window starts, so that the hammer or pluck transient is not analysed.
func AttackSkip(rateHz float64) int {
	return int(math.Round(attackSkipS * rateHz))
}

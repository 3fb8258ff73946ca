package pitch

import (
	"fmt"
	"math"
)

// Onset detection: spectral flux on a short-time spectrum, confirmed by the time course
// of the level (see the package doc, "Segmentation").
const (
	onsetDecRateHz  = 11000                          // the input is averaged down to the lowest rate ≥ this (×1 below)
	onsetFrameS     = 0.0427                         // spectral frame, seconds (2048 samples at 48 kHz) …
	onsetMinFrame   = 64                             // … rounded to a power of two, at least this many samples
	onsetHops       = 2                              // hops per frame
	onsetSubs       = 32                             // sub-blocks per frame: the time grid of the onset's position
	onsetLag        = 1                              // the flux compares a frame with the loudest of those onsetLag …
	onsetMemory     = 5                              // … to onsetMemory hops before (107 ms at 48 kHz), bin by bin
	onsetFloorDB    = -90.0                          // bin level (dB re a full-scale sine) below which nothing counts
	onsetMedianLen  = 32                             // frames of flux history behind the adaptive threshold
	onsetFluxMin    = 60.0                           // flux (dB summed over bins) that always counts as a rise …
	onsetFluxRel    = 2.0                            // … above this multiple of the recent median flux
	onsetRiseMin    = 1.5                            // the mean power after the onset over that before it, at least (1.8 dB) …
	onsetBeforeS    = 0.04                           // … over this long before (a period at 25 Hz, so a low note's …
	onsetAfterS     = 0.04                           // … own waveform is no rise) and this long after
	onsetSharp      = 1                              // the onset is placed where the level over this many sub-blocks jumps …
	onsetPlaceS     = 0.013                          // … in the frame or this long after it …
	onsetJumpMin    = 1.2                            // … by this power ratio at least (0.8 dB) …
	onsetJumpSure   = 2.0                            // … and from this on at its leading edge, where it first reaches …
	onsetJumpEdge   = 0.75                           // … this share, in dB, of the largest jump; below, at the largest
	onsetLevelMin   = 1e-6                           // mean square at the onset below which nothing starts (−60 dBFS)
	onsetHPHz       = 80.0                           // corner of the high-pass that removes offsets from the level
	onsetAttackS    = 0.008                          // the level after the attack, from this long after the onset, must rise too …
	onsetHoldRise   = 1.25                           // … by this power ratio (1 dB) over the level before the onset …
	onsetSustainDB  = 16.0                           // … and stay within this many dB of the attack's peak (a click or step dies)
	onsetRefractory = 0.1                            // no second onset within this time, seconds
	attackSkipS     = 0.05                           // attack transient skipped before analysis, seconds
	subRing         = 256                            // sub-blocks of level history kept (more than a decision reaches back) …
	ringLen         = subRing * maxFrame / onsetSubs // … and analysed samples
	ringMask        = ringLen - 1
)

// OnsetDetector finds note onsets in a stream of samples: a note starts where the
// short-time spectrum rises (spectral flux), also when an earlier note still rings, and
// not where a sound stops. It does not allocate after NewOnsetDetector; its memory is
// fixed (about 90 kB). See the package doc for the method and its limits.
type OnsetDetector struct {
	// Set once.
	dec         int     // input samples per analysed sample
	n, hop, sub int     // frame, hop and sub-block, analysed samples
	norm        float64 // scales bin power so that a full-scale sine's peak is 1
	floor       float64 // onsetFloorDB as a power
	hpA         float64 // one-pole high-pass coefficient
	before      int     // sub-blocks in the level before an onset …
	after       int     // … and after it
	placeSubs   int     // onsetPlaceS in sub-blocks
	attack      int     // onsetAttackS in sub-blocks
	refractory  int     // sub-blocks
	win         [maxFrame]float64
	fft         realFFT
	fluxMin     float64 // onsetFluxMin in log2 units

	// Input stage.
	held float64 // last finite input sample (NaN and ±Inf are replaced by it)
	acc  float64 // sum of the current group of dec input samples
	accN int
	pos  int64 // input samples pushed

	// Analysed samples and their level per sub-block.
	nDec          int64
	ring          [ringLen]float32 // the latest analysed samples
	prevY, hpY    float64
	eHP, eDiff    float64 // sums of squares in the current sub-block: high-passed signal, difference
	subFill       int     // analysed samples in the current sub-block
	subs          int64   // completed sub-blocks
	subHP, subDif [subRing]float64

	// Spectra and flux.
	frame  [maxFrame]float64
	power  [maxHalf + 1]float64
	logs   [onsetMemory + 1][maxHalf + 1]float32 // log2 power of the latest frames
	ref    [maxHalf + 1]float32                  // the loudest of the earlier ones
	frames int64
	flux   [onsetMedianLen]float64
	sorted [onsetMedianLen]float64

	// Decisions.
	pending        bool  // a frame's flux stood out; its span waits for the decision
	spanLo, spanHi int64 // sub-blocks of that frame
	queued         bool  // later frames stood out meanwhile; their span is next
	nextLo, nextHi int64
	last           int64 // input sample of the latest onset, or -1
	lastSub        int64 // its sub-block
	found          bool  // an onset was confirmed since the flag was cleared
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
	d.dec = max(1, int(rateHz/onsetDecRateHz))
	rate := rateHz / float64(d.dec)
	d.n = max(onsetMinFrame, min(maxFrame, nearestPow2(onsetFrameS*rate)))
	d.hop = d.n / onsetHops
	d.sub = d.n / onsetSubs
	subS := float64(d.sub) / rate
	d.before = max(1, int(math.Round(onsetBeforeS/subS)))
	d.after = max(1, int(math.Round(onsetAfterS/subS)))
	d.placeSubs = max(1, int(math.Round(onsetPlaceS/subS)))
	d.attack = max(1, int(math.Round(onsetAttackS/subS)))
	d.refractory = int(math.Ceil(onsetRefractory / subS))
	d.hpA = 1 / (1 + 2*math.Pi*onsetHPHz/rate)
	var wsum float64
	for i := 0; i < d.n; i++ {
		d.win[i] = 0.5 - 0.5*math.Cos(2*math.Pi*(float64(i)+0.5)/float64(d.n))
		wsum += d.win[i]
	}
	d.norm = 4 / (wsum * wsum) // a sine of amplitude 1 has a peak bin of (wsum/2)²
	d.floor = math.Pow(10, onsetFloorDB/10)
	d.fluxMin = onsetFluxMin / (10 * math.Log10(2))
	d.fft.init(d.n)
	silent := float32(fastLog2(d.floor))
	for i := range d.logs {
		for k := range d.logs[i] {
			d.logs[i][k] = silent
		}
	}
	d.last, d.lastSub = -1, math.MinInt64/2
}

func nearestPow2(x float64) int {
	return 1 << int(math.Round(math.Log2(math.Max(1, x))))
}

// Push feeds the next block of samples and returns the index in block of the first
// onset confirmed while processing it, or -1. Confirmation comes some tens of
// milliseconds after the onset itself; if the onset lies before block, the index is 0
// and Last gives the exact sample.
func (d *OnsetDetector) Push(block []float32) int {
	first := -1
	start := d.pos
	d.pos += int64(len(block))
	for len(block) > 0 {
		n := min(len(block), d.dec-d.accN)
		acc, held := d.acc, d.held
		for _, v := range block[:n] {
			f := float64(v)
			if f-f != 0 { // NaN or Inf: hold the previous sample rather than poison the sums
				f = held
			}
			held = f
			acc += f
		}
		block = block[n:]
		d.held, d.accN = held, d.accN+n
		if d.accN < d.dec {
			d.acc = acc
			break
		}
		d.acc, d.accN = 0, 0
		d.sample(acc / float64(d.dec))
		if d.found {
			d.found = false
			if first < 0 {
				first = int(max(0, d.last-start))
			}
		}
	}
	return first
}

// Last returns the absolute sample index (counting from the first sample pushed) of
// the latest onset, or -1 if there was none.
func (d *OnsetDetector) Last() int64 { return d.last }

// sample takes the next analysed sample.
func (d *OnsetDetector) sample(y float64) {
	d.ring[d.nDec&ringMask] = float32(y)
	diff := y - d.prevY
	d.hpY = d.hpA * (d.hpY + diff)
	d.prevY = y
	d.eHP += d.hpY * d.hpY
	d.eDiff += diff * diff
	d.nDec++
	if d.subFill++; d.subFill < d.sub {
		return
	}
	i := d.subs % subRing
	d.subHP[i], d.subDif[i] = d.eHP/float64(d.sub), d.eDiff/float64(d.sub)
	d.eHP, d.eDiff, d.subFill = 0, 0, 0
	d.subs++
	if d.subs%(onsetSubs/onsetHops) == 0 {
		d.spectralFrame()
	}
	if d.pending {
		d.decide()
	}
}

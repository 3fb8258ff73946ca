package pitch

import (
	"fmt"
	"math"
)

// Onset detection: spectral flux on a short-time spectrum, confirmed by the time course
// of the level (see the package doc, "Segmentation").
const (
	onsetDecRateHz  = 11000  // the input is averaged down to the lowest rate ≥ this (×1 below)
	onsetFrameS     = 0.0427 // spectral frame, seconds (2048 samples at 48 kHz) …
	onsetMinFrame   = 64     // … rounded to a power of two, at least this many samples
	onsetHops       = 4      // hops per frame
	onsetSubs       = 8      // sub-blocks per hop: the time grid of the onset's position
	onsetLag        = 2      // the flux compares a frame with the one this many hops before
	onsetFloorDB    = -90.0  // bin level (dB re a full-scale sine) below which nothing counts
	onsetMedianLen  = 32     // frames of flux history behind the adaptive threshold
	onsetFluxMin    = 60.0   // flux (dB summed over bins) that always counts as a rise …
	onsetFluxRel    = 2.0    // … above this multiple of the recent median flux
	onsetRiseMin    = 1.6    // the level must jump by this power ratio (2 dB) at the onset …
	onsetBeforeS    = 0.02   // … over the loudest sub-block of this long before
	onsetLevelMin   = 1e-6   // mean square at the onset below which nothing starts (−60 dBFS)
	onsetHPHz       = 80.0   // corner of the high-pass that removes offsets from the level
	onsetSustainS0  = 0.008  // the sound must go on: its level from this long after the onset …
	onsetSustainS1  = 0.024  // … to this long after …
	onsetSustainDB  = 16.0   // … within this many dB of the onset's peak (a click or step is not)
	onsetRefractory = 0.1    // no second onset within this time, seconds
	attackSkipS     = 0.05   // attack transient skipped before analysis, seconds
	subRing         = 128    // sub-blocks of level history kept
)

// OnsetDetector finds note onsets in a stream of samples: a note starts where the
// short-time spectrum rises (spectral flux), also when an earlier note still rings, and
// not where a sound stops. It does not allocate after NewOnsetDetector; its memory is
// fixed (about 60 kB). See the package doc for the method and its limits.
type OnsetDetector struct {
	// Set once.
	dec         int     // input samples per analysed sample
	n, hop, sub int     // frame, hop and sub-block, analysed samples
	norm        float64 // scales bin power so that a full-scale sine's peak is 1
	floor       float64 // onsetFloorDB as a power
	hpA         float64 // one-pole high-pass coefficient
	before      int     // sub-blocks in the level reference before an onset
	sus0, sus1  int     // sustain check, sub-blocks after the onset
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
	ring          [maxFrame]float64 // the last n analysed samples
	prevY, hpY    float64
	eHP, eDiff    float64 // sums of squares in the current sub-block: high-passed signal, difference
	subs          int64   // completed sub-blocks
	subHP, subDif [subRing]float64

	// Spectra and flux.
	frame  [maxFrame]float64
	power  [maxHalf + 1]float64
	logs   [onsetLag + 1][maxHalf + 1]float64 // log2 power of the latest frames
	frames int64
	flux   [onsetMedianLen]float64
	sorted [onsetMedianLen]float64

	// Decisions.
	pending bool  // a located onset waits for its sustain check
	pendSub int64 // its sub-block
	pendAt  int64 // its input sample
	last    int64 // input sample of the latest onset, or -1
	lastSub int64 // its sub-block
	found   bool  // an onset was confirmed since the flag was cleared
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
	d.sub = d.hop / onsetSubs
	subS := float64(d.sub) / rate
	d.before = max(1, int(math.Ceil(onsetBeforeS/subS)))
	d.sus0 = max(1, int(math.Round(onsetSustainS0/subS)))
	d.sus1 = max(d.sus0+1, int(math.Round(onsetSustainS1/subS)))
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
	silent := fastLog2(d.floor)
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
	for _, v := range block {
		f := float64(v)
		if f-f != 0 { // NaN or Inf: hold the previous sample rather than poison the sums
			f = d.held
		}
		d.held = f
		d.acc += f
		d.accN++
		if d.accN < d.dec {
			continue
		}
		d.sample(d.acc / float64(d.dec))
		d.acc, d.accN = 0, 0
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
	d.ring[d.nDec&int64(d.n-1)] = y
	diff := y - d.prevY
	d.hpY = d.hpA * (d.hpY + diff)
	d.prevY = y
	d.eHP += d.hpY * d.hpY
	d.eDiff += diff * diff
	d.nDec++
	if d.nDec%int64(d.sub) != 0 {
		return
	}
	i := d.subs % subRing
	d.subHP[i], d.subDif[i] = d.eHP/float64(d.sub), d.eDiff/float64(d.sub)
	d.eHP, d.eDiff = 0, 0
	d.subs++
	if d.nDec%int64(d.hop) == 0 {
		d.spectralFrame()
	}
	if d.pending {
		d.confirm()
	}
}

// spectralFrame takes the spectrum of the last n analysed samples and, when its flux
// stands out, looks for the onset that caused it.
func (d *OnsetDetector) spectralFrame() {
	m := d.n / 2
	start := d.nDec // the oldest sample sits where the next one goes
	for i := 0; i < d.n; i++ {
		d.frame[i] = d.win[i] * d.ring[(start+int64(i))&int64(d.n-1)]
	}
	d.fft.power(d.power[:m+1], d.frame[:d.n])
	cur := &d.logs[d.frames%(onsetLag+1)]
	ref := &d.logs[(d.frames+1)%(onsetLag+1)] // onsetLag frames back
	for k := 0; k <= m; k++ {
		cur[k] = fastLog2(d.power[k]*d.norm + d.floor)
	}
	// Half-wave rectified flux against the loudest neighbouring bin of the earlier
	// frame, so that a partial gliding by a bin (beats, vibrato) is no rise.
	var flux float64
	for k := 1; k < m; k++ {
		r := max(ref[k-1], ref[k], ref[k+1])
		if c := cur[k]; c > r {
			flux += c - r
		}
	}
	thr := d.fluxMin + onsetFluxRel*d.median()
	d.flux[d.frames%onsetMedianLen] = flux
	d.frames++
	if flux < thr || d.pending {
		return
	}
	if j, ok := d.locate(); ok {
		d.pending, d.pendSub, d.pendAt = true, j, d.onsetSample(j)
	}
}

// median returns the median flux of the recent frames (zero before there are any).
func (d *OnsetDetector) median() float64 {
	n := int(min(d.frames, onsetMedianLen))
	s := d.sorted[:n]
	copy(s, d.flux[:n])
	for i := 1; i < n; i++ { // insertion sort: 32 values
		for j := i; j > 0 && s[j] < s[j-1]; j-- {
			s[j], s[j-1] = s[j-1], s[j]
		}
	}
	if n == 0 {
		return 0
	}
	return s[n/2]
}

// locate returns the sub-block, within the latest frame and past the refractory time,
// where the level jumps the most over the loudest sub-block of the preceding
// onsetBeforeS, in the high-passed signal or in its first difference (which stresses
// the broadband noise of a strike or pluck). It fails when no jump is large enough.
func (d *OnsetDetector) locate() (int64, bool) {
	hi := d.subs
	lo := max(0, hi-int64(d.n/d.sub), d.lastSub+int64(d.refractory), hi-subRing+int64(d.before+d.sus1+1))
	best, bestJ := 0.0, int64(-1)
	for j := lo; j < hi; j++ {
		var refHP, refDif float64
		for i := max(0, j-int64(d.before)); i < j; i++ {
			refHP = max(refHP, d.subHP[i%subRing])
			refDif = max(refDif, d.subDif[i%subRing])
		}
		eHP, eDif := d.subHP[j%subRing], d.subDif[j%subRing]
		if eHP < onsetLevelMin {
			continue
		}
		r := max(ratio(eHP, refHP), ratio(eDif, refDif))
		if r > best {
			best, bestJ = r, j
		}
	}
	return bestJ, best >= onsetRiseMin
}

func ratio(e, ref float64) float64 {
	if ref <= 0 {
		if e > 0 {
			return math.Inf(1)
		}
		return 0
	}
	return e / ref
}

// onsetSample returns the input sample where the onset in sub-block j begins: the first
// analysed sample whose step from its predecessor reaches a third of the sub-block's
// largest step.
func (d *OnsetDetector) onsetSample(j int64) int64 {
	first := j * int64(d.sub)
	var prev, peak float64
	if first > 0 {
		prev = d.ring[(first-1)&int64(d.n-1)]
	}
	p := prev
	for i := first; i < first+int64(d.sub); i++ {
		y := d.ring[i&int64(d.n-1)]
		peak = max(peak, math.Abs(y-p))
		p = y
	}
	p = prev
	at := first
	for i := first; i < first+int64(d.sub); i++ {
		y := d.ring[i&int64(d.n-1)]
		if math.Abs(y-p) >= peak/3 {
			at = i
			break
		}
		p = y
	}
	return at * int64(d.dec)
}

// confirm decides a pending onset once its sustain window has passed: the level from
// onsetSustainS0 to onsetSustainS1 after the onset must stay within onsetSustainDB of
// the loudest sub-block before it. A click, a knock without resonance or a step of
// the offset dies faster and is no note.
func (d *OnsetDetector) confirm() {
	j := d.pendSub
	if d.subs < j+int64(d.sus1) {
		return
	}
	d.pending = false
	var peak, sus float64
	for i := j; i < j+int64(d.sus0); i++ {
		peak = max(peak, d.subHP[i%subRing])
	}
	for i := j + int64(d.sus0); i < j+int64(d.sus1); i++ {
		sus += d.subHP[i%subRing]
	}
	sus /= float64(d.sus1 - d.sus0)
	if sus < peak*math.Pow(10, -onsetSustainDB/10) {
		return
	}
	d.last, d.lastSub, d.found = d.pendAt, j, true
}

// AttackSkip returns the number of samples (50 ms) to skip after an onset before the
// analysis window starts, so that the hammer or pluck transient is not analysed.
func AttackSkip(rateHz float64) int {
	return int(math.Round(attackSkipS * rateHz))
}

package monitor

import (
	"fmt"
	"math"

	"taut/capture"
	"taut/pitch"
)

// dcCutoffHz is the corner of the DC blocker in front of onset detection and analysis:
// well below the lowest piano string (A0, 27.5 Hz), enough to remove an input's offset.
const dcCutoffHz = 5.0

// lane listens to one input channel (or the mix of all) for the strings heard on it.
type lane struct {
	pick     int   // capture.Channel pick: 0 = mix of all channels, else the 1-based channel
	cands    []int // strings heard on this lane, in scale order
	det      *pitch.OnsetDetector
	dc       dcBlocker
	mono     []float32 // this lane's samples of the current block
	fed      int64     // samples pushed to det before the current block
	clips    []int32   // clips[i]: clipped samples among the block's first i (before the DC blocker)
	clipMask []bool    // per-sample clipping marks of the current block (scratch)

	// The note being collected.
	open      bool
	onset     int64 // sample frame of the onset
	skip      int   // samples of the attack still to skip
	need      int   // window length
	win       []float32
	by        string // byChannel, byExciter or "" (prediction among noteCands)
	noteCands []int  // candidates of the current note
	hint      pitch.Hint
	clipped   int // clipped samples in the window
}

// setupLanes decides which channel each string is heard on. Without pickup channels
// there is one lane listening to the mix of all channels. With them, each channel that
// strings are mapped to is a lane for those strings, and the strings without a channel
// are heard on the lowest channel no string is mapped to (the room microphone).
func (m *Monitor) setupLanes() error {
	strs := m.cfg.Instrument.Strings
	byCh := make([][]int, m.format.Channels+1)
	for i := range strs {
		byCh[strs[i].Channel] = append(byCh[strs[i].Channel], i)
	}
	if len(byCh[0]) == len(strs) {
		m.lanes = []*lane{m.newLane(0, byCh[0])}
	} else {
		for c := 1; c <= m.format.Channels; c++ {
			if len(byCh[c]) > 0 {
				m.lanes = append(m.lanes, m.newLane(c, byCh[c]))
			} else if len(byCh[0]) > 0 {
				m.lanes = append(m.lanes, m.newLane(c, byCh[0]))
				byCh[0] = nil
			}
		}
		if len(byCh[0]) > 0 {
			return fmt.Errorf("monitor: %d string(s) (first %s) have no pickup channel and every input channel "+
				"is mapped to pickups: leave one channel for a microphone or give them channels",
				len(byCh[0]), strs[byCh[0][0]].ID)
		}
	}
	return m.setupAnalyzer()
}

func (m *Monitor) newLane(pick int, cands []int) *lane {
	return &lane{pick: pick, cands: cands, det: pitch.NewOnsetDetector(m.rateHz), dc: newDCBlocker(m.rateHz)}
}

// setupAnalyzer makes one analyser whose range covers every string's widest
// plausible pitch and sizes each lane's window buffer.
func (m *Monitor) setupAnalyzer() error {
	minHz, maxHz := staticRange(m.cfg.Instrument.Strings, &m.lim)
	minHz = math.Max(minHz, analyserMinHz)
	maxHz = math.Min(maxHz, 0.45*m.rateHz)
	if minHz >= maxHz {
		return fmt.Errorf("monitor: strings up to %.0f Hz cannot be heard at a sample rate of %d Hz", minHz, m.format.SampleRate)
	}
	maxWin := pitch.WindowLen(m.rateHz, minHz)
	a, err := pitch.New(pitch.Config{SampleRate: m.rateHz, MinHz: minHz, MaxHz: maxHz, MaxSamples: maxWin})
	if err != nil {
		return fmt.Errorf("monitor: pitch analyser: %w", err)
	}
	m.analyzer = a
	for _, l := range m.lanes {
		l.win = make([]float32, 0, maxWin)
	}
	m.hintMinHz, m.hintMaxHz = minHz, maxHz
	return nil
}

// analyserMinHz is the lowest fundamental the analyser is asked to search for.
const analyserMinHz = 20

// push feeds one block (interleaved) starting at sample frame frame0 to the lane.
func (m *Monitor) push(l *lane, interleaved []float32, frame0 int64) {
	l.mono = capture.Channel(l.mono, interleaved, m.format.Channels, l.pick)
	l.clips, l.clipMask = countClipped(l.clips, l.clipMask, l.mono, float64(m.format.SampleRate))
	l.dc.filter(l.mono)
	x := l.mono
	on := l.det.Push(x)
	early := int64(0) // an onset confirmed here may lie in the previous block
	if last := l.det.Last(); on == 0 && last >= 0 && last < l.fed {
		early = l.fed - last
	}
	l.fed += int64(len(x))
	end := len(x)
	if on >= 0 {
		end = on
	}
	m.fill(l, x[:end], 0)
	if on >= 0 {
		if l.open {
			m.finishEarly(l, int(early))
		}
		m.begin(l, frame0+int64(on)-early)
		l.skip = max(l.skip-int(early), 0)
		m.fill(l, x[on:], on)
	}
}

// fill adds samples x (from index off of the block) to the open window, skipping the
// attack first, and analyses the window once it is full.
func (m *Monitor) fill(l *lane, x []float32, off int) {
	if !l.open {
		return
	}
	k := min(l.skip, len(x))
	l.skip -= k
	x, off = x[k:], off+k
	k = min(l.need-len(l.win), len(x))
	l.win = append(l.win, x[:k]...)
	l.clipped += int(l.clips[off+k] - l.clips[off])
	if len(l.win) == l.need {
		l.open = false
		m.analyze(l)
	}
}

// finishEarly ends a window cut short by a new onset or an idle gap: analysed if at
// least half full (the analyser says so if that is too short), else dropped.
func (m *Monitor) finishEarly(l *lane, early int) {
	l.open = false
	// The onset detector confirms an onset some tens of milliseconds after it; those
	// samples of the new note went into this window and must not be analysed with it.
	l.win = l.win[:max(0, len(l.win)-early)]
	if len(l.win) >= l.need/2 && len(l.win) > 0 {
		m.analyze(l)
	}
}

// discard drops a half-collected note, after audio was lost mid-note.
func (l *lane) discard() { l.open = false }

// dcBlocker is the one-pole high-pass y[n] = x[n] − x[n−1] + r·y[n−1].
// It starts from the first sample, so an offset present from the start is no step.
type dcBlocker struct {
	r      float32
	x1, y1 float32
	primed bool
}

func newDCBlocker(rateHz float64) dcBlocker {
	return dcBlocker{r: float32(1 - 2*math.Pi*dcCutoffHz/rateHz)}
}

func (d *dcBlocker) filter(x []float32) {
	if !d.primed && len(x) > 0 {
		d.x1, d.primed = x[0], true
	}
	for i, v := range x {
		y := v - d.x1 + d.r*d.y1
		d.x1, d.y1 = v, y
		x[i] = y
	}
}

// clipShare is the share of a window's samples on clipped flat tops (pitch.MarkClipped,
// judged on the raw samples: the DC blocker would turn flat tops into slopes and hide
// them from the analyser's own check) above which the window is not analysed.
const clipShare = 0.01

// countClipped returns the running count of clipped samples of x, reusing dst and
// mask.
func countClipped(dst []int32, mask []bool, x []float32, rateHz float64) ([]int32, []bool) {
	mask = pitch.MarkClipped(mask, x, rateHz, analyserMinHz)
	dst = append(dst[:0], 0)
	n := int32(0)
	for _, c := range mask {
		if c {
			n++
		}
		dst = append(dst, n)
	}
	return dst, mask
}

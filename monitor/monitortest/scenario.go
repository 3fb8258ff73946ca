package monitortest

import (
	"encoding/binary"
	"io"
	"math"
	"sort"

	"taut/capture"
	"taut/capture/synth"
)

// Sounding is one scripted note: which string sounds when, with the tone's true values.
type Sounding struct {
	AtS    float64 // onset, seconds of sample time from the start
	String string  // the string that sounds ("" for a stray note no string should claim)
	F0Hz   float64 // true ideal fundamental
	B      float64 // true inharmonicity
}

// Scenario is a time-ordered script of soundings, rendered with capture/synth as
// decaying stiff-string tones of ToneS seconds on one channel.
type Scenario struct {
	RateHz    int
	ToneS     float64
	EndS      float64 // total length; at least the end of the last tone
	Soundings []Sounding
}

// Tone returns the synthetic tone of sounding i.
func (s *Scenario) Tone(i int) synth.Tone {
	so := s.Soundings[i]
	return synth.Tone{F0Hz: so.F0Hz, B: so.B, Partials: 12, Level: 0.25, DecayS: 1.2, DecayGrowS: 0.1,
		ThumpS: 0.01, ThumpLevel: 0.15,
		Seed: uint64(i + 1)}
}

func (s *Scenario) sort() {
	sort.SliceStable(s.Soundings, func(i, j int) bool { return s.Soundings[i].AtS < s.Soundings[j].AtS })
}

func (s *Scenario) frame(tS float64) int64 { return int64(math.Round(tS * float64(s.RateHz))) }

func (s *Scenario) toneFrames() int64 { return s.frame(s.ToneS) }

// Queue plays the scenario on a synthetic source and closes it (Read returns io.EOF
// after the last sample).
func (s *Scenario) Queue(src *capture.SynthSource) {
	s.Feed(src)
	src.Close()
}

// Feed plays the scenario on a synthetic source: each tone, and idle skips for the
// time between tones, so hours cost only the tones. The source stays open: Read then
// waits for more, like a live input that went silent.
func (s *Scenario) Feed(src *capture.SynthSource) {
	var at int64
	for i := range s.Soundings {
		on := s.frame(s.Soundings[i].AtS)
		if on > at {
			src.Skip(on - at)
			at = on
		}
		n := min(s.toneFrames(), s.nextOnset(i)-on)
		src.Queue(s.Tone(i), float64(n)/float64(s.RateHz))
		at += n
	}
	if end := s.frame(s.EndS); end > at {
		src.Skip(end - at)
	}
}

// Split cuts the scenario at sample time atS into the part before and the part after,
// the second with times from atS.
func (s *Scenario) Split(atS float64) (before, after *Scenario) {
	before = &Scenario{RateHz: s.RateHz, ToneS: s.ToneS, EndS: atS}
	after = &Scenario{RateHz: s.RateHz, ToneS: s.ToneS, EndS: s.EndS - atS}
	for _, so := range s.Soundings {
		if so.AtS < atS {
			before.Soundings = append(before.Soundings, so)
		} else {
			so.AtS -= atS
			after.Soundings = append(after.Soundings, so)
		}
	}
	return before, after
}

// nextOnset is the onset frame of the sounding after i (a tone is cut there).
func (s *Scenario) nextOnset(i int) int64 {
	if i+1 < len(s.Soundings) {
		return s.frame(s.Soundings[i+1].AtS)
	}
	return math.MaxInt64
}

// Render returns the mono samples of frames [from, to), silence between tones.
func (s *Scenario) Render(from, to int64) []float32 {
	dst := make([]float32, to-from)
	tone := make([]float32, s.toneFrames())
	for i := range s.Soundings {
		on := s.frame(s.Soundings[i].AtS)
		end := min(on+s.toneFrames(), s.nextOnset(i))
		if end <= from || on >= to {
			continue
		}
		s.Tone(i).Render(tone, float64(s.RateHz))
		for f := max(on, from); f < min(end, to); f++ {
			dst[f-from] = tone[f-on]
		}
	}
	return dst
}

// Frames is the scenario's length in frames.
func (s *Scenario) Frames() int64 { return s.frame(s.EndS) }

// PCM16 returns the whole scenario as a stream of s16le mono bytes, rendered a
// second at a time as it is read (an hour at 16 kHz would be 115 MB in memory).
func (s *Scenario) PCM16() io.Reader { return &pcmStream{s: s} }

type pcmStream struct {
	s    *Scenario
	pos  int64
	buf  []byte
	done bool
}

func (p *pcmStream) Read(b []byte) (int, error) {
	if len(p.buf) == 0 {
		if p.pos >= p.s.Frames() {
			return 0, io.EOF
		}
		to := min(p.pos+int64(p.s.RateHz), p.s.Frames())
		x := p.s.Render(p.pos, to)
		p.pos = to
		p.buf = make([]byte, 2*len(x))
		for i, v := range x {
			q := int16(math.Round(math.Max(-1, math.Min(1, float64(v))) * 32767))
			binary.LittleEndian.PutUint16(p.buf[2*i:], uint16(q))
		}
	}
	n := copy(b, p.buf)
	p.buf = p.buf[n:]
	return n, nil
}

package pitch

import (
	"math"
	"math/rand/v2"
	"testing"

	"taut/capture/synth"
	"taut/pitch/note"
)

// recording is a synthetic file with several notes: silence, a bass note, a middle note
// struck while the previous one still rings, and a treble note over the tail of that.
type recording struct {
	x      []float32
	onsets []int
	tones  []synth.Tone
}

func makeRecording() recording {
	const n = 4 * int(rate)
	r := recording{x: make([]float32, n)}
	add := func(atS float64, tone synth.Tone, durS float64) {
		at := int(atS * rate)
		tone.Add(r.x[at:min(n, at+int(durS*rate))], rate)
		r.onsets = append(r.onsets, at)
		r.tones = append(r.tones, tone)
	}
	add(0.3, synth.Tone{F0Hz: 55, B: 2e-4, Partials: 16, FirstDB: -20, DecayS: 3, ThumpS: 0.01, Seed: 1}, 1.2)
	add(1.5, synth.Tone{F0Hz: 261.6256, B: 3.5e-4, Partials: 16, DecayS: 0.5, ThumpS: 0.01, Seed: 2}, 2.5)
	add(2.3, synth.Tone{F0Hz: 293.6648, B: 4e-4, Partials: 16, DecayS: 0.4, ThumpS: 0.01, Seed: 3}, 1.7)
	add(3.2, synth.Tone{F0Hz: 2093.005, B: 7.8e-3, Partials: 8, DecayS: 0.3, ThumpS: 0.005, Seed: 4}, 0.8)
	synth.AddNoise(r.x, 50, rand.New(rand.NewPCG(1, 1)))
	return r
}

func TestSegments_Recording(t *testing.T) {
	r := makeRecording()
	segs := Segments(nil, r.x, rate, 25)
	if len(segs) != len(r.onsets) {
		t.Fatalf("found %d notes %+v, want %d at %v", len(segs), segs, len(r.onsets), r.onsets)
	}
	a := newAnalyzer(t, Config{SampleRate: rate})
	for i, s := range segs {
		// Onsets to within one 5 ms detection block.
		if d := s.Onset - r.onsets[i]; d < -int(0.005*rate) || d > int(0.005*rate) {
			t.Errorf("note %d: onset %d, want %d", i, s.Onset, r.onsets[i])
		}
		if s.Start != s.Onset+AttackSkip(rate) || s.End <= s.Start {
			t.Errorf("note %d: window [%d, %d) does not follow the attack at %d", i, s.Start, s.End, s.Onset)
		}
		if i+1 < len(segs) && s.End > segs[i+1].Onset {
			t.Errorf("note %d: window ends at %d, after the next onset %d", i, s.End, segs[i+1].Onset)
		}
		if s.End-s.Start > WindowLen(rate, 25) {
			t.Errorf("note %d: window of %d samples, longer than WindowLen %d", i, s.End-s.Start, WindowLen(rate, 25))
		}
		var n Note
		if err := a.Analyze(&n, r.x[s.Start:s.End], Hint{}); err != nil {
			t.Errorf("note %d: %v", i, err)
			continue
		}
		if c := note.Cents(n.FundamentalHz, r.tones[i].PartialHz(1)); math.Abs(c) > 0.1 {
			t.Errorf("note %d: %.4f Hz, %.3f cents off", i, n.FundamentalHz, c)
		}
	}
}

func TestSegments_DecayEndsWindow(t *testing.T) {
	// A note whose power falls 8.69 dB per time constant (0.1 s) is 35 dB down after
	// 0.40 s; the window ends there, before WindowLen and the end of the file.
	x := make([]float32, int(rate))
	synth.Tone{F0Hz: 523.2511, B: 1e-3, Partials: 8, DecayS: 0.1, Seed: 1}.Render(x, rate)
	segs := Segments(nil, x, rate, 25)
	if len(segs) != 1 {
		t.Fatalf("segments %+v, want 1", segs)
	}
	if got := float64(segs[0].End-segs[0].Onset) / rate; math.Abs(got-0.40) > 0.02 {
		t.Errorf("window ends %.3f s after the onset, want 0.40 s", got)
	}
}

func TestSegments_Appends(t *testing.T) {
	r := makeRecording()
	dst := []Segment{{Onset: -1}}
	dst = Segments(dst, r.x, rate, 0)
	if len(dst) != 1+len(r.onsets) || dst[0].Onset != -1 {
		t.Errorf("Segments did not append to dst: %+v", dst)
	}
}

func TestSegments_Silence(t *testing.T) {
	if segs := Segments(nil, make([]float32, int(rate)), rate, 25); len(segs) != 0 {
		t.Errorf("Segments(silence) = %+v, want none", segs)
	}
	if segs := Segments(nil, nil, rate, 25); len(segs) != 0 {
		t.Errorf("Segments(nil) = %+v, want none", segs)
	}
}

// maxOnsetDelayS bounds the time from an onset to its confirmation by Push: the
// frame that shows the rise, the placement's reach past it, and the attack and the
// onsetAfterS of level after it that the decision needs (plus a sub-block).
const maxOnsetDelayS = onsetFrameS + onsetPlaceS + onsetAttackS + onsetAfterS + 0.002

func TestOnsetDetector_StreamingMatchesSegments(t *testing.T) {
	// Any block size gives the same onsets as the offline scan, each confirmed within
	// maxOnsetDelayS of the onset.
	r := makeRecording()
	want := Segments(nil, r.x, rate, 25)
	rng := rand.New(rand.NewPCG(2, 2))
	for _, maxBlock := range []int{1, 64, 480, 4096} {
		d := NewOnsetDetector(rate)
		var got []int64
		for i := 0; i < len(r.x); {
			n := min(len(r.x)-i, 1+rng.IntN(maxBlock))
			if k := d.Push(r.x[i : i+n]); k >= 0 {
				if k >= n || int64(i+k) < d.Last() || float64(int64(i)-d.Last()) > maxOnsetDelayS*rate {
					t.Fatalf("block size ≤ %d: Push returned %d for a block of %d at %d (Last %d)", maxBlock, k, n, i, d.Last())
				}
				got = append(got, d.Last())
			}
			i += n
		}
		if len(got) != len(want) {
			t.Fatalf("block size ≤ %d: onsets %v, want %+v", maxBlock, got, want)
		}
		for i := range got {
			if got[i] != int64(want[i].Onset) {
				t.Errorf("block size ≤ %d: onset %d at %d, want %d", maxBlock, i, got[i], want[i].Onset)
			}
		}
	}
}

func TestOnsetDetector_NoFalseOnsets(t *testing.T) {
	// Steady and decaying tones, beating pairs and noise give no onset after the first.
	x := make([]float32, 3*int(rate))
	tests := []struct {
		name   string
		render func()
	}{
		{"A0", func() {
			synth.Tone{F0Hz: 27.5, B: 3e-4, Partials: 16, FirstDB: -20, DecayS: 3, Seed: 3}.Render(x, rate)
		}},
		{"Beating", func() {
			synth.Tone{F0Hz: 440, Partials: 8, DecayS: 2, Seed: 1}.Render(x, rate)
			synth.Tone{F0Hz: 441, Partials: 8, DecayS: 2, Seed: 2}.Add(x, rate)
		}},
		{"Noise", func() {
			clear(x)
			synth.AddNoise(x[:1], 0, nil) // no-op on zero power
			rng := rand.New(rand.NewPCG(3, 3))
			for i := range x {
				x[i] = float32(0.05 * rng.NormFloat64())
			}
		}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			tc.render()
			d := NewOnsetDetector(rate)
			count := 0
			for i := 0; i < len(x); i += 512 {
				if d.Push(x[i:min(i+512, len(x))]) >= 0 {
					count++
				}
			}
			if count != 1 || d.Last() > int64(0.005*rate) {
				t.Errorf("%d onsets, last at %d; want one at the start", count, d.Last())
			}
		})
	}
}

func TestOnsetDetector_IgnoresNaN(t *testing.T) {
	x := make([]float32, int(rate))
	synth.Sine(x, 440, rate, 0.5, 0)
	x[100] = float32(math.NaN())
	x[2000] = float32(math.Inf(1))
	d := NewOnsetDetector(rate)
	if k := d.Push(x); int64(k) != d.Last() || d.Last() > 4 {
		t.Errorf("onset at %d, want at the start", d.Last())
	}
}

func TestWindowLen(t *testing.T) {
	tests := []struct {
		rate, minHz float64
		atLeastS    float64
	}{
		{48000, 25, 12 / 25.0},
		{48000, 0, 12 / 25.0}, // zero means 25 Hz
		{44100, 27.5, 12 / 27.5},
		{48000, 440, 0.1},
		{8000, 100, 0.12},
	}
	for _, tc := range tests {
		got := WindowLen(tc.rate, tc.minHz)
		if float64(got) < tc.atLeastS*tc.rate || float64(got) > 0.6*tc.rate {
			t.Errorf("WindowLen(%v, %v) = %d, want %.0f to %.0f", tc.rate, tc.minHz, got, tc.atLeastS*tc.rate, 0.6*tc.rate)
		}
	}
	// Analyze accepts (and uses no more than) a window of that length.
	a := newAnalyzer(t, Config{SampleRate: 48000})
	x := make([]float32, WindowLen(48000, 25))
	synth.Tone{F0Hz: 27.5, B: 3e-4, Partials: 16, FirstDB: -20, Seed: 1}.Render(x, 48000)
	var n Note
	if err := a.Analyze(&n, x, Hint{}); err != nil {
		t.Fatal(err)
	}
}

func TestPanicsOnBadRate(t *testing.T) {
	for _, f := range []func(){
		func() { NewOnsetDetector(0) },
		func() { NewOnsetDetector(math.NaN()) },
		func() { WindowLen(-1, 25) },
		func() { WindowLen(48000, -5) },
		func() { Segments(nil, nil, 0, 25) },
	} {
		func() {
			defer func() {
				if recover() == nil {
					t.Error("no panic for a bad rate")
				}
			}()
			f()
		}()
	}
}

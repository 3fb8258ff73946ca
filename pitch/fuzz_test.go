package pitch

import (
	"encoding/binary"
	"math"
	"testing"

	"taut/capture/synth"
)

// FuzzAnalyze feeds arbitrary float32 samples (any bit pattern: NaN, Inf, huge,
// denormal) to Analyze, Segments and the onset detector. Nothing may panic, and a
// reported pitch must be finite and inside the search range.
func FuzzAnalyze(f *testing.F) {
	const fuzzRate = 8000.0
	tone := make([]float32, 3000)
	synth.Tone{F0Hz: 220, B: 1e-3, Partials: 8, DecayS: 0.5, ThumpS: 0.01, Seed: 1}.Render(tone, fuzzRate)
	f.Add(float32Bytes(tone))
	f.Add(float32Bytes([]float32{float32(math.NaN()), 0.5, -0.5}))
	f.Add(float32Bytes([]float32{float32(math.Inf(1)), 1e30, -1e-40}))
	f.Add([]byte{})
	f.Add([]byte{1, 2, 3})
	a, err := New(Config{SampleRate: fuzzRate, MinHz: 60, MaxHz: 1500, MaxSamples: 4096})
	if err != nil {
		f.Fatal(err)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		x := make([]float32, len(data)/4)
		for i := range x {
			x[i] = math.Float32frombits(binary.LittleEndian.Uint32(data[4*i:]))
		}
		var n Note
		if err := a.Analyze(&n, x, Hint{}); err == nil {
			if !(n.FundamentalHz >= 60/semitone && n.FundamentalHz <= 1500*semitone) ||
				math.IsNaN(n.B) || math.IsNaN(n.Clarity) || len(n.Partials) == 0 {
				t.Fatalf("Analyze = %+v", n)
			}
		}
		for _, s := range Segments(nil, x, fuzzRate, 60) {
			if s.Onset < 0 || s.Onset > s.Start || s.Start > s.End || s.End > len(x) {
				t.Fatalf("bad segment %+v for %d samples", s, len(x))
			}
		}
		d := NewOnsetDetector(fuzzRate)
		if k := d.Push(x); k >= len(x) {
			t.Fatalf("Push = %d for %d samples", k, len(x))
		}
	})
}

func float32Bytes(x []float32) []byte {
	b := make([]byte, 4*len(x))
	for i, v := range x {
		binary.LittleEndian.PutUint32(b[4*i:], math.Float32bits(v))
	}
	return b
}

package synth

import (
	"math"
	"math/rand/v2"
	"testing"
)

func TestTone_PartialHz(t *testing.T) {
	// Fletcher 1964: f_n = n f0 sqrt(1 + B n^2).
	tone := Tone{F0Hz: 100, B: 1e-3}
	tests := []struct {
		n    int
		want float64
	}{
		{1, 100 * math.Sqrt(1.001)},
		{4, 400 * math.Sqrt(1.016)},
		{10, 1000 * math.Sqrt(1.1)},
	}
	for _, tc := range tests {
		if got := tone.PartialHz(tc.n); math.Abs(got-tc.want) > 1e-9 {
			t.Errorf("PartialHz(%d) = %v, want %v", tc.n, got, tc.want)
		}
	}
}

func TestSine_MatchesMathSin(t *testing.T) {
	const rate, f = 48000.0, 441.3
	x := make([]float32, 48000*3)
	Sine(x, f, rate, 0.5, 0.25)
	var worst float64
	for i, v := range x {
		want := 0.5 * math.Sin(2*math.Pi*f*float64(i)/rate+0.25)
		worst = max(worst, math.Abs(float64(v)-want))
	}
	if worst > 1e-6 {
		t.Fatalf("max deviation from math.Sin = %g, want <= 1e-6", worst)
	}
}

func TestAddNoise_SNR(t *testing.T) {
	x := make([]float32, 96000)
	Sine(x, 440, 48000, 1, 0)
	clean := append([]float32(nil), x...)
	AddNoise(x, 20, rand.New(rand.NewPCG(1, 1)))
	var ps, pn float64
	for i := range x {
		ps += float64(clean[i]) * float64(clean[i])
		d := float64(x[i] - clean[i])
		pn += d * d
	}
	got := 10 * math.Log10(ps/pn)
	if math.Abs(got-20) > 0.1 {
		t.Fatalf("SNR = %.3f dB, want 20 ± 0.1", got)
	}
}

func TestTone_Deterministic(t *testing.T) {
	tone := Tone{F0Hz: 220, B: 2e-4, DecayS: 1, ThumpS: 0.01, Seed: 7}
	a := make([]float32, 4800)
	b := make([]float32, 4800)
	tone.Render(a, 48000)
	tone.Render(b, 48000)
	for i := range a {
		if a[i] != b[i] {
			t.Fatalf("sample %d differs between renders: %v vs %v", i, a[i], b[i])
		}
	}
}

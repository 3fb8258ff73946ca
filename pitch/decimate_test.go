package pitch

import (
	"math"
	"testing"
)

func TestHalfbandTaps_Response(t *testing.T) {
	// H(f) = 1/2 + 2·Σ h_m·cos(2π·f·m), m odd, f in cycles per input sample.
	taps := halfbandTaps(halfbandQ, halfbandBeta)
	h := func(f float64) float64 {
		s := 0.5
		for i, v := range taps {
			s += 2 * v * math.Cos(2*math.Pi*f*float64(2*i+1))
		}
		return s
	}
	if g := h(0); math.Abs(g-1) > 1e-12 {
		t.Errorf("gain at 0 Hz = %v, want 1", g)
	}
	// Aliases fold [0.31, 0.5] onto [0, 0.19] of the input rate, which holds the band
	// kept (passEdge of the output rate = 0.19 of the input rate): at least 80 dB down.
	for f := 0.31; f <= 0.5; f += 0.001 {
		if db := 20 * math.Log10(math.Abs(h(f))); db > -80 {
			t.Fatalf("stopband at %.3f: %.1f dB, want <= -80", f, db)
		}
	}
	if 0.5-passEdge/2 < 0.31 {
		t.Errorf("passEdge %v reaches into the aliased band", passEdge)
	}
}

func TestPyramid_MatchesDirectFilter(t *testing.T) {
	// Lazily extended levels equal one pass of the filter over the whole input.
	var p pyramid
	p.init(4096)
	for i := range 4096 {
		p.buf[0][i] = math.Sin(0.01*float64(i)) + 0.3*math.Cos(0.37*float64(i))
	}
	p.reset(4096)
	p.level(2, 100) // compute a prefix first, then extend
	got := p.level(2, 2000)
	var q pyramid
	q.init(4096)
	copy(q.buf[0], p.buf[0][:4096])
	q.reset(4096)
	want := q.level(2, 2000)
	if len(got) != len(want) || len(got) < 900 {
		t.Fatalf("lengths %d, %d", len(got), len(want))
	}
	for i := range got {
		if got[i] != want[i] {
			t.Fatalf("sample %d: %v, want %v", i, got[i], want[i])
		}
	}
	// A sinusoid well inside the band passes with its frequency and amplitude.
	y := p.level(1, 2000)
	for i := 100; i < 1900; i++ {
		in := math.Sin(0.01*float64(2*i+2*halfbandQ-1)) + 0.3*math.Cos(0.37*float64(2*i+2*halfbandQ-1))
		if math.Abs(y[i]-in) > 1e-3 {
			t.Fatalf("level 1 sample %d = %v, want %v", i, y[i], in)
		}
	}
}

func TestFFTSize(t *testing.T) {
	tests := []struct{ n, want int }{
		{1, 16}, {16, 16}, {17, 20}, {100, 128}, {130, 160}, {4097, 5120}, {8600, 10240}, {12000, 12288},
	}
	for _, tc := range tests {
		if got := fftSize(tc.n); got != tc.want {
			t.Errorf("fftSize(%d) = %d, want %d", tc.n, got, tc.want)
		}
	}
}

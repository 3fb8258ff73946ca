package pitch

import (
	"math"
	"math/rand/v2"
	"testing"

	"taut/capture/synth"
	"taut/pitch/note"
)

func TestDifference_MatchesDirectSum(t *testing.T) {
	// Step 2 computed through d(τ) = r_t(0) + r_{t+τ}(0) − 2·r_t(τ) with an FFT must
	// equal the direct sum Σ_j (y_j − y_{j+τ})² (de Cheveigné & Kawahara 2002, eq. 6–7).
	a, err := New(Config{SampleRate: rate})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 1))
	y := make([]float64, 900)
	for i := range y {
		y[i] = rng.NormFloat64()
	}
	const t0, w, tauMax = 37, 400, 300
	a.prefixEnergy(y)
	d := make([]float64, tauMax+1)
	a.difference(d, y, t0, w, nextPow2(w+tauMax+1))
	for tau := range d {
		var want float64
		for j := t0; j < t0+w; j++ {
			diff := y[j] - y[j+tau]
			want += diff * diff
		}
		if math.Abs(d[tau]-want) > 1e-9*(1+want) {
			t.Fatalf("d(%d) = %.12g, want %.12g", tau, d[tau], want)
		}
	}
}

func TestCumulativeMeanNormalize(t *testing.T) {
	// d′(0) = 1, d′(τ) = d(τ)·τ / Σ_{j=1..τ} d(j) (de Cheveigné & Kawahara 2002, eq. 8).
	d := []float64{0, 2, 4, 0.5, 6}
	want := []float64{1, 1, 4 * 2 / 6.0, 0.5 * 3 / 6.5, 6 * 4 / 12.5}
	got := make([]float64, len(d))
	cumulativeMeanNormalize(got, d)
	for i := range want {
		if math.Abs(got[i]-want[i]) > 1e-15 {
			t.Errorf("d′(%d) = %v, want %v", i, got[i], want[i])
		}
	}
}

func TestAbsoluteThreshold(t *testing.T) {
	tests := []struct {
		name      string
		dp        []float64
		wantTau   int
		wantBelow bool
	}{
		// The first dip below 0.1 wins even though a later one is deeper (step 4).
		{"FirstDip", []float64{1, 0.9, 0.5, 0.08, 0.3, 0.7, 0.01, 0.6, 1}, 3, true},
		// Without a dip below the threshold, the global minimum.
		{"GlobalMin", []float64{1, 0.9, 0.5, 0.3, 0.6, 0.2, 0.7, 0.8, 1}, 5, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			tau, _, below := absoluteThreshold(tc.dp, 1, len(tc.dp)-2)
			if tau != tc.wantTau || below != tc.wantBelow {
				t.Errorf("absoluteThreshold = %d, %v, want %d, %v", tau, below, tc.wantTau, tc.wantBelow)
			}
		})
	}
}

func TestYIN_Sine(t *testing.T) {
	a, err := New(Config{SampleRate: rate})
	if err != nil {
		t.Fatal(err)
	}
	x := make([]float32, int(rate)/2)
	for _, f := range []float64{27.5, 110, 440, 1000, 1100, 2093, 4186, 4500} {
		synth.Sine(x, f, rate, 0.5, 0.3)
		n := min(len(x), a.regionLen(25, 4500))
		if err := a.load(x[:n]); err != nil {
			t.Fatal(err)
		}
		got, sure, err := a.yin(25, 4500)
		if err != nil {
			t.Fatal(err)
		}
		// YIN alone, with parabolic interpolation, is good to a few cents on a sine; at
		// the top of a band it sees only four to six samples per period, hence 10 cents.
		if c := note.Cents(got, f); !sure || math.Abs(c) > 10 {
			t.Errorf("YIN(%v Hz sine) = %.3f Hz (%.2f cents), sure=%v; want within 10 cents and sure", f, got, c, sure)
		}
	}
}

// TestAnalyze_YINSharpOnStiffStrings documents why the partial fit exists: on a stiff
// string the partials are stretched (f_n = n·f0·sqrt(1+B·n²), Fletcher 1964), so the
// period YIN finds is that of the whole stretched series and reads sharp of the first
// partial by several cents, while the fitted first partial is within 0.1 cent.
func TestAnalyze_YINSharpOnStiffStrings(t *testing.T) {
	a, err := New(Config{SampleRate: rate})
	if err != nil {
		t.Fatal(err)
	}
	x := make([]float32, int(rate))
	tests := []struct {
		note string
		b    float64 // derived from Young 1952, reference-values §2.2
	}{
		{"A1", 2e-4},
		{"C4", 3.5e-4},
		{"A4", 7.6e-4},
	}
	for _, tc := range tests {
		t.Run(tc.note, func(t *testing.T) {
			f0, err := note.NameHz(tc.note, note.A4)
			if err != nil {
				t.Fatal(err)
			}
			tone := synth.Tone{F0Hz: f0, B: tc.b, Partials: 16, DecayS: 2, Seed: 1}
			tone.Render(x, rate)
			var n Note
			if err := a.Analyze(&n, x, Hint{}); err != nil {
				t.Fatal(err)
			}
			want := tone.PartialHz(1)
			yinCents, fitCents := note.Cents(n.YINHz, want), note.Cents(n.FundamentalHz, want)
			t.Logf("%s B=%g: YIN %+.2f cents, fit %+.4f cents", tc.note, tc.b, yinCents, fitCents)
			if yinCents < 3 {
				t.Errorf("YIN reads %+.2f cents from the first partial, expected several cents sharp", yinCents)
			}
			if math.Abs(fitCents) > 0.1 {
				t.Errorf("fitted first partial is %+.4f cents off, want within 0.1", fitCents)
			}
		})
	}
}

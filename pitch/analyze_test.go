package pitch

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"taut/capture/synth"
	"taut/pitch/note"
)

func newAnalyzer(t testing.TB, cfg Config) *Analyzer {
	t.Helper()
	a, err := New(cfg)
	if err != nil {
		t.Fatal(err)
	}
	return a
}

func TestNew_BadConfig(t *testing.T) {
	tests := []struct {
		name string
		cfg  Config
	}{
		{"NoRate", Config{}},
		{"NaNRate", Config{SampleRate: math.NaN()}},
		{"MinAboveMax", Config{SampleRate: rate, MinHz: 500, MaxHz: 400}},
		{"NegativeMin", Config{SampleRate: rate, MinHz: -1}},
		{"MaxAboveNyquist", Config{SampleRate: 8000, MaxHz: 4000}},
		{"TooManyPartials", Config{SampleRate: rate, MaxPartials: 65}},
		{"NegativePartials", Config{SampleRate: rate, MaxPartials: -1}},
		{"TinyBuffer", Config{SampleRate: rate, MaxSamples: 100}},
		{"PositiveSilence", Config{SampleRate: rate, SilenceDB: 3}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if a, err := New(tc.cfg); err == nil {
				t.Errorf("New(%+v) = %v, want an error", tc.cfg, a.Config())
			}
		})
	}
}

func TestAnalyze_NoPitchConditions(t *testing.T) {
	a := newAnalyzer(t, Config{SampleRate: rate})
	rng := rand.New(rand.NewPCG(1, 1))
	sine := func(n int, f, amp float64) []float32 {
		x := make([]float32, n)
		synth.Sine(x, f, rate, amp, 0)
		return x
	}
	white := make([]float32, int(rate))
	for i := range white {
		white[i] = float32(0.1 * rng.NormFloat64())
	}
	brown := make([]float32, int(rate))
	var s float64
	for i := range brown {
		s = 0.999*s + 0.01*rng.NormFloat64()
		brown[i] = float32(s)
	}
	clipped := sine(int(rate), 220, 3)
	for i, v := range clipped {
		clipped[i] = max(-1, min(1, v))
	}
	withNaN := sine(int(rate), 220, 0.5)
	withNaN[1000] = float32(math.NaN())
	withInf := sine(int(rate), 220, 0.5)
	withInf[20] = float32(math.Inf(-1))
	a0 := make([]float32, int(0.15*rate)) // enough for YIN, not for six periods of A0
	synth.Tone{F0Hz: 27.5, B: 3e-4, Partials: 16}.Render(a0, rate)

	tests := []struct {
		name string
		x    []float32
		hint Hint
		want error
	}{
		{"Empty", nil, Hint{}, ErrTooShort},
		{"FewSamples", sine(1000, 440, 0.5), Hint{}, ErrTooShort},
		{"BassTooShortForPartials", a0, Hint{}, ErrTooShort},
		{"Zeros", make([]float32, int(rate)), Hint{}, ErrSilence},
		{"Quiet", sine(int(rate), 440, 1e-4), Hint{}, ErrSilence},
		{"Clipped", clipped, Hint{}, ErrClipped},
		{"NaN", withNaN, Hint{}, ErrBadSample},
		{"Inf", withInf, Hint{}, ErrBadSample},
		{"WhiteNoise", white, Hint{}, ErrNoPitch},
		{"BrownNoise", brown, Hint{}, ErrNoPitch},
		{"HintAbove", sine(int(rate), 440, 0.5), Hint{MinHz: 600, MaxHz: 700}, ErrNoPitch},
		{"HintAtOctave", harmonicTone(440), Hint{MinHz: 800, MaxHz: 1000}, ErrNoPitch},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			n := Note{F0Hz: -1}
			err := a.Analyze(&n, tc.x, tc.hint)
			if !errors.Is(err, tc.want) {
				t.Fatalf("Analyze: err = %v (f1 %.3f Hz), want %v", err, n.FundamentalHz, tc.want)
			}
			if n.F0Hz != -1 {
				t.Errorf("dst changed on error: %+v", n)
			}
		})
	}
}

func harmonicTone(f0 float64) []float32 {
	x := make([]float32, int(rate))
	synth.Tone{F0Hz: f0, Partials: 12, Seed: 2}.Render(x, rate)
	return x
}

func TestAnalyze_BadHint(t *testing.T) {
	a := newAnalyzer(t, Config{SampleRate: rate})
	var n Note
	err := a.Analyze(&n, harmonicTone(440), Hint{MinHz: 5000, MaxHz: 6000})
	if err == nil || errors.Is(err, ErrNoPitch) {
		t.Errorf("hint outside the configured range: err = %v, want a range error", err)
	}
}

func TestAnalyze_Hint(t *testing.T) {
	// A narrow hint gives the same answer as the full search.
	a := newAnalyzer(t, Config{SampleRate: rate})
	tone := synth.Tone{F0Hz: 440, B: 7.6e-4, Partials: 16, DecayS: 1.5, Seed: 4}
	x := make([]float32, int(rate))
	tone.Render(x, rate)
	for _, h := range []Hint{{}, {MinHz: 400, MaxHz: 480}, {MinHz: 430}, {MaxHz: 460}} {
		var n Note
		if err := a.Analyze(&n, x, h); err != nil {
			t.Fatalf("hint %+v: %v", h, err)
		}
		if c := note.Cents(n.FundamentalHz, tone.PartialHz(1)); math.Abs(c) > 0.01 {
			t.Errorf("hint %+v: %.4f cents off", h, c)
		}
	}
}

func TestAnalyze_Fields(t *testing.T) {
	// A steady tone: amplitudes, level and clarity are what was rendered.
	a := newAnalyzer(t, Config{SampleRate: rate})
	tone := synth.Tone{F0Hz: 220, B: 2e-4, Partials: 8, Level: 0.4, Seed: 5}
	x := make([]float32, int(rate))
	tone.Render(x, rate)
	var n Note
	n.Partials = make([]Partial, 0, 16)
	if err := a.Analyze(&n, x, Hint{}); err != nil {
		t.Fatal(err)
	}
	if len(n.Partials) != 8 {
		t.Fatalf("%d partials, want 8: %+v", len(n.Partials), n.Partials)
	}
	var power float64
	for i, p := range n.Partials {
		wantDB := 20 * math.Log10(0.4/float64(p.N)) // synth: amplitude Level/n
		if p.N != i+1 || math.Abs(p.DB-wantDB) > 0.05 {
			t.Errorf("partial %d: %+v, want N=%d and %.2f dB", i, p, i+1, wantDB)
		}
		if c := note.Cents(p.Hz, tone.PartialHz(p.N)); math.Abs(c) > 0.01 {
			t.Errorf("partial %d at %.4f Hz, %.4f cents off", p.N, p.Hz, c)
		}
		power += 0.5 * math.Pow(10, p.DB/10)
	}
	if wantDB := 10 * math.Log10(power); math.Abs(n.LevelDB-wantDB) > 0.2 {
		t.Errorf("LevelDB = %.2f, want %.2f (sum of the partials' powers)", n.LevelDB, wantDB)
	}
	if n.Clarity < 0.99 || n.Clarity > 1 {
		t.Errorf("Clarity = %.4f, want ≥ 0.99 for a clean tone", n.Clarity)
	}
	if math.Abs(n.B-2e-4)/2e-4 > 1e-3 || math.Abs(n.F0Hz-220) > 1e-4 {
		t.Errorf("F0Hz, B = %.6f, %.4e; want 220, 2e-4", n.F0Hz, n.B)
	}
	if n.UsedSamples <= 0 || n.UsedSamples > len(x) {
		t.Errorf("UsedSamples = %d", n.UsedSamples)
	}
}

func TestAnalyze_SampleRates(t *testing.T) {
	for _, r := range []float64{8000, 22050, 44100, 96000, 192000} {
		a := newAnalyzer(t, Config{SampleRate: r, MaxHz: math.Min(4500, 0.45*r), MaxSamples: 1 << 18})
		x := make([]float32, int(r))
		for _, f0 := range []float64{27.5, 261.6256, 1046.5} {
			tone := synth.Tone{F0Hz: f0, B: 4e-4, Partials: 16, FirstDB: -10, DecayS: 2, ThumpS: 0.01, Seed: 6}
			tone.Render(x, r)
			var n Note
			if err := a.Analyze(&n, x[AttackSkip(r):], Hint{}); err != nil {
				t.Errorf("%v Hz, %v Hz tone: %v", r, f0, err)
				continue
			}
			if c := note.Cents(n.FundamentalHz, tone.PartialHz(1)); math.Abs(c) > 0.1 {
				t.Errorf("%v Hz, %v Hz tone: %.4f cents off", r, f0, c)
			}
		}
	}
}

func TestAnalyze_MissingFirstPartial(t *testing.T) {
	// No energy at all at partial 1: the series still places it (octave-safe).
	a := newAnalyzer(t, Config{SampleRate: rate})
	x := make([]float32, int(rate))
	for _, f0 := range []float64{27.5, 55, 110, 220} {
		tone := synth.Tone{F0Hz: f0, B: 3e-4, Partials: 16, FirstDB: -300, DecayS: 3, Seed: 7}
		tone.Render(x, rate)
		synth.AddNoise(x, 40, rand.New(rand.NewPCG(7, 7)))
		var n Note
		if err := a.Analyze(&n, x, Hint{}); err != nil {
			t.Fatalf("%v Hz: %v", f0, err)
		}
		if c := note.Cents(n.FundamentalHz, tone.PartialHz(1)); math.Abs(c) > 0.1 {
			t.Errorf("%v Hz: %.4f cents off", f0, c)
		}
		if n.Partials[0].N != 2 {
			t.Errorf("%v Hz: first partial found is %d, want 2", f0, n.Partials[0].N)
		}
	}
}

func TestAnalyze_ZeroAllocs(t *testing.T) {
	a := newAnalyzer(t, Config{SampleRate: rate})
	var notes [][]float32
	for _, f0 := range []float64{27.5, 440, 4186} {
		x := make([]float32, int(rate))
		synth.Tone{F0Hz: f0, B: 1e-3, Partials: 16, FirstDB: -20, DecayS: 2, Seed: 8}.Render(x, rate)
		notes = append(notes, x)
	}
	var n Note
	run := func() {
		for _, x := range notes {
			if err := a.Analyze(&n, x, Hint{}); err != nil {
				t.Fatal(err)
			}
		}
	}
	run() // first calls make the FFT plans and grow dst.Partials
	if allocs := testing.AllocsPerRun(20, run); allocs != 0 {
		t.Errorf("Analyze allocates %v times per round, want 0", allocs)
	}
}

// TestAnalyze_CramerRao compares the RMS error on a plain sine in white noise with the
// Cramér–Rao bound var(f) ≥ 12·fs² / ((2π)²·η·N·(N²−1)), η = A²/(2σ²) (Kay 1993,
// Example 3.14; reference-values §6.3), for the N samples the estimate used. The
// Gaussian window costs about a factor 2.5 (±4σ); the criterion is within 2–3 times.
// In the deep bass the narrower window (±5σ, fewer than 40 periods) costs about 3.5.
func TestAnalyze_CramerRao(t *testing.T) {
	a := newAnalyzer(t, Config{SampleRate: rate})
	rng := rand.New(rand.NewPCG(9, 9))
	tests := []struct {
		hz, durS, maxRatio float64
	}{
		{440, 0.1, 3},
		{3000, 0.1, 3},
		{55, 0.3, 4},
	}
	const trials = 150
	for _, tc := range tests {
		x := make([]float32, int(tc.durS*rate))
		for _, snrDB := range []float64{20, 40} {
			var se, crb float64
			for range trials {
				ft := tc.hz * math.Exp2((rng.Float64()-0.5)/12)
				synth.Sine(x, ft, rate, 0.5, 2*math.Pi*rng.Float64())
				synth.AddNoise(x, snrDB, rng)
				var n Note
				if err := a.Analyze(&n, x, Hint{}); err != nil {
					t.Fatalf("%v Hz at %v dB: %v", ft, snrDB, err)
				}
				se += (n.FundamentalHz - ft) * (n.FundamentalHz - ft)
				nn := float64(n.UsedSamples)
				crb = rate * math.Sqrt(12/(4*math.Pi*math.Pi*math.Pow(10, snrDB/10)*nn*(nn*nn-1)))
			}
			ratio := math.Sqrt(se/trials) / crb
			t.Logf("%v Hz, %v dB: RMS error %.3g Hz, bound %.3g Hz, ratio %.2f", tc.hz, snrDB, math.Sqrt(se/trials), crb, ratio)
			if ratio < 0.8 || ratio > tc.maxRatio {
				t.Errorf("%v Hz, %v dB: RMS error is %.2f times the Cramér–Rao bound, want 1 to %v", tc.hz, snrDB, ratio, tc.maxRatio)
			}
		}
	}
}

// TestAnalyze_SineSweep: plain sines quantised to 16 bits, as an outside tool writes
// them to a WAV file, read within 0.005 cent from 25 Hz to 4.5 kHz.
func TestAnalyze_SineSweep(t *testing.T) {
	for _, r := range []float64{44100, 48000} {
		a := newAnalyzer(t, Config{SampleRate: r})
		x := make([]float32, int(r))
		var worst float64
		for f := 25.5; f < 4500; f *= 1.07 {
			synth.Sine(x, f, r, 0.5, 0)
			for i, v := range x {
				x[i] = float32(math.Round(float64(v)*32767) / 32768)
			}
			var n Note
			if err := a.Analyze(&n, x, Hint{}); err != nil {
				t.Fatalf("%v Hz at %v Hz: %v", f, r, err)
			}
			c := note.Cents(n.FundamentalHz, f)
			worst = math.Max(worst, math.Abs(c))
			if math.Abs(c) > 0.005 {
				t.Errorf("%v Hz at %v Hz: %.5f cents off", f, r, c)
			}
		}
		t.Logf("rate %v: worst %.5f cents", r, worst)
	}
}

package pitch

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"taut/capture/synth"
	"taut/pitch/note"
)

// clipFreqs are the test pitches: ISO 16 A0 = 27.5 Hz, C4 = 261.63 Hz (261.6256),
// A4 = 440 Hz and C8 = 4186 Hz (4186.009), and a round 1 kHz.
var clipFreqs = []float64{27.5, 261.6256, 440, 1000, 4186.009}

var clipRates = []float64{44100, 48000, 96000}

// fullScale renders 2 s of a sine of amplitude amp, clamped to ±1 and stored as
// encoding: "float" as is, "s16" rounded to 16 bits as a converter would (full scale
// 32767/32768), "s16-dither" with ±1 LSB triangular dither before rounding, as sox
// writes by default.
func fullScale(f, rateHz, amp float64, encoding string, rng *rand.Rand) []float32 {
	x := make([]float32, int(2*rateHz))
	synth.Sine(x, f, rateHz, 1, 0.3)
	for i, v := range x {
		y := max(-1, min(1, amp*float64(v)))
		switch encoding {
		case "s16", "s16-dither":
			q := y * 32768
			if encoding == "s16-dither" {
				q += rng.Float64() - rng.Float64()
			}
			y = max(-32768, min(32767, math.Round(q))) / 32768
		}
		x[i] = float32(y)
	}
	return x
}

func TestAnalyze_FullScaleSineIsNotClipped(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 4))
	for _, r := range clipRates {
		a := newAnalyzer(t, Config{SampleRate: r, MaxSamples: WindowLen(r, 25)})
		for _, f := range clipFreqs {
			for _, enc := range []string{"float", "s16", "s16-dither"} {
				t.Run(fmt.Sprintf("%gHz/%gkHz/%s", f, r/1000, enc), func(t *testing.T) {
					x := fullScale(f, r, 1, enc, rng)
					var n Note
					if err := a.Analyze(&n, x, Hint{}); err != nil {
						t.Fatalf("Analyze: %v", err)
					}
					if c := note.Cents(n.FundamentalHz, f); math.Abs(c) > 0.01 {
						t.Errorf("%.6f Hz, %+.4f cents off; want within 0.01", n.FundamentalHz, c)
					}
				})
			}
		}
	}
}

func TestAnalyze_HardClippedToneIsRejected(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	for _, r := range clipRates {
		a := newAnalyzer(t, Config{SampleRate: r, MaxSamples: WindowLen(r, 25)})
		for _, f := range clipFreqs {
			for _, enc := range []string{"float", "s16"} {
				// Three times full scale: flat tops over three quarters of every period.
				t.Run(fmt.Sprintf("x3/%gHz/%gkHz/%s", f, r/1000, enc), func(t *testing.T) {
					var n Note
					if err := a.Analyze(&n, fullScale(f, r, 3, enc, rng), Hint{}); !errors.Is(err, ErrClipped) {
						t.Errorf("Analyze: err = %v (%.3f Hz), want ErrClipped", err, n.FundamentalHz)
					}
				})
			}
		}
	}
	// Mild overload, 10 % (0.8 dB) over full scale, is caught where a flat top lasts
	// clipMinRun samples or more: up to the middle of the piano at these rates.
	a := newAnalyzer(t, Config{SampleRate: 48000})
	for _, f := range []float64{27.5, 261.6256, 440, 1000} {
		t.Run(fmt.Sprintf("x1.1/%gHz", f), func(t *testing.T) {
			var n Note
			if err := a.Analyze(&n, fullScale(f, 48000, 1.1, "s16", rng), Hint{}); !errors.Is(err, ErrClipped) {
				t.Errorf("Analyze: err = %v (%.3f Hz), want ErrClipped", err, n.FundamentalHz)
			}
		})
	}
}

func TestAnalyze_ClippedStringTone(t *testing.T) {
	// A stiff-string tone driven three times over full scale, and the same tone with
	// only its first peaks touching the rails (0.05 % of the samples): the first is
	// rejected, the second measured.
	a := newAnalyzer(t, Config{SampleRate: rate})
	tone := synth.Tone{F0Hz: 110, B: 1.5e-4, Partials: 16, DecayS: 0.4, Seed: 3}
	x := make([]float32, int(0.5*rate))
	tone.Render(x, rate)
	var peak float64
	for _, v := range x {
		peak = max(peak, math.Abs(float64(v)))
	}
	over := make([]float32, len(x))
	touch := make([]float32, len(x))
	for i, v := range x {
		over[i] = float32(max(-1, min(1, 3*float64(v)/peak)))
		touch[i] = float32(max(-1, min(1, 1.02*float64(v)/peak)))
	}
	var n Note
	if err := a.Analyze(&n, over, Hint{}); !errors.Is(err, ErrClipped) {
		t.Errorf("driven 3× over: err = %v, want ErrClipped", err)
	}
	if err := a.Analyze(&n, touch, Hint{}); err != nil {
		t.Errorf("peaks touching full scale: %v, want a measurement", err)
	} else if c := note.Cents(n.FundamentalHz, tone.PartialHz(1)); math.Abs(c) > 0.1 {
		t.Errorf("peaks touching full scale: %.3f cents off", c)
	}
}

func TestClipLongRun(t *testing.T) {
	// A full-scale sine at 25 Hz stays within clipFlat of its peak for
	// sqrt(2·clipFlat)/(π·25) = 0.141 ms: 6.8 samples at 48 kHz, twice that counts.
	if got := clipLongRun(48000, 25); got != 14 {
		t.Errorf("clipLongRun(48000, 25) = %d, want 14", got)
	}
}

func TestMarkClipped(t *testing.T) {
	const rate = 48000.0
	clean := make([]float32, 48000)
	synth.Sine(clean, 440, rate, 1, 0)
	clipped := make([]float32, 48000)
	synth.Sine(clipped, 440, rate, 3, 0)
	for i, v := range clipped {
		clipped[i] = max(-1, min(1, v))
	}
	tests := []struct {
		name      string
		x         []float32
		wantShare [2]float64 // share of samples marked: min, max
	}{
		{"FullScaleSine", clean, [2]float64{0, 0}},
		{"ClampedSine", clipped, [2]float64{0.5, 0.9}},
	}
	var mask []bool
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			mask = MarkClipped(mask, tc.x, rate, 25)
			n := 0
			for _, c := range mask {
				if c {
					n++
				}
			}
			share := float64(n) / float64(len(tc.x))
			if len(mask) != len(tc.x) || share < tc.wantShare[0] || share > tc.wantShare[1] {
				t.Errorf("marked %.3f of %d samples (mask len %d), want %.2f..%.2f", share, len(tc.x), len(mask), tc.wantShare[0], tc.wantShare[1])
			}
		})
	}
}

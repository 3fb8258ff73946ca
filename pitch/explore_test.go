package pitch

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"taut/capture/synth"
)

func TestExplore(t *testing.T) {
	a, err := New(Config{SampleRate: 48000})
	if err != nil {
		t.Fatal(err)
	}
	var note Note
	x := make([]float32, 48000)
	for _, f := range []float64{27.5, 55, 110, 261.63, 440, 1046.5, 2093, 4186} {
		for _, b := range []float64{1e-5, 1e-4, 1e-3, 1e-2} {
			for _, snr := range []float64{0, 40, 20} {
				tone := synth.Tone{F0Hz: f, B: b, Partials: 16, DecayS: 2, Seed: 3}
				if f < 100 {
					tone.FirstDB = -20
				}
				tone.Render(x, 48000)
				if snr > 0 {
					synth.AddNoise(x, snr, rand.New(rand.NewPCG(1, 2)))
				}
				err := a.Analyze(&note, x, Hint{})
				want := tone.PartialHz(1)
				if err != nil {
					fmt.Printf("f %7.2f B %.0e snr %2.0f: %v\n", f, b, snr, err)
					continue
				}
				fmt.Printf("f %7.2f B %.0e snr %2.0f: fund %+8.4f c  yin %+8.2f c  B %+6.2f%%  n=%d cl %.3f used %d\n", f, b, snr,
					1200*math.Log2(note.FundamentalHz/want), 1200*math.Log2(note.YINHz/want), 100*(note.B-b)/b, len(note.Partials), note.Clarity, note.UsedSamples)
			}
		}
	}
}

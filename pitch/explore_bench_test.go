package pitch

import (
	"fmt"
	"testing"

	"taut/capture/synth"
)

func BenchmarkExplore(b *testing.B) {
	for _, f := range []float64{27.5, 261.63, 4186} {
		a, _ := New(Config{SampleRate: 48000})
		x := make([]float32, 48000)
		synth.Tone{F0Hz: f, B: 1e-4, Partials: 16, DecayS: 2, Seed: 3}.Render(x, 48000)
		var note Note
		b.Run(fmt.Sprint(f), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if err := a.Analyze(&note, x, Hint{}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

package pitch_test

import (
	"fmt"

	"taut/capture/synth"
	"taut/pitch"
	"taut/pitch/note"
)

// A stiff-string tone, A2 with inharmonicity B = 1e-4 and its first partial 20 dB
// down, is found in a one-second recording and measured.
func Example() {
	const rate = 48000
	tone := synth.Tone{F0Hz: 110, B: 1e-4, Partials: 16, FirstDB: -20, DecayS: 2, ThumpS: 0.01, Seed: 1}
	x := make([]float32, rate)
	tone.Render(x, rate)

	a, err := pitch.New(pitch.Config{SampleRate: rate})
	if err != nil {
		fmt.Println(err)
		return
	}
	var n pitch.Note
	for _, s := range pitch.Segments(nil, x, rate, 25) {
		if err := a.Analyze(&n, x[s.Start:s.End], pitch.Hint{}); err != nil {
			fmt.Println(err)
			continue
		}
		midi, cents := note.Nearest(n.FundamentalHz, note.A4)
		fmt.Printf("onset %.3f s: %s %+.2f cents\n", float64(s.Onset)/rate, note.Name(midi), cents)
		fmt.Printf("first partial %.4f Hz, f0 %.4f Hz, B %.2e, %d partials\n",
			n.FundamentalHz, n.F0Hz, n.B, len(n.Partials))
		fmt.Printf("YIN alone: %+.1f cents\n", note.Cents(n.YINHz, n.FundamentalHz))
	}
	// Output:
	// onset 0.000 s: A2 +0.09 cents
	// first partial 110.0055 Hz, f0 110.0000 Hz, B 1.00e-04, 16 partials
	// YIN alone: +8.0 cents
}

// The least-squares fit on the eight measured partials of an A4 piano string
// (University of Alabama in Huntsville piano pages, reference-values §2.2).
func ExampleFitPartials() {
	hz := []float64{440.0, 880.9, 1323.9, 1769.8, 2219.7, 2674.6, 3135.4, 3603.1}
	ps := make([]pitch.Partial, len(hz))
	for i, f := range hz {
		ps[i] = pitch.Partial{N: i + 1, Hz: f}
	}
	f0, b, err := pitch.FitPartials(ps)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("f0 %.2f Hz, B %.2e\n", f0, b)
	// Output:
	// f0 439.80 Hz, B 7.61e-04
}

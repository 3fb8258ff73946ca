package pitch

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"taut/capture/synth"
)

func TestDebugRandom(t *testing.T) {
	a, _ := New(Config{SampleRate: 48000})
	x := make([]float32, 48000)
	rng := rand.New(rand.NewPCG(42, 1))
	fails, errs := 0, 0
	for i := 0; i < 1500; i++ {
		f0 := 27.5 * math.Exp2(rng.Float64()*7.25)
		b := math.Pow(10, -5+rng.Float64()*3.7)
		tone := synth.Tone{F0Hz: f0, B: b, Partials: 1 + rng.IntN(16), FirstDB: -40 * rng.Float64(),
			Rolloff: 0.5 + 1.5*rng.Float64(), DecayS: 0.2 + 3*rng.Float64(), DecayGrowS: 0.2 * rng.Float64(),
			ThumpS: 0.02 * rng.Float64(), Seed: uint64(i)}
		tone.Render(x, 48000)
		snr := 10 + 50*rng.Float64()
		synth.AddNoise(x, snr, rng)
		segs := Segments(nil, x, 48000, 25)
		if len(segs) != 1 { fmt.Printf("case %d: %d segs\n", i, len(segs)); continue }
		var n Note
		err := a.Analyze(&n, x[segs[0].Start:segs[0].End], Hint{})
		if err != nil { errs++; if errs < 15 { fmt.Printf("case %d f0 %.1f B %.1e N %d first %.0f roll %.1f decay %.2f snr %.0f: %v\n", i, f0, b, tone.Partials, tone.FirstDB, tone.Rolloff, tone.DecayS, snr, err) }; continue }
		c := 1200 * math.Log2(n.FundamentalHz/tone.PartialHz(1))
		if math.Abs(c) > 0.5 && !(tone.Partials <= 2 && tone.FirstDB < -15) {
			fails++
			if fails < 20 { fmt.Printf("case %d f0 %.1f B %.1e N %d first %.0f roll %.1f decay %.2f snr %.0f: %.2f cents (got %.2f, nparts %d)\n", i, f0, b, tone.Partials, tone.FirstDB, tone.Rolloff, tone.DecayS, snr, c, n.FundamentalHz, len(n.Partials)) }
		}
	}
	fmt.Println("fails", fails, "errs", errs)
}

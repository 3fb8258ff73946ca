// Package synth renders deterministic stiff-string tones for tests, benchmarks and the
// demo: partials at f_n = n·f0·sqrt(1 + B·n²) (Fletcher 1964), each decaying
// exponentially, with seeded random phases, an optional noise thump at the onset and
// optional white noise at a chosen signal-to-noise ratio.
package synth

import (
	"math"
	"math/rand/v2"
)

// Tone describes one struck or plucked string.
type Tone struct {
	F0Hz       float64 // ideal (flexible-string) fundamental
	B          float64 // inharmonicity coefficient
	Partials   int     // partials to render (those above 0.45·rate are skipped); 0 means 12
	Level      float64 // peak amplitude of the loudest partial before decay; 0 means 0.3
	Rolloff    float64 // partial n has amplitude 1/n^Rolloff; 0 means 1
	FirstDB    float64 // extra gain of partial 1 in dB (e.g. -20 for a weak piano-bass first partial)
	DecayS     float64 // time constant of partial 1; 0 means no decay
	DecayGrowS float64 // partial n decays with DecayS/(1+(n-1)·DecayGrowS); 0 means all alike
	ThumpS     float64 // length of a decaying noise burst at the onset; 0 means none
	ThumpLevel float64 // peak amplitude of the thump; 0 means Level
	Seed       uint64  // phases and thump noise
}

// PartialHz returns the frequency of partial n of the tone.
func (t Tone) PartialHz(n int) float64 {
	fn := float64(n)
	return fn * t.F0Hz * math.Sqrt(1+t.B*fn*fn)
}

// Render writes the tone into dst (overwriting it), sampled at rateHz, starting at the onset.
func (t Tone) Render(dst []float32, rateHz float64) {
	clear(dst)
	t.Add(dst, rateHz)
}

// Add adds the tone into dst, sampled at rateHz, starting at dst[0].
func (t Tone) Add(dst []float32, rateHz float64) {
	rng := rand.New(rand.NewPCG(t.Seed, 0x5eed))
	level := orDefault(t.Level, 0.3)
	rolloff := orDefault(t.Rolloff, 1)
	n := t.Partials
	if n == 0 {
		n = 12
	}
	for k := 1; k <= n; k++ {
		f := t.PartialHz(k)
		phase := rng.Float64() * 2 * math.Pi
		if f >= 0.45*rateHz {
			continue
		}
		amp := level / math.Pow(float64(k), rolloff)
		if k == 1 {
			amp *= math.Pow(10, t.FirstDB/20)
		}
		addPartial(dst, f/rateHz, phase, amp, t.decayPerSample(k, rateHz))
	}
	if t.ThumpS > 0 {
		addThump(dst, rng, orDefault(t.ThumpLevel, level), t.ThumpS*rateHz)
	}
}

func (t Tone) decayPerSample(k int, rateHz float64) float64 {
	if t.DecayS <= 0 {
		return 1
	}
	tau := t.DecayS / (1 + float64(k-1)*t.DecayGrowS)
	return math.Exp(-1 / (tau * rateHz))
}

// addPartial adds amp·d^i·sin(2π·cycles·i + phase) using a rotating phasor, renormalised
// every block so rounding does not accumulate over long tones.
func addPartial(dst []float32, cycles, phase, amp, decay float64) {
	step := complex(math.Cos(2*math.Pi*cycles), math.Sin(2*math.Pi*cycles))
	for start := 0; start < len(dst); start += 4096 {
		i0 := float64(start)
		z := complex(math.Cos(2*math.Pi*cycles*i0+phase), math.Sin(2*math.Pi*cycles*i0+phase))
		a := amp * math.Pow(decay, i0)
		end := min(start+4096, len(dst))
		for i := start; i < end; i++ {
			dst[i] += float32(a * imag(z))
			z *= step
			a *= decay
		}
	}
}

func addThump(dst []float32, rng *rand.Rand, level, lengthSamples float64) {
	d := math.Exp(-3 / lengthSamples)
	a := level
	for i := 0; i < len(dst) && float64(i) < 3*lengthSamples; i++ {
		dst[i] += float32(a * rng.NormFloat64() / 3)
		a *= d
	}
}

// AddNoise adds white Gaussian noise to x so that the ratio of x's mean power (before
// the noise) to the noise power is snrDB. A seeded rng keeps tests repeatable.
func AddNoise(x []float32, snrDB float64, rng *rand.Rand) {
	var p float64
	for _, v := range x {
		p += float64(v) * float64(v)
	}
	if len(x) == 0 || p == 0 {
		return
	}
	sigma := math.Sqrt(p / float64(len(x)) / math.Pow(10, snrDB/10))
	for i := range x {
		x[i] += float32(sigma * rng.NormFloat64())
	}
}

// Sine writes a plain sinusoid of the given frequency, amplitude and phase into dst.
func Sine(dst []float32, freqHz, rateHz, amp, phase float64) {
	clear(dst)
	addPartial(dst, freqHz/rateHz, phase, amp, 1)
}

func orDefault(v, def float64) float64 {
	if v == 0 {
		return def
	}
	return v
}

package main

import (
	"fmt"
	"math"
	"math/rand/v2"

	"taut/capture/synth"
	"taut/pitch/note"
)

// Corpus layout. Every tone is a stiff string struck or plucked LeadS seconds into the
// file (the -lead flag; default defaultLeadS) and left to ring for toneS seconds, as a
// recording started a moment before the note would be.
const (
	defaultLeadS = 0.3
	toneS        = 2.0
	peakLevel    = 0.5 // tones are scaled to this peak before noise is added
	maxDetuneC   = 30  // cents either side of the 12-TET key
	minOffGridC  = 1   // no first partial closer than this to a 12-TET key
	firstMIDI    = 21  // A0
	lastMIDI     = 108 // C8
)

// snrClean marks a tone without added noise.
var snrClean = math.Inf(1)

// corpusSNRs are the noise conditions, in dB; +Inf means clean.
var corpusSNRs = []float64{snrClean, 40, 20}

// family is the kind of string a tone imitates.
type family string

const (
	piano family = "piano"
	harp  family = "harp"
)

// testCase is one generated tone with its ground truth.
type testCase struct {
	Name      string  // e.g. "piano-A0+12c-40dB"
	LeadS     float64 // seconds before the onset
	MIDI      int     // the key it was detuned from
	Family    family
	Detune    float64 // cents
	SNRdB     float64 // +Inf for clean
	Tone      synth.Tone
	NoiseSeed uint64
	TruthHz   float64 // the true first partial, f0·sqrt(1+B)
}

// register names the frequency band a tone's first partial falls in.
func (c testCase) register() string { return registerOf(c.TruthHz) }

// Register bounds (first partial): bass below 110 Hz, treble above 1 kHz.
const (
	bassBelowHz   = 110
	trebleAboveHz = 1000
)

var registers = []string{"bass", "middle", "treble"}

func registerOf(hz float64) string {
	switch {
	case hz < bassBelowHz:
		return "bass"
	case hz > trebleAboveHz:
		return "treble"
	}
	return "middle"
}

// buildCorpus returns the tones for keys A0..C8 every keyStep keys (C8 always
// included), each as a piano-like and a harp-like string, each clean and at every SNR.
// Detune, B jitter, phases and noise all come from seed, so the corpus is identical on
// every run with the same arguments.
func buildCorpus(keyStep int, seed uint64, leadS float64) []testCase {
	rng := rand.New(rand.NewPCG(seed, 0xc0ffee))
	var out []testCase
	for _, midi := range corpusKeys(keyStep) {
		for _, fam := range []family{piano, harp} {
			detune, tone := offGridTone(fam, midi, rng)
			for _, snr := range corpusSNRs {
				out = append(out, testCase{
					Name:      caseName(fam, midi, detune, snr),
					LeadS:     leadS,
					MIDI:      midi,
					Family:    fam,
					Detune:    detune,
					SNRdB:     snr,
					Tone:      tone,
					NoiseSeed: rng.Uint64(),
					TruthHz:   tone.PartialHz(1),
				})
			}
		}
	}
	return out
}

// offGridTone draws a detune within ±maxDetuneC and a string for it, drawing again
// while the first partial lies within minOffGridC of any 12-TET key.
func offGridTone(fam family, midi int, rng *rand.Rand) (float64, synth.Tone) {
	for {
		detune := (2*rng.Float64() - 1) * maxDetuneC
		tone := stringTone(fam, midi, detune, rng)
		if _, off := note.Nearest(tone.PartialHz(1), note.A4); math.Abs(off) >= minOffGridC {
			return detune, tone
		}
	}
}

// corpusKeys lists MIDI keys from A0 every step keys, ending with C8.
func corpusKeys(step int) []int {
	var keys []int
	for m := firstMIDI; m <= lastMIDI; m += step {
		keys = append(keys, m)
	}
	if keys[len(keys)-1] != lastMIDI {
		keys = append(keys, lastMIDI)
	}
	return keys
}

func caseName(fam family, midi int, detune, snr float64) string {
	noise := "clean"
	if !math.IsInf(snr, 1) {
		noise = fmt.Sprintf("%gdB", snr)
	}
	return fmt.Sprintf("%s-%s%+.0fc-%s", fam, note.Name(midi), detune, noise)
}

// stringTone describes one string. Piano: B about 1e-4 at C3 rising log-linearly to
// 1e-2 at C8 and to 5e-4 at A0, jittered ±25 %, with the first partial 20 dB down below
// 110 Hz. Harp: B log-uniform in 1e-5..1e-4, strong first partial, softer upper partials.
// Decay shortens from 4 s at A0 to 0.5 s at C8; every tone starts with a short noise thump.
func stringTone(fam family, midi int, detune float64, rng *rand.Rand) synth.Tone {
	f0 := note.Hz(midi, note.A4) * math.Pow(2, detune/1200)
	t := synth.Tone{
		F0Hz:       f0,
		Partials:   20,
		Level:      0.3,
		DecayS:     4 * math.Pow(0.5/4, float64(midi-firstMIDI)/float64(lastMIDI-firstMIDI)),
		DecayGrowS: 0.15,
		ThumpS:     0.008,
		ThumpLevel: 0.15,
		Seed:       rng.Uint64(),
	}
	switch fam {
	case piano:
		t.B = pianoB(midi) * math.Pow(1.25, 2*rng.Float64()-1)
		t.Rolloff = 1
		if f0 < bassBelowHz {
			t.FirstDB = -20
		}
	case harp:
		t.B = math.Pow(10, -5+rng.Float64())
		t.Rolloff = 1.5
	}
	return t
}

// pianoB is a smooth stand-in for a piano's inharmonicity curve. Its shape follows
// Schuck & Young 1943 (reference-values §2.2: least in the two octaves below middle C,
// rising sharply in the treble and less so in the bass); the end values are chosen for
// the benchmark, not measured (A4 gives 5e-4 against 7.6e-4 on the §2.2 grand).
func pianoB(midi int) float64 {
	const c3 = 48
	if midi >= c3 {
		return math.Pow(10, -4+2*float64(midi-c3)/float64(lastMIDI-c3))
	}
	return math.Pow(10, -4+math.Log10(5)*float64(c3-midi)/float64(c3-firstMIDI))
}

// durS is the length of the case's file in seconds.
func (c testCase) durS() float64 { return c.LeadS + toneS }

// render writes the case's samples (lead silence, tone, noise) into a new slice.
func (c testCase) render(rateHz float64) []float32 {
	lead := int(c.LeadS * rateHz)
	x := make([]float32, lead+int(toneS*rateHz))
	c.Tone.Render(x[lead:], rateHz)
	normalizePeak(x, peakLevel)
	if !math.IsInf(c.SNRdB, 1) {
		synth.AddNoise(x, c.SNRdB, rand.New(rand.NewPCG(c.NoiseSeed, 1)))
	}
	return x
}

func normalizePeak(x []float32, peak float64) {
	var m float64
	for _, v := range x {
		m = max(m, math.Abs(float64(v)))
	}
	if m == 0 {
		return
	}
	g := float32(peak / m)
	for i := range x {
		x[i] *= g
	}
}

// keyHz is the 12-TET frequency of a MIDI key at A4 = 440 Hz.
func keyHz(midi int) float64 { return note.Hz(midi, note.A4) }

// Command genfixtures writes the WAV fixtures under testdata/audio/: small synthetic
// recordings of invented harp and piano strings, rendered with taut/capture/synth
// (stiff-string partials f_n = n·f0·sqrt(1 + B·n²), Fletcher 1964) and written with
// capture.WriteWAVFile. Everything is seeded, so a run reproduces the files.
//
//	go run ./capture/internal/genfixtures -out testdata/audio
//
// testdata/README.md documents each file; TestFixturesUpToDate checks that the files
// in the tree still match this program.
package main

import (
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"

	"taut/capture"
	"taut/capture/synth"
	"taut/pitch/note"
)

// fixture is one file: its name, format, encoding and how to render its samples.
type fixture struct {
	name     string
	format   capture.Format
	encoding string
	render   func(f capture.Format) []float32
}

// Common shapes of the invented instruments.
var (
	// harp: a nylon lever-harp string plucked mid-length: little inharmonicity, a
	// bright attack that dies quickly in the upper partials, a short finger noise.
	harp = synth.Tone{Partials: 14, Level: 0.25, Rolloff: 1.1, DecayS: 1.4, DecayGrowS: 0.35, ThumpS: 0.004, ThumpLevel: 0.05}
	// piano: an upright's wound bass string struck by a hammer: stiffer, many
	// partials, partial 1 well below partial 2.
	piano = synth.Tone{Partials: 24, Level: 0.2, Rolloff: 0.6, DecayS: 3, DecayGrowS: 0.15, ThumpS: 0.008, ThumpLevel: 0.08}
)

// leadS is the quiet lead-in before the first note, as a recording has.
const leadS = 0.1

func fixtures() []fixture {
	return []fixture{
		{"harp-phrase.wav", capture.Format{SampleRate: 44100, Channels: 1}, capture.EncS16, harpPhrase},
		{"harp-c4-pluck.wav", capture.Format{SampleRate: 48000, Channels: 1}, capture.EncS16, func(f capture.Format) []float32 {
			return notes(f, 1.2, []played{{harp, "C4", 0, 2e-5}}, 11)
		}},
		{"harp-three-notes.wav", capture.Format{SampleRate: 48000, Channels: 1}, capture.EncS16, func(f capture.Format) []float32 {
			return notes(f, 0.7, []played{{harp, "G3", 0, 3e-5}, {harp, "B3", 0, 2.5e-5}, {harp, "D4", 0, 2e-5}}, 12)
		}},
		{"piano-a2-weak-first.wav", capture.Format{SampleRate: 48000, Channels: 1}, capture.EncS16, func(f capture.Format) []float32 {
			p := piano
			p.FirstDB = -20
			return notes(f, 1.9, []played{{p, "A2", 0, 1.5e-4}}, 13)
		}},
		{"stereo-24bit.wav", capture.Format{SampleRate: 48000, Channels: 2}, capture.EncS24, stereoPair},
		{"float-a4.wav", capture.Format{SampleRate: 48000, Channels: 1}, capture.EncF32, func(f capture.Format) []float32 {
			p := piano
			p.Partials, p.DecayS = 12, 1.5
			return notes(f, 0.9, []played{{p, "A4", 0, 4e-4}}, 14)
		}},
	}
}

// played is one note of a fixture: a tone shape, the 12-TET note it is tuned near
// (A4 = 440 Hz, ISO 16), its mistuning in cents and its inharmonicity B.
type played struct {
	shape synth.Tone
	name  string
	cents float64
	b     float64
}

// f0 returns the ideal f0 that puts the first partial at the note plus cents.
func (p played) f0() float64 {
	f1 := mustHz(p.name) * math.Exp2(p.cents/1200)
	return f1 / math.Sqrt(1+p.b)
}

func mustHz(name string) float64 {
	hz, err := note.NameHz(name, note.A4)
	if err != nil {
		panic(err)
	}
	return hz
}

// notes renders each note in a slot of slotS seconds after the lead-in, damped with
// a 30 ms fade at the end of its slot (a harpist's hand), over a −80 dBFS noise floor.
func notes(f capture.Format, slotS float64, ps []played, seed uint64) []float32 {
	rate := float64(f.SampleRate)
	lead, slot := int(leadS*rate), int(slotS*rate)
	out := make([]float32, lead+len(ps)*slot)
	buf := make([]float32, slot)
	for i, p := range ps {
		t := p.shape
		t.F0Hz, t.B, t.Seed = p.f0(), p.b, seed*100+uint64(i)
		t.Render(buf, rate)
		fade := int(0.03 * rate)
		for j := range fade {
			buf[slot-fade+j] *= float32(1 - float64(j+1)/float64(fade))
		}
		for j, v := range buf {
			out[lead+i*slot+j] += v
		}
	}
	addFloor(out, seed)
	return out
}

// addFloor adds white noise at −80 dBFS RMS, a quiet room through a good microphone.
func addFloor(x []float32, seed uint64) {
	rng := rand.New(rand.NewPCG(seed, 0xf1007))
	for i := range x {
		x[i] += float32(1e-4 * rng.NormFloat64())
	}
}

// harpPhrase is the README's first example: six notes of an invented 36-string lever
// harp, two of them deliberately out of tune so the cents column has something to say.
func harpPhrase(f capture.Format) []float32 {
	return notes(f, 0.75, []played{
		{harp, "C4", 0, 2e-5},
		{harp, "E4", +4, 2e-5},
		{harp, "G4", 0, 1.5e-5},
		{harp, "C5", -7, 1e-5},
		{harp, "A3", 0, 3e-5},
		{harp, "F3", +2, 4e-5},
	}, 10)
}

// stereoPair puts E3 on the left channel and B3 on the right, as two contact pickups
// on neighbouring strings would hear them.
func stereoPair(f capture.Format) []float32 {
	left := notes(capture.Format{SampleRate: f.SampleRate, Channels: 1}, 0.8, []played{{harp, "E3", 0, 4e-5}}, 15)
	right := notes(capture.Format{SampleRate: f.SampleRate, Channels: 1}, 0.8, []played{{harp, "B3", 0, 3e-5}}, 16)
	out := make([]float32, 2*len(left))
	for i := range left {
		out[2*i], out[2*i+1] = left[i], right[i]
	}
	return out
}

func main() {
	out := flag.String("out", "testdata/audio", "directory to write the fixtures into")
	flag.Parse()
	if err := run(*out); err != nil {
		fmt.Fprintln(os.Stderr, "genfixtures:", err)
		os.Exit(1)
	}
}

func run(dir string) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	for _, fx := range fixtures() {
		path := filepath.Join(dir, fx.name)
		if err := capture.WriteWAVFile(path, fx.format, fx.encoding, fx.render(fx.format)); err != nil {
			return err
		}
		st, err := os.Stat(path)
		if err != nil {
			return err
		}
		fmt.Printf("%-26s %6d bytes\n", path, st.Size())
	}
	return nil
}

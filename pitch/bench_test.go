package pitch

import (
	"testing"

	"taut/capture/synth"
	"taut/pitch/note"
)

// benchNotes are 1 s notes at 48 kHz: bass, middle and treble, with B near the values
// of reference-values §2.2 (derived from Young 1952) and a first partial 20 dB down in
// the bass.
var benchNotes = []struct {
	name    string
	b       float64
	firstDB float64
	decayS  float64
}{
	{"A0", 3e-4, -20, 3},
	{"A1", 2e-4, -20, 3},
	{"C4", 3.5e-4, 0, 1.5},
	{"A4", 7.6e-4, 0, 1.5},
	{"C7", 7.8e-3, 0, 0.4},
	{"C8", 2.2e-2, 0, 0.4},
}

func renderBenchNote(b *testing.B, name string, bi, firstDB, decayS float64) []float32 {
	b.Helper()
	f0, err := note.NameHz(name, note.A4)
	if err != nil {
		b.Fatal(err)
	}
	x := make([]float32, int(rate))
	synth.Tone{F0Hz: f0, B: bi, Partials: 16, FirstDB: firstDB, DecayS: decayS,
		DecayGrowS: 0.1, ThumpS: 0.01, Seed: 1}.Render(x, rate)
	return x
}

// BenchmarkAnalyze measures Analyze on the analysis window of a 1 s note (after the
// attack), with no hint: the full 25–4500 Hz search. audio-s/cpu-s counts the whole
// second of audio per call, measured in process CPU time.
func BenchmarkAnalyze(b *testing.B) {
	for _, bn := range benchNotes {
		x := renderBenchNote(b, bn.name, bn.b, bn.firstDB, bn.decayS)
		a, err := New(Config{SampleRate: rate})
		if err != nil {
			b.Fatal(err)
		}
		win := x[AttackSkip(rate):]
		var n Note
		b.Run(bn.name, func(b *testing.B) {
			b.ReportAllocs()
			cpu := startCPU()
			for b.Loop() {
				if err := a.Analyze(&n, win, Hint{}); err != nil {
					b.Fatal(err)
				}
			}
			reportRealtime(b, cpu, float64(len(x))/rate)
		})
	}
}

// BenchmarkMeasure is what `taut measure` does per note: Segments on the 1 s
// recording, then Analyze on the window it picks.
func BenchmarkMeasure(b *testing.B) {
	for _, bn := range benchNotes {
		x := renderBenchNote(b, bn.name, bn.b, bn.firstDB, bn.decayS)
		a, err := New(Config{SampleRate: rate})
		if err != nil {
			b.Fatal(err)
		}
		var n Note
		segs := make([]Segment, 0, 4)
		b.Run(bn.name, func(b *testing.B) {
			b.ReportAllocs()
			cpu := startCPU()
			for b.Loop() {
				segs = Segments(segs[:0], x, rate, 25)
				if len(segs) != 1 {
					b.Fatalf("segments %+v, want 1", segs)
				}
				if err := a.Analyze(&n, x[segs[0].Start:segs[0].End], Hint{}); err != nil {
					b.Fatal(err)
				}
			}
			reportRealtime(b, cpu, float64(len(x))/rate)
		})
	}
}

// BenchmarkOnsetDetector_Push streams 1 s of a note in 10 ms blocks.
func BenchmarkOnsetDetector_Push(b *testing.B) {
	x := renderBenchNote(b, "A4", 7.6e-4, 0, 1.5)
	d := NewOnsetDetector(rate)
	b.ReportAllocs()
	cpu := startCPU()
	for b.Loop() {
		for i := 0; i < len(x); i += 480 {
			d.Push(x[i : i+480])
		}
	}
	reportRealtime(b, cpu, float64(len(x))/rate)
}

func reportRealtime(b *testing.B, cpu cpuClock, audioS float64) {
	if s := cpu.seconds(); s > 0 {
		b.ReportMetric(audioS*float64(b.N)/s, "audio-s/cpu-s")
	}
}

package monitor

import (
	"context"
	"io"
	"math"
	"runtime"
	"testing"

	"taut/capture"
	"taut/monitor/instrument"
	"taut/monitor/tension"
	"taut/pitch"
	"taut/pitch/note"
)

// pianoConfig is an invented 230-string piano: A0..C8, 8 single strings, 18
// bichords, 62 trichords. Plain music wire throughout (lengths capped at 1.4 m), which
// is enough for the reading path. Unison strings are detuned by 12 cents from each
// other so that attribution by prediction can tell them apart (real unisons need a
// channel or the exciter).
func pianoConfig(t testing.TB) *instrument.Config {
	var strs []instrument.String
	wire := tension.Builtin()["music_wire"]
	for midi := 21; midi <= 108; midi++ {
		k := midi - 21
		n := 3
		switch {
		case k < 8:
			n = 1
		case k < 26:
			n = 2
		}
		f := note.Hz(midi, note.A4)
		for u := range n {
			offset := 12 * (float64(u) - float64(n-1)/2)
			strs = append(strs, instrument.String{
				ID: note.Name(midi) + string(rune('a'+u)), Note: note.Name(midi), CentsOffset: offset,
				TargetHz: f * math.Exp2(offset/1200),
				Phys:     tension.String{LengthM: math.Min(195/f, 1.4), Core: tension.Layer{Material: wire, DiameterM: 1e-3}},
			})
		}
	}
	if len(strs) != 230 {
		t.Fatalf("%d strings, want 230", len(strs))
	}
	return testConfig(t, strs...)
}

type countJournal struct{ seq uint64 }

func (j *countJournal) Append(e *Entry) error { j.seq++; e.Seq = j.seq; return nil }

type nopSink struct{}

func (nopSink) Publish(Entry) {}

type idleSource struct{}

func (idleSource) Format() capture.Format                       { return capture.Format{SampleRate: 48000, Channels: 1} }
func (idleSource) Read(context.Context, []float32) (int, error) { return 0, io.EOF }

// BenchmarkMonitor_pianoNight feeds a simulated night of a 230-string piano, a reading
// per string every ten minutes, through the reading path after pitch analysis:
// attribution by prediction among all 230 strings, tension, drift fit, state and
// entries to a journal and a sink. One op is one reading; -benchtime=11040x is one
// eight-hour night. peak-heap-MB is the largest HeapInuse seen, sampled every round.
func BenchmarkMonitor_pianoNight(b *testing.B) {
	cfg := pianoConfig(b)
	m, err := New(Options{Config: cfg, Source: benchSource{}, Journal: &countJournal{}, Sinks: []Sink{nopSink{}}})
	if err != nil {
		b.Fatal(err)
	}
	l := m.lanes[0]
	l.noteCands = append(l.noteCands[:0], l.cands...)
	strs := cfg.Instrument.Strings
	m.note.Partials = make([]pitch.Partial, 12)
	var ms runtime.MemStats
	peak := uint64(0)
	b.ReportAllocs()
	b.ResetTimer()
	for i := range b.N {
		k, round := i%len(strs), i/len(strs)
		tS := float64(round)*600 + float64(k)*600/float64(len(strs))
		// New strings sag toward a settled pitch: 6 cents over the first hours.
		cents := -6 * (1 - math.Exp(-tS/7200))
		fillNote(&m.note, &strs[k], cents)
		m.heard(l, tS)
		if k == len(strs)-1 {
			b.StopTimer()
			runtime.ReadMemStats(&ms)
			peak = max(peak, ms.HeapInuse)
			b.StartTimer()
		}
	}
	b.StopTimer()
	runtime.ReadMemStats(&ms)
	b.ReportMetric(float64(max(peak, ms.HeapInuse))/(1<<20), "peak-heap-MB")
	b.ReportMetric(float64(m.Stats().Readings)/float64(b.N), "readings/op")
}

// fillNote writes what the analyser would report for string s at cents from target.
func fillNote(n *pitch.Note, s *instrument.String, cents float64) {
	f0 := s.TargetHz * math.Exp2(cents/1200)
	b := s.Phys.Inharmonicity(s.Phys.Tension(f0))
	n.F0Hz, n.B, n.Clarity = f0, b, 0.95
	n.FundamentalHz = f0 * math.Sqrt(1+b)
	for i := range n.Partials {
		k := float64(i + 1)
		n.Partials[i] = pitch.Partial{N: i + 1, Hz: k * f0 * math.Sqrt(1+b*k*k), DB: -6 * k}
	}
}

type benchSource struct{ idleSource }

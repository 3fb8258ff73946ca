package monitor_test

import (
	"bytes"
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
	"time"

	"github.com/rs/zerolog"

	"taut/capture"
	"taut/capture/synth"
	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/monitortest"
)

const testRate = 16000

// tone renders 1.5 s of string id of the bench config at its target, offset by cents.
func tone(t testing.TB, cfg *instrument.Config, id string, cents float64) []float32 {
	t.Helper()
	for _, s := range cfg.Instrument.Strings {
		if s.ID == id {
			f0 := s.TargetHz * math.Exp2(cents/1200)
			x := make([]float32, testRate*3/2)
			synth.Tone{F0Hz: f0, B: s.Phys.Inharmonicity(s.Phys.Tension(f0)), Partials: 12, Level: 0.25,
				DecayS: 1.2, Seed: 7}.Render(x, testRate)
			return x
		}
	}
	t.Fatalf("no string %s", id)
	return nil
}

func seconds(s float64) []float32 { return make([]float32, int(s*testRate)) }

// runScript runs the monitor over a scripted source and returns the journal and Run's error.
func runScript(t *testing.T, cfg *instrument.Config, log zerolog.Logger, steps ...monitortest.Step) (*monitortest.Journal, *monitor.Monitor, error) {
	t.Helper()
	j := &monitortest.Journal{}
	m, err := monitor.New(monitor.Options{Config: cfg, Journal: j, Logger: log, StartTime: monitortest.Evening,
		Source: &monitortest.Script{F: capture.Format{SampleRate: testRate, Channels: 1}, Steps: steps}})
	if err != nil {
		t.Fatal(err)
	}
	err = m.Run(context.Background())
	return j, m, err
}

func readings(entries []monitor.Entry) []string {
	var ids []string
	for _, e := range entries {
		if e.Kind == monitor.KindReading {
			ids = append(ids, e.String)
		}
	}
	return ids
}

// TestMonitor_badInput feeds troublesome audio followed by a good note of B3: the
// trouble gives no reading, and the good note is still read.
func TestMonitor_badInput(t *testing.T) {
	cfg := loadBench(t)
	rng := rand.New(rand.NewPCG(4, 4))
	noise := seconds(5)
	for i := range noise {
		noise[i] = float32(0.1 * rng.NormFloat64())
	}
	clipped := tone(t, cfg, "D4", 0)
	for i := range clipped {
		clipped[i] = float32(math.Max(-1, math.Min(1, 8*float64(clipped[i]))))
	}
	// A clean sine whose peaks sit exactly at full scale is not clipping (2.8 % of its
	// samples are at or above 0.999, which a plain level count once took for clipping):
	// it must be read.
	fullScale := seconds(1.5)
	for _, s := range cfg.Instrument.Strings {
		if s.ID == "D4" {
			synth.Sine(fullScale, s.TargetHz, testRate, 1, 0)
		}
	}
	offset := tone(t, cfg, "D4", 0)
	for i := range offset {
		offset[i] += 0.3
	}
	tests := []struct {
		name    string
		trouble []float32
		want    []string // readings, in order
		wantLog string
		noPitch bool
	}{
		{"Silence", seconds(10), []string{"B3"}, "", false},
		{"NoiseOnly", noise, []string{"B3"}, "", false},
		{"Clipping", clipped, []string{"B3"}, "clipped", true},
		{"FullScaleClean", fullScale, []string{"D4", "B3"}, "", false},
		{"DCOffset", offset, []string{"D4", "B3"}, "", false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var logs bytes.Buffer
			log := zerolog.New(&logs)
			j, m, err := runScript(t, cfg, log, monitortest.Step{Samples: seconds(1)},
				monitortest.Step{Samples: tc.trouble}, monitortest.Step{Samples: seconds(1)},
				monitortest.Step{Samples: tone(t, cfg, "B3", 0)}, monitortest.Step{Samples: seconds(1)})
			if err != nil {
				t.Fatal(err)
			}
			entries := j.Entries()
			if got := readings(entries); strings.Join(got, ",") != strings.Join(tc.want, ",") {
				t.Errorf("readings %v, want %v", got, tc.want)
			}
			if n := len(monitortest.Filter(entries, func(e *monitor.Entry) bool { return e.Kind == monitor.KindUnmatched })); n > 0 {
				t.Errorf("%d unmatched entries from %s", n, tc.name)
			}
			if tc.noPitch && m.Stats().NoPitch == 0 {
				t.Errorf("no onset counted without pitch")
			}
			if tc.wantLog != "" && !strings.Contains(logs.String(), tc.wantLog) {
				t.Errorf("log %q does not mention %q", logs.String(), tc.wantLog)
			}
		})
	}
}

// TestMonitor_malformedPCM: raw PCM that ends inside a frame ends the run with an error
// naming the problem, after the notes before it are journaled, a fault and a stop.
func TestMonitor_malformedPCM(t *testing.T) {
	cfg := loadBench(t)
	var pcm bytes.Buffer
	for _, v := range append(tone(t, cfg, "E4", 0), seconds(0.5)...) {
		q := int16(v * 32767)
		pcm.WriteByte(byte(q))
		pcm.WriteByte(byte(q >> 8))
	}
	pcm.WriteByte(0x7f) // half a sample
	src, err := capture.NewPCMSource(&pcm, "s16le", capture.Format{SampleRate: testRate, Channels: 1})
	if err != nil {
		t.Fatal(err)
	}
	j := &monitortest.Journal{}
	m, err := monitor.New(monitor.Options{Config: cfg, Source: src, Journal: j, Logger: testLogger(t)})
	if err != nil {
		t.Fatal(err)
	}
	err = m.Run(context.Background())
	if !errors.Is(err, capture.ErrTruncated) {
		t.Fatalf("Run: %v, want an error wrapping capture.ErrTruncated", err)
	}
	entries := j.Entries()
	kinds := []string{}
	for _, e := range entries {
		kinds = append(kinds, string(e.Kind))
	}
	if got := strings.Join(kinds, ","); got != "start,reading,state,fault,stop" {
		t.Errorf("entries %s, want start,reading,state,fault,stop", got)
	}
	if f := entries[len(entries)-2]; !strings.Contains(f.Detail, "truncated") && !strings.Contains(f.Detail, "frame") {
		t.Errorf("fault detail %q does not say what was wrong", f.Detail)
	}
}

// TestMonitor_streamStops: a live source that stops delivering raises an audio-stall
// fault after StallAfter, keeps what it read, and stops cleanly on cancel.
func TestMonitor_streamStops(t *testing.T) {
	cfg := loadBench(t)
	clock := monitortest.Clock()
	j := &monitortest.Journal{}
	src := &monitortest.Script{F: capture.Format{SampleRate: testRate, Channels: 1}, Steps: []monitortest.Step{
		{Samples: tone(t, cfg, "A3", 0)}, {Samples: seconds(0.5)}, {Stall: true}}}
	rec := &monitortest.Recorder{}
	m, err := monitor.New(monitor.Options{Config: cfg, Source: src, Journal: j, Sinks: []monitor.Sink{rec},
		Logger: testLogger(t), Clock: clock, StallAfter: 5 * time.Second})
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	go func() { done <- m.Run(ctx) }()
	waitFor(t, func() bool { return m.Stats().Readings == 1 })
	for len(rec.Kind(monitor.KindFault)) == 0 {
		clock.Advance(time.Second)
		time.Sleep(time.Millisecond)
	}
	cancel()
	if err := <-done; err != nil {
		t.Fatal(err)
	}
	f := rec.Kind(monitor.KindFault)[0]
	if f.Reason != "audio-stall" || !strings.Contains(f.Detail, "no audio frames") {
		t.Errorf("fault %s: %s, want audio-stall", f.Reason, f.Detail)
	}
	if got := readings(j.Entries()); len(got) != 1 || got[0] != "A3" {
		t.Errorf("journal readings %v, want [A3]", got)
	}
	if last := j.Entries()[len(j.Entries())-1]; last.Kind != monitor.KindStop {
		t.Errorf("last entry %s, want stop", last.Kind)
	}
}

func waitFor(t *testing.T, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(10 * time.Second)
	for !cond() {
		if time.Now().After(deadline) {
			t.Fatal("condition not met within 10 s")
		}
		time.Sleep(2 * time.Millisecond)
	}
}

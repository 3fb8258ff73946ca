package monitor_test

import (
	"context"
	"testing"
	"time"

	"github.com/rs/zerolog"

	"taut/capture"
	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/journal"
	"taut/monitor/monitortest"
)

const benchConfig = "../cmd/taut/testdata/listen/bench.toml"

func loadBench(t testing.TB) *instrument.Config {
	t.Helper()
	cfg, err := instrument.Load(benchConfig)
	if err != nil {
		t.Fatal(err)
	}
	return cfg
}

func testLogger(t testing.TB) zerolog.Logger {
	return zerolog.New(zerolog.NewTestWriter(t)).Level(zerolog.WarnLevel)
}

// TestMonitor_benchNight plays three hours of the bench story through a synthetic
// source (idle skips between tones) into a real journal, and checks the journal.
func TestMonitor_benchNight(t *testing.T) {
	cfg := loadBench(t)
	const rate = 16000
	sc, err := monitortest.BenchNight(cfg, rate, 1)
	if err != nil {
		t.Fatal(err)
	}
	src := capture.NewSynthSource(capture.Format{SampleRate: rate, Channels: 1})
	sc.Queue(src)
	dir := t.TempDir()
	w, _, err := journal.Open(dir, journal.Options{})
	if err != nil {
		t.Fatal(err)
	}
	rec := &monitortest.Recorder{}
	m, err := monitor.New(monitor.Options{Config: cfg, Source: src, Journal: w, Sinks: []monitor.Sink{rec},
		Logger: testLogger(t), StartTime: monitortest.Evening, RunID: "bench"})
	if err != nil {
		t.Fatal(err)
	}
	if err := m.Run(context.Background()); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	entries, report, err := journal.Load(dir)
	if err != nil || !report.Clean() {
		t.Fatalf("journal.Load: %v, %v", err, report)
	}
	res := monitortest.CheckBench(t, cfg, sc, 1, entries)
	t.Logf("%d readings, max tension error %.3f %%, max cents error %.3f, %d state changes; stats %+v",
		res.Readings, 100*res.MaxTensionErr, res.MaxCentsErr, res.StateChanges, m.Stats())
	if got := rec.Entries(); len(got) != len(entries) {
		t.Errorf("sinks received %d entries, the journal holds %d", len(got), len(entries))
	}
	for _, e := range entries {
		if want := monitortest.Evening.Add(secondsDur(e.MonoS)); !e.Time.Equal(want) {
			t.Errorf("seq %d: time %v, want start + sample time %v", e.Seq, e.Time, want)
			break
		}
	}
}

func secondsDur(s float64) time.Duration { return time.Duration(s*1e9 + 0.5) }

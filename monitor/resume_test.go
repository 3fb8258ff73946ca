package monitor_test

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"taut/capture"
	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/journal"
	"taut/monitor/monitortest"
)

// TestMonitor_killAndResume runs the first half of the bench night, takes the
// journal directory as a hard kill would leave it (no stop entry, no Close; a torn
// line at the end as from a power cut), restarts on it with the second half, and
// checks the combined journal against the whole night.
func TestMonitor_killAndResume(t *testing.T) {
	cfg := loadBench(t)
	const rate = 16000
	sc, err := monitortest.BenchNight(cfg, rate, 1)
	if err != nil {
		t.Fatal(err)
	}
	splitS := monitortest.BenchRoundS(9, 1) + 60 // after the 1.5 h round and its stray note
	first, second := sc.Split(splitS)
	killed := runUntilKilled(t, cfg, first)

	w, rec, err := journal.Open(killed, journal.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if rec.Repairs != 1 {
		t.Errorf("recovery repaired %d torn tails, want 1", rec.Repairs)
	}
	src := capture.NewSynthSource(capture.Format{SampleRate: rate, Channels: 1})
	second.Queue(src)
	m, err := monitor.New(monitor.Options{Config: cfg, Source: src, Journal: w, Logger: testLogger(t),
		Resume: rec.Entries, StartTime: monitortest.Evening.Add(secondsDur(splitS)), RunID: "second"})
	if err != nil {
		t.Fatal(err)
	}
	if err := m.Run(context.Background()); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	entries, report, err := journal.Load(killed)
	if err != nil || !report.Clean() {
		t.Fatalf("journal.Load: %v, %v", err, report)
	}
	var restart *monitor.Entry
	for i := range entries {
		if entries[i].Kind == monitor.KindStart && entries[i].Run == "second" {
			restart = &entries[i]
		}
		if entries[i].Kind == monitor.KindStop && entries[i].Run == "first" {
			t.Errorf("the killed run has a stop entry")
		}
	}
	if restart == nil || restart.Seq != rec.LastSeq+1 || !strings.Contains(restart.Detail, "resumed 7 strings") {
		t.Fatalf("restart entry %+v, want seq %d and 7 strings resumed", restart, rec.LastSeq+1)
	}
	res := monitortest.CheckBench(t, cfg, sc, 1, entries)
	t.Logf("resumed at seq %d; whole night: %d readings, max tension error %.3f %%, %d state changes",
		restart.Seq, res.Readings, 100*res.MaxTensionErr, res.StateChanges)
}

// runUntilKilled plays sc into a journal and returns a copy of the journal directory
// taken once every reading is written, before the run stops, with half a line appended.
func runUntilKilled(t *testing.T, cfg *instrument.Config, sc *monitortest.Scenario) string {
	t.Helper()
	dir := t.TempDir()
	w, _, err := journal.Open(dir, journal.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer w.Close()
	src := capture.NewSynthSource(capture.Format{SampleRate: sc.RateHz, Channels: 1})
	sc.Feed(src) // left open: the source goes silent instead of ending
	m, err := monitor.New(monitor.Options{Config: cfg, Source: src, Journal: w, Logger: testLogger(t),
		StartTime: monitortest.Evening, RunID: "first"})
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	go func() { done <- m.Run(ctx) }()
	want := int64(0)
	for _, so := range sc.Soundings {
		if so.String != "" {
			want++
		}
	}
	deadline := time.Now().Add(20 * time.Second)
	for m.Stats().Readings < want || m.Stats().Unmatched < 1 {
		if time.Now().After(deadline) {
			t.Fatalf("first run: %d readings after 20 s, want %d", m.Stats().Readings, want)
		}
		time.Sleep(5 * time.Millisecond)
	}
	killed := copyDir(t, dir)
	cancel()
	if err := <-done; err != nil {
		t.Fatal(err)
	}
	tearLastSegment(t, killed)
	return killed
}

func copyDir(t *testing.T, dir string) string {
	t.Helper()
	out := t.TempDir()
	files, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range files {
		b, err := os.ReadFile(filepath.Join(dir, f.Name()))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(out, f.Name()), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return out
}

// tearLastSegment appends the first half of a line, as a power cut mid-write leaves it.
func tearLastSegment(t *testing.T, dir string) {
	t.Helper()
	files, _ := filepath.Glob(filepath.Join(dir, "*"))
	last := ""
	for _, f := range files {
		if fi, err := os.Stat(f); err == nil && fi.Mode().IsRegular() && f > last {
			last = f
		}
	}
	f, err := os.OpenFile(last, os.O_APPEND|os.O_WRONLY, 0)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if _, err := f.WriteString(`{"seq":999999,"kind":"reading","time":"2031-03-14T22`); err != nil {
		t.Fatal(err)
	}
}

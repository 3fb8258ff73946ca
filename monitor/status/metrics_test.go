package status

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"regexp"
	"runtime"
	"strings"
	"testing"
	"time"

	"github.com/jonboulle/clockwork"
	"github.com/prometheus/client_golang/prometheus/testutil"

	"taut/monitor"
)

var update = flag.Bool("update", false, "rewrite the golden files under testdata/")

// metricsServer is a server with deterministic figures for the metrics tests.
func metricsServer() *Server {
	fc := clockwork.NewFakeClockAt(t0)
	st := Stats{
		FramesRead: 4_320_000, FramesDropped: 960, Overflows: 2, Gaps: 3, Readings: 41, Unmatched: 5,
		LastFrame: t0.Add(-time.Second), JournalFsyncs: 17, JournalFsyncErrors: 1, JournalWriteErrors: 2, JournalBacklog: 0,
	}
	s := New(testConfig(), Options{Clock: fc, Version: "v0.9.0-test", Stats: func() Stats { return st }})
	s.Publish(readingEntry(1, "C3", monitor.Settling, -12.5))
	s.Publish(readingEntry(2, "D3", monitor.Steady, 0.5))
	s.Publish(stateChange(3, "D3", monitor.Steady, monitor.OffTarget, "drift"))
	for _, d := range []time.Duration{800 * time.Microsecond, 3 * time.Millisecond, 40 * time.Millisecond, 1200 * time.Millisecond} {
		s.ObserveFsync(d, nil)
	}
	return s
}

func TestMetrics_lint(t *testing.T) {
	problems, err := testutil.GatherAndLint(metricsServer().Registry())
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range problems {
		t.Errorf("lint: %s: %s", p.Metric, p.Text)
	}
}

// TestMetrics_golden compares the taut_ families of /metrics with
// testdata/metrics.txt (go test ./monitor/status -run TestMetrics_golden -update).
func TestMetrics_golden(t *testing.T) {
	r := get(t, metricsServer().Handler(), "GET", "/metrics")
	if r.StatusCode != 200 {
		t.Fatalf("/metrics: %s", r.Status)
	}
	got := tautFamilies(body(t, r))
	got = strings.ReplaceAll(got, `goversion="`+runtime.Version()+`"`, `goversion="GOVERSION"`)
	golden := filepath.Join("testdata", "metrics.txt")
	if *update {
		if err := os.WriteFile(golden, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(golden)
	if err != nil {
		t.Fatalf("%v (run with -update to create it)", err)
	}
	if got != string(want) {
		t.Errorf("/metrics differs from %s (rerun with -update if intended):\n%s", golden, lineDiff(string(want), got))
	}
	// The series exist that dashboards and alerts are built on.
	for _, name := range []string{"taut_build_info", "taut_string_frequency_hertz", "taut_string_tension_newtons",
		"taut_string_margin_ratio", "taut_string_deviation_cents", "taut_string_drift_cents_per_second", "taut_string_state",
		"taut_audio_frames_total", "taut_audio_input_overflows_total", "taut_audio_dropped_frames_total",
		"taut_journal_fsync_duration_seconds_bucket", "taut_journal_fsync_errors_total", "taut_journal_write_errors_total",
		"taut_readings_total", "taut_unmatched_notes_total", "taut_last_reading_timestamp_seconds"} {
		if !regexp.MustCompile(`(?m)^` + name + `[{ ]`).MatchString(got) {
			t.Errorf("no %s series", name)
		}
	}
}

// tautFamilies keeps the taut_ metric families (Go and process metrics vary by run).
func tautFamilies(text string) string {
	var b strings.Builder
	keep := false
	for _, line := range strings.SplitAfter(text, "\n") {
		if strings.HasPrefix(line, "# HELP ") {
			keep = strings.HasPrefix(line, "# HELP taut_")
		}
		if keep {
			b.WriteString(line)
		}
	}
	return b.String()
}

func lineDiff(want, got string) string {
	w, g := strings.Split(want, "\n"), strings.Split(got, "\n")
	var b bytes.Buffer
	for i := 0; i < max(len(w), len(g)); i++ {
		var wl, gl string
		if i < len(w) {
			wl = w[i]
		}
		if i < len(g) {
			gl = g[i]
		}
		if wl != gl {
			b.WriteString("-" + wl + "\n+" + gl + "\n")
		}
	}
	return b.String()
}

// TestMetrics_boundedLabels: the string label only ever takes configured ids.
func TestMetrics_boundedLabels(t *testing.T) {
	s := metricsServer()
	for i := range 100 {
		s.Publish(readingEntry(uint64(10+i), "stray"+string(rune('a'+i%26)), monitor.Steady, 0))
	}
	mfs, err := s.Registry().Gather()
	if err != nil {
		t.Fatal(err)
	}
	cfgIDs := map[string]bool{"C3": true, "C#3": true, "D3": true, "D#3": true, "E3": true}
	for _, mf := range mfs {
		for _, m := range mf.GetMetric() {
			for _, l := range m.GetLabel() {
				if l.GetName() == "string" && !cfgIDs[l.GetValue()] {
					t.Errorf("%s has string=%q", mf.GetName(), l.GetValue())
				}
			}
		}
	}
	want := "# HELP taut_status_unknown_string_entries_total Entries naming a string that is not in the config.\n" +
		"# TYPE taut_status_unknown_string_entries_total counter\ntaut_status_unknown_string_entries_total 100\n"
	if err := testutil.GatherAndCompare(s.Registry(), strings.NewReader(want), "taut_status_unknown_string_entries_total"); err != nil {
		t.Error(err)
	}
}

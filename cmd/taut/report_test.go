package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"taut/monitor"
	"taut/monitor/journal"
)

func reportRun(t *testing.T, args ...string) (string, error) {
	t.Helper()
	var out, errOut bytes.Buffer
	err := cmdReport(context.Background(), args, &out, &errOut)
	return out.String() + errOut.String(), err
}

// writeJournal writes a small journal: start, then two strings read every 20
// minutes for three hours (A sags by log creep, B is steady).
func writeJournal(t *testing.T, dir string) {
	t.Helper()
	w, _, err := journal.Open(dir, journal.Options{})
	if err != nil {
		t.Fatal(err)
	}
	t0 := time.Date(2031, 3, 14, 19, 0, 0, 0, time.UTC)
	add := func(e monitor.Entry) {
		e.Run = "test"
		e.Time = t0.Add(time.Duration(e.MonoS * float64(time.Second)))
		if err := w.Append(&e); err != nil {
			t.Fatal(err)
		}
	}
	add(monitor.Entry{Kind: monitor.KindStart})
	for i := 0; i <= 9; i++ {
		h := float64(i) / 3
		add(monitor.Entry{Kind: monitor.KindReading, String: "A", MonoS: h * 3600, F0Hz: 220, Cents: -3 * float64(i) / 9,
			TensionN: 100, Margin: 0.4, State: monitor.Settling})
		add(monitor.Entry{Kind: monitor.KindReading, String: "B", MonoS: h*3600 + 2, F0Hz: 330, Cents: 0.1,
			TensionN: 90, Margin: 0.3, State: monitor.Steady})
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
}

func TestReport_TornAndCorruptLines(t *testing.T) {
	dir := t.TempDir()
	jdir := filepath.Join(dir, "journal")
	writeJournal(t, jdir)
	segs, _ := filepath.Glob(filepath.Join(jdir, "*.jsonl"))
	if len(segs) != 1 {
		t.Fatalf("segments %v", segs)
	}
	// Corrupt line 4 (an interior line) and leave a torn fragment at the end.
	data, err := os.ReadFile(segs[0])
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.SplitAfter(string(data), "\n")
	lines[3] = "{\"seq\": 4, \"kind\": \"reading\", garbage\n"
	torn := strings.Join(lines, "") + `{"seq":99,"kind":"read`
	if err := os.WriteFile(segs[0], []byte(torn), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "report")
	stdout, err := reportRun(t, jdir, "--out", out)
	if err != nil {
		t.Fatalf("report: %v\n%s", err, stdout)
	}
	for _, want := range []string{
		"skipped 1 bad line(s) and 1 torn final line(s)",
		filepath.Base(segs[0]) + ":4: not a journal entry",
		":22: unterminated final line", // 21 entries, then the fragment
		"report: " + filepath.Join(out, "report.html"),
	} {
		if !strings.Contains(stdout, want) {
			t.Errorf("stdout lacks %q:\n%s", want, stdout)
		}
	}
	var sum struct {
		Readings int  `json:"readings"`
		Clean    bool `json:"journal_clean"`
		Strings  []struct {
			ID    string  `json:"id"`
			State string  `json:"state"`
			Rate  float64 `json:"rate_cents_per_hour"`
		} `json:"strings"`
	}
	b, err := os.ReadFile(filepath.Join(out, "summary.json"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &sum); err != nil {
		t.Fatal(err)
	}
	// 20 readings written, the one on line 4 lost.
	if sum.Readings != 19 || sum.Clean || len(sum.Strings) != 2 || sum.Strings[0].ID != "A" {
		t.Errorf("summary: %+v", sum)
	}
	// A falls 3 cents in 3 hours: -1 cent/hour (a straight line).
	if r := sum.Strings[0].Rate; r > -0.99 || r < -1.01 {
		t.Errorf("A rate %v, want -1", r)
	}
	page, err := os.ReadFile(filepath.Join(out, "report.html"))
	if err != nil || !bytes.Contains(page, []byte("Journal problems")) {
		t.Errorf("report.html does not show the journal problems (err %v)", err)
	}
}

func TestReport_Args(t *testing.T) {
	dir := t.TempDir()
	cases := []struct {
		name  string
		args  []string
		usage bool
		want  string
	}{
		{"NoJournal", nil, true, "want a journal"},
		{"TwoJournals", []string{"a", "b"}, true, "want one journal"},
		{"BadFlag", []string{"--nope", "j"}, true, "flag provided but not defined"},
		{"Missing", []string{filepath.Join(dir, "none"), "--out", dir}, false, filepath.Join(dir, "none")},
		{"BadConfig", []string{"--config", filepath.Join(dir, "none.toml"), "j"}, false, "none.toml"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			out, err := reportRun(t, tc.args...)
			var u usageError
			if err == nil || errors.As(err, &u) != tc.usage || !strings.Contains(err.Error()+out, tc.want) {
				t.Errorf("err %v (usage %v), want usage=%v mentioning %q", err, errors.As(err, &u), tc.usage, tc.want)
			}
		})
	}
}

func TestReport_WithConfigScaleOrder(t *testing.T) {
	dir := t.TempDir()
	jdir := filepath.Join(dir, "journal")
	w, _, err := journal.Open(jdir, journal.Options{})
	if err != nil {
		t.Fatal(err)
	}
	t0 := time.Date(2031, 3, 14, 19, 0, 0, 0, time.UTC)
	for i, id := range []string{"G4", "C2"} { // heard out of scale order
		e := monitor.Entry{Kind: monitor.KindReading, Run: "r", Time: t0.Add(time.Duration(i) * time.Second),
			MonoS: float64(i), String: id, Cents: -1, TensionN: 100, Margin: 0.5, State: monitor.Settling}
		if err := w.Append(&e); err != nil {
			t.Fatal(err)
		}
	}
	w.Close()
	out := filepath.Join(dir, "r")
	stdout, err := reportRun(t, "--config", "../../configs/harp36.toml", "--out", out, jdir)
	if err != nil {
		t.Fatalf("%v\n%s", err, stdout)
	}
	var sum struct {
		Strings []struct {
			ID       string   `json:"id"`
			Warnings []string `json:"warnings"`
		} `json:"strings"`
	}
	b, _ := os.ReadFile(filepath.Join(out, "summary.json"))
	if err := json.Unmarshal(b, &sum); err != nil {
		t.Fatal(err)
	}
	if len(sum.Strings) != 36 || sum.Strings[0].ID != "C2" || sum.Strings[18].ID != "G4" {
		t.Fatalf("strings not in the config's scale order: %d, first %v", len(sum.Strings), sum.Strings[0])
	}
	if w := sum.Strings[1].Warnings; len(w) != 1 || w[0] != "not-heard" {
		t.Errorf("D2 warnings %v, want [not-heard]", w)
	}
}

func TestReport_RendersInChromium(t *testing.T) {
	dir := t.TempDir()
	jdir := filepath.Join(dir, "journal")
	writeJournal(t, jdir)
	out := filepath.Join(dir, "report")
	if stdout, err := reportRun(t, jdir, "--out", out); err != nil {
		t.Fatalf("%v\n%s", err, stdout)
	}
	problems, svgs := checkInChromium(t, filepath.Join(out, "report.html"))
	if len(problems) > 0 {
		t.Errorf("console problems: %q", problems)
	}
	if svgs != 3+2 {
		t.Errorf("%d SVG plots, want 5 (cents, margin, load, one per string)", svgs)
	}
}

// TestReport_WrongConfigWarns: a config that does not know the journal's strings
// (here: a harp config for a journal of strings A and B) is warned about on stderr
// and in the page, naming the strings, instead of silently judging them all as
// "not in config".
func TestReport_WrongConfigWarns(t *testing.T) {
	dir := t.TempDir()
	jdir := filepath.Join(dir, "journal")
	writeJournal(t, jdir)
	out := filepath.Join(dir, "report")
	var stdout, stderr bytes.Buffer
	err := cmdReport(context.Background(), []string{"--config", "../../configs/harp36.toml", "--out", out, jdir},
		&stdout, &stderr)
	if err != nil {
		t.Fatalf("%v\n%s%s", err, stdout.String(), stderr.String())
	}
	want := "does not know 2 of the 2 strings in the journal (100 %): A, B"
	if !strings.Contains(stderr.String(), "report: WARNING: ") || !strings.Contains(stderr.String(), want) {
		t.Errorf("stderr lacks the warning %q:\n%s", want, stderr.String())
	}
	page, err := os.ReadFile(filepath.Join(out, "report.html"))
	if err != nil || !bytes.Contains(page, []byte("Is this the right config?")) || !bytes.Contains(page, []byte(want)) {
		t.Errorf("report.html lacks the config banner (err %v)", err)
	}
	// The right amount of trust: with no config at all there is nothing to warn about.
	stderr.Reset()
	if err := cmdReport(context.Background(), []string{"--out", out, jdir}, &stdout, &stderr); err != nil ||
		strings.Contains(stderr.String(), "WARNING") {
		t.Errorf("without a config: err %v, stderr %q", err, stderr.String())
	}
}

package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"periph.io/x/conn/v3/gpio"
	"periph.io/x/conn/v3/gpio/gpioreg"
	"periph.io/x/conn/v3/gpio/gpiotest"

	"taut/capture"
	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/journal"
	"taut/monitor/monitortest"
)

const (
	benchX30   = "testdata/listen/bench-x30.toml"
	benchScale = 30
	benchRate  = 16000
)

// recPin is a gpiotest pin that remembers every level written to it.
type recPin struct {
	*gpiotest.Pin
	mu     sync.Mutex
	levels []gpio.Level
}

func (p *recPin) Out(l gpio.Level) error {
	p.mu.Lock()
	p.levels = append(p.levels, l)
	p.mu.Unlock()
	return p.Pin.Out(l)
}

func (p *recPin) take() []gpio.Level {
	p.mu.Lock()
	defer p.mu.Unlock()
	l := p.levels
	p.levels = nil
	return l
}

var (
	pinsOnce sync.Once
	pins     = map[string]*recPin{}
)

// benchPins registers the bench config's lamp pins with periph once per process and
// clears what they recorded.
func benchPins(t *testing.T) map[string]*recPin {
	t.Helper()
	pinsOnce.Do(func() {
		for i, name := range []string{"TAUT_E2E_ALARM", "TAUT_E2E_SETTLING", "TAUT_E2E_STEADY"} {
			p := &recPin{Pin: &gpiotest.Pin{N: name, Num: 900 + i}}
			if err := gpioreg.Register(p); err != nil {
				t.Fatalf("register %s: %v", name, err)
			}
			pins[name] = p
		}
	})
	for _, p := range pins {
		p.take()
	}
	return pins
}

// checkLamps asserts the level sequence of each bench lamp: low at start, the alarm
// lamp lit from G4's first reading (over the margin) and the settling lamp from the
// first reading (C4 settles all night), never the steady lamp (G4 is in alarm), and
// every lamp low at exit.
func checkLamps(t *testing.T, pins map[string]*recPin) {
	t.Helper()
	want := map[string]string{
		"TAUT_E2E_ALARM":    "Low,High,Low",
		"TAUT_E2E_SETTLING": "Low,High,Low",
		"TAUT_E2E_STEADY":   "Low,Low",
	}
	for name, w := range want {
		var got []string
		for _, l := range pins[name].take() {
			got = append(got, l.String())
		}
		if strings.Join(got, ",") != w {
			t.Errorf("lamp pin %s levels %v, want %s", name, got, w)
		}
	}
}

func benchNight(t *testing.T) (*instrument.Config, *monitortest.Scenario) {
	t.Helper()
	cfg, err := instrument.Load(benchX30)
	if err != nil {
		t.Fatal(err)
	}
	sc, err := monitortest.BenchNight(cfg, benchRate, benchScale)
	if err != nil {
		t.Fatal(err)
	}
	return cfg, sc
}

func loadJournal(t *testing.T, dir string) []monitor.Entry {
	t.Helper()
	entries, report, err := journal.Load(dir)
	if err != nil || !report.Clean() {
		t.Fatalf("journal.Load(%s): %v, %v", dir, err, report)
	}
	return entries
}

// TestListen_stdinPCM plays the three-hour bench night, compressed thirty-fold, as raw
// s16le PCM on stdin through the whole command: journal, states, tension and lamps.
func TestListen_stdinPCM(t *testing.T) {
	cfg, sc := benchNight(t)
	pins := benchPins(t)
	dir := t.TempDir()
	setStdin(t, sc.PCM16())
	var stderr strings.Builder
	err := cmdListen(context.Background(), []string{"--config", benchX30, "--journal", dir, "--input", "-",
		"--clock", "samples", "--log.level", "warn"}, io.Discard, &stderr)
	if err != nil {
		t.Fatalf("listen: %v\n%s", err, stderr.String())
	}
	res := monitortest.CheckBench(t, cfg, sc, benchScale, loadJournal(t, dir))
	t.Logf("stdin: %d readings, max tension error %.4f %%, max cents error %.3f, %d state changes",
		res.Readings, 100*res.MaxTensionErr, res.MaxCentsErr, res.StateChanges)
	checkLamps(t, pins)
}

// TestListen_wavReplay replays the same night from three WAV files, one per hour, played
// in order as fast as possible.
func TestListen_wavReplay(t *testing.T) {
	cfg, sc := benchNight(t)
	pins := benchPins(t)
	tmp := t.TempDir()
	args := []string{"--config", benchX30, "--journal", filepath.Join(tmp, "journal"), "--speed", "0",
		"--log.level", "warn"}
	hourFrames := int64(3600 / benchScale * benchRate)
	for h := int64(0); h < 3; h++ {
		from, to := h*hourFrames, (h+1)*hourFrames
		if h == 2 {
			to = sc.Frames()
		}
		path := filepath.Join(tmp, fmt.Sprintf("hour%d.wav", h+1))
		err := capture.WriteWAVFile(path, capture.Format{SampleRate: benchRate, Channels: 1}, "s16le", sc.Render(from, to))
		if err != nil {
			t.Fatal(err)
		}
		args = append(args, "--input", path)
	}
	var stderr strings.Builder
	if err := cmdListen(context.Background(), args, io.Discard, &stderr); err != nil {
		t.Fatalf("listen: %v\n%s", err, stderr.String())
	}
	res := monitortest.CheckBench(t, cfg, sc, benchScale, loadJournal(t, filepath.Join(tmp, "journal")))
	t.Logf("wav: %d readings, max tension error %.4f %%, max cents error %.3f, %d state changes",
		res.Readings, 100*res.MaxTensionErr, res.MaxCentsErr, res.StateChanges)
	checkLamps(t, pins)
}

func setStdin(t *testing.T, r io.Reader) {
	old := listenStdin
	listenStdin = r
	t.Cleanup(func() { listenStdin = old })
}

// TestListen_signal: cancelling the context (SIGINT/SIGTERM in main) while stdin is
// still open stops capture, journals what was heard and a stop entry, leaves the lamps
// low and returns nil (exit 0); SIGHUP meanwhile reopens a moved log file.
func TestListen_signal(t *testing.T) {
	cfg, sc := benchNight(t)
	_ = cfg
	pins := benchPins(t)
	dir := t.TempDir()
	logPath := filepath.Join(t.TempDir(), "taut.log")
	pr, pw := io.Pipe()
	setStdin(t, pr)
	go func() {
		first, _ := sc.Split(monitortest.BenchRoundS(1, benchScale))
		io.Copy(pw, first.PCM16()) // one round, then the pipe stays open and silent
	}()
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	go func() {
		done <- cmdListen(ctx, []string{"--config", benchX30, "--journal", dir, "--input", "-", "--clock", "samples",
			"--log.file", logPath}, io.Discard, io.Discard)
	}()
	waitForFile(t, logPath, "listening")
	if err := os.Rename(logPath, logPath+".1"); err != nil {
		t.Fatal(err)
	}
	if err := sighupSelf(); err != nil {
		t.Fatal(err)
	}
	waitForFile(t, logPath, "reopened")
	waitForFunc(t, func() bool { return len(journalKinds(t, dir, monitor.KindReading)) == len(monitortest.BenchStrings) })
	cancel()
	select {
	case err := <-done:
		if err != nil {
			t.Fatalf("listen after cancel: %v, want nil (exit 0)", err)
		}
	case <-time.After(10 * time.Second):
		t.Fatal("listen did not stop within 10 s of the signal")
	}
	pw.Close()
	entries := loadJournal(t, dir)
	if last := entries[len(entries)-1]; last.Kind != monitor.KindStop {
		t.Errorf("last entry %s, want stop", last.Kind)
	}
	for name, p := range pins {
		if l := p.take(); len(l) == 0 || l[len(l)-1] != gpio.Low {
			t.Errorf("lamp %s ended at %v, want low", name, l)
		}
	}
}

func journalKinds(t *testing.T, dir string, k monitor.Kind) []monitor.Entry {
	entries, _, err := journal.Load(dir)
	if err != nil {
		return nil
	}
	return monitortest.Filter(entries, func(e *monitor.Entry) bool { return e.Kind == k })
}

func waitForFile(t *testing.T, path, text string) {
	t.Helper()
	waitForFunc(t, func() bool {
		b, _ := os.ReadFile(path)
		return strings.Contains(string(b), text)
	})
}

func waitForFunc(t *testing.T, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(15 * time.Second)
	for !cond() {
		if time.Now().After(deadline) {
			t.Fatal("condition not met within 15 s")
		}
		time.Sleep(10 * time.Millisecond)
	}
}

// TestListen_errors checks the messages and exit codes a board installer acts on.
func TestListen_errors(t *testing.T) {
	tmp := t.TempDir()
	notDir := filepath.Join(tmp, "file")
	if err := os.WriteFile(notDir, []byte("x"), 0o644); err != nil {
		t.Fatal(err)
	}
	badCfg := writeConfig(t, tmp, "bad.toml", strings.Replace(readFile(t, benchX30), `rate_window = "4m"`,
		`rate_window = "soon"`, 1))
	pinsCfg := writeConfig(t, tmp, "pins.toml", strings.Replace(readFile(t, benchX30), "required = false",
		"required = true", 1)+"\n[[lamps.lamp]]\nname = \"spare\"\npin = \"GPIO_NO_SUCH_PIN\"\nshows = \"fault\"\n")
	tests := []struct {
		name     string
		args     []string
		exit     int
		contains []string
	}{
		{"NoConfig", []string{}, 2, []string{"--config"}},
		{"BadConfig", []string{"--config", badCfg}, 2, []string{"bad.toml", "rate_window"}},
		{"BadLamps", []string{"--config", benchX30, "--lamps", "maybe"}, 2, []string{"--lamps"}},
		{"JournalNotADirectory", []string{"--config", benchX30, "--journal", filepath.Join(notDir, "j"), "--input", "-"},
			1, []string{filepath.Join(notDir, "j"), "fix:", "--journal"}},
		{"NoAudioDevice", []string{"--config", benchX30, "--journal", filepath.Join(tmp, "j1"), "--input", "device"},
			1, []string{"no audio device", "-tags portaudio", "--input -"}},
		{"MissingPin", []string{"--config", pinsCfg, "--journal", filepath.Join(tmp, "j2"), "--input", "-"},
			1, []string{"GPIO_NO_SUCH_PIN"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			setStdin(t, strings.NewReader(""))
			var stderr strings.Builder
			err := cmdListen(context.Background(), append(tc.args, "--log.level", "error"), io.Discard, &stderr)
			if code := exitCode(err, io.Discard); code != tc.exit {
				t.Errorf("exit %d (%v), want %d", code, err, tc.exit)
			}
			for _, c := range tc.contains {
				if err == nil || !strings.Contains(err.Error(), c) {
					t.Errorf("error %v does not mention %q", err, c)
				}
			}
		})
	}
}

// TestListen_truncatedPCM: stdin ending inside a frame is an error (exit 1) naming the
// problem, and the note before it is in the journal with a stop entry.
func TestListen_truncatedPCM(t *testing.T) {
	_, sc := benchNight(t)
	first, _ := sc.Split(monitortest.BenchGapS)
	pcm, err := io.ReadAll(first.PCM16())
	if err != nil {
		t.Fatal(err)
	}
	setStdin(t, strings.NewReader(string(pcm)+"\x01"))
	dir := t.TempDir()
	err = cmdListen(context.Background(), []string{"--config", benchX30, "--journal", dir, "--input", "-",
		"--clock", "samples", "--log.level", "error"}, io.Discard, io.Discard)
	if !errors.Is(err, capture.ErrTruncated) || exitCode(err, io.Discard) != 1 {
		t.Fatalf("listen: %v, want exit 1 with a truncated-input error", err)
	}
	entries := loadJournal(t, dir)
	if r := monitortest.Filter(entries, func(e *monitor.Entry) bool { return e.Kind == monitor.KindReading }); len(r) != 1 || r[0].String != "A3" {
		t.Errorf("readings %+v, want the A3 note before the bad end", r)
	}
	if last := entries[len(entries)-1]; last.Kind != monitor.KindStop {
		t.Errorf("last entry %s, want stop", last.Kind)
	}
}

func readFile(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// writeConfig writes a config next to a copy of the bench string table.
func writeConfig(t *testing.T, dir, name, text string) string {
	t.Helper()
	csv := readFile(t, "testdata/listen/bench.csv")
	if err := os.WriteFile(filepath.Join(dir, "bench.csv"), []byte(csv), 0o644); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, name)
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

package main

import (
	"bufio"
	"context"
	"encoding/json"
	"errors"
	"io"
	"net/http"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"periph.io/x/conn/v3/gpio"
	"periph.io/x/conn/v3/gpio/gpioreg"
	"periph.io/x/conn/v3/gpio/gpiotest"

	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/journal/journaltest"
	"taut/monitor/monitortest"
)

var (
	faultPinOnce sync.Once
	faultPin     *recPin
)

// faultLampConfig writes the bench config with a "fault" lamp on a gpiotest pin.
func faultLampConfig(t *testing.T) (string, *recPin) {
	t.Helper()
	benchPins(t)
	faultPinOnce.Do(func() {
		faultPin = &recPin{Pin: &gpiotest.Pin{N: "TAUT_E2E_FAULT", Num: 910}}
		if err := gpioreg.Register(faultPin); err != nil {
			t.Fatalf("register fault pin: %v", err)
		}
	})
	faultPin.take()
	cfg := writeConfig(t, t.TempDir(), "fault.toml", readFile(t, benchX30)+
		"\n[[lamps.lamp]]\nname = \"fault\"\npin = \"TAUT_E2E_FAULT\"\nshows = \"fault\"\n")
	return cfg, faultPin
}

// logValue returns field of the first JSON log line whose message contains msg.
func logValue(log, msg, field string) string {
	sc := bufio.NewScanner(strings.NewReader(log))
	for sc.Scan() {
		var line map[string]any
		if json.Unmarshal(sc.Bytes(), &line) != nil {
			continue
		}
		if m, _ := line["message"].(string); strings.Contains(m, msg) {
			v, _ := line[field].(string)
			return v
		}
	}
	return ""
}

func healthz(t *testing.T, addr string) (int, string) {
	t.Helper()
	resp, err := http.Get("http://" + addr + "/healthz")
	if err != nil {
		t.Fatalf("GET /healthz: %v", err)
	}
	defer resp.Body.Close()
	b, _ := io.ReadAll(resp.Body)
	return resp.StatusCode, strings.TrimSpace(string(b))
}

// TestListen_journalFaults runs the daemon on a live-like stdin and, one after the
// other, makes the journal's disk full, remounts it read-only, cuts writes short with
// an I/O error, and fails every fsync; each lasts about a second and is then cured.
// For each: the log names the cause with what to check, /healthz says 503 with it, the
// fault lamp is lit, capture goes on (notes keep reaching the sinks), failed writes
// are retried with backoff rather than in a loop, and once cured the journal is clean
// (no torn or bad line, no seq gap) and holds exactly every entry the sinks were given.
func TestListen_journalFaults(t *testing.T) {
	cfgPath, lamp := faultLampConfig(t)
	cfg, err := instrument.Load(cfgPath)
	if err != nil {
		t.Fatal(err)
	}
	t.Setenv("NOTIFY_SOCKET", "")
	fsys := &journaltest.FS{NoSync: true}
	rec := &monitortest.Recorder{}
	listenJournalFS, listenExtraSinks = fsys, []monitor.Sink{rec}
	journalRetryMin, journalRetryMax = 100*time.Millisecond, 400*time.Millisecond
	t.Cleanup(func() {
		listenJournalFS, listenExtraSinks = nil, nil
		journalRetryMin, journalRetryMax = 0, 0
	})
	pr, pw := io.Pipe()
	setStdin(t, pr)
	feed := &pacedStdin{speed: 8, running: true}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	go feed.feed(ctx, pw, benchRoundRobin(t, cfg, 600).PCM16())
	dir := t.TempDir()
	runCtx, stop := context.WithCancel(ctx)
	done := make(chan error, 1)
	var stderr syncBuilder
	go func() {
		done <- cmdListen(runCtx, []string{"--config", cfgPath, "--journal", dir, "--input", "-", "--http", "127.0.0.1:0",
			"--log.level", "info"}, io.Discard, &stderr)
	}()
	var addr string
	waitForFunc(t, func() bool { addr = logValue(stderr.String(), "status page", "addr"); return addr != "" })
	readingsAfter := func(n int) {
		t.Helper()
		base := len(rec.Kind(monitor.KindReading))
		waitForFunc(t, func() bool { return len(rec.Kind(monitor.KindReading)) >= base+n })
	}
	readingsAfter(2)

	faults := []struct {
		name  string
		fault journaltest.Fault
		cause string
	}{
		{"DiskFull", journaltest.Fault{Op: journaltest.OpWrite, Times: -1, Err: syscall.ENOSPC}, "no space left on device"},
		{"ReadOnlyRemount", journaltest.Fault{Op: journaltest.OpWrite, Times: -1, Err: syscall.EROFS}, "read-only file system"},
		{"ShortWriteIOError", journaltest.Fault{Op: journaltest.OpWrite, Times: -1, Keep: 25, Err: syscall.EIO}, "input/output error"},
		{"FsyncFails", journaltest.Fault{Op: journaltest.OpSync, Times: -1, Err: syscall.EIO}, "input/output error"},
	}
	for _, f := range faults {
		t.Run(f.name, func(t *testing.T) {
			lamp.take()
			writes0, syncs0 := fsys.Count(journaltest.OpWrite), fsys.Count(journaltest.OpSync)
			logLen := len(stderr.String())
			fsys.Inject(f.fault)
			defer fsys.Clear()
			start := time.Now()
			readingsAfter(3) // capture and analysis go on while the journal fails
			waitForFunc(t, func() bool {
				code, body := healthz(t, addr)
				return code == http.StatusServiceUnavailable && strings.Contains(body, f.cause)
			})
			waitForFunc(t, func() bool { return lamp.Read() == gpio.High }) // lit for the fault window
			log := stderr.String()[logLen:]
			if f.fault.Op == journaltest.OpWrite && (!strings.Contains(log, f.cause) || !strings.Contains(log, "check free space")) {
				t.Errorf("log does not name the cause %q with what to check:\n%s", f.cause, log)
			}
			failedFor := time.Since(start)
			fsys.Clear()
			attempts := fsys.Count(journaltest.OpWrite) - writes0 + fsys.Count(journaltest.OpSync) - syncs0
			// With retries at least RetryMin (100 ms) apart, plus one forced attempt per
			// urgent entry (the alarm string's readings), the attempts stay few; a retry
			// loop would make thousands.
			if limit := int(failedFor/(100*time.Millisecond)) + 3 + 2*len(rec.Kind(monitor.KindReading)); attempts > limit {
				t.Errorf("%d write and fsync attempts in %v of failure, want at most %d (backoff)", attempts, failedFor, limit)
			}
			waitForFunc(t, func() bool { code, _ := healthz(t, addr); return code == http.StatusOK })
			readingsAfter(1) // appended after the cure: the monitor knows the journal works again
			t.Logf("%s: failed for %v with %d write/fsync attempts; recovered %v after the cure",
				f.name, failedFor.Round(time.Millisecond), attempts, time.Since(start.Add(failedFor)).Round(time.Millisecond))
		})
	}
	stop()
	if err := <-done; err != nil {
		t.Fatalf("listen: %v", err)
	}
	entries := loadJournal(t, dir) // fails on a torn or bad line and on a seq gap
	checkNothingLost(t, rec.Entries(), entries)
	jf := monitortest.Filter(entries, func(e *monitor.Entry) bool { return e.Kind == monitor.KindFault && e.Reason == "journal" })
	if len(jf) < 3 {
		t.Errorf("%d journal fault entries, want one per failing write fault", len(jf))
	}
}

// TestListen_journalUnwritableAtStart: a journal directory that cannot be written when
// the daemon starts (a read-only file system, or permissions) is a clear error naming
// the directory and the fix, exit status 1, before any audio is taken.
func TestListen_journalUnwritableAtStart(t *testing.T) {
	t.Setenv("NOTIFY_SOCKET", "")
	benchPins(t)
	t.Run("ReadOnlyFileSystem", func(t *testing.T) {
		fsys := &journaltest.FS{NoSync: true}
		fsys.Inject(journaltest.Fault{Op: journaltest.OpOpen, Times: -1, Err: syscall.EROFS})
		listenJournalFS = fsys
		t.Cleanup(func() { listenJournalFS = nil })
		dir := t.TempDir()
		setStdin(t, strings.NewReader(""))
		err := cmdListen(context.Background(), []string{"--config", benchX30, "--journal", dir, "--input", "-",
			"--log.level", "error"}, io.Discard, io.Discard)
		checkStartError(t, err, dir, "read-only file system")
	})
	t.Run("NoPermission", func(t *testing.T) {
		if os.Geteuid() == 0 {
			t.Skip("running as root: directory permissions do not stop root")
		}
		dir := filepath.Join(t.TempDir(), "journal")
		if err := os.Mkdir(dir, 0o555); err != nil {
			t.Fatal(err)
		}
		setStdin(t, strings.NewReader(""))
		err := cmdListen(context.Background(), []string{"--config", benchX30, "--journal", dir, "--input", "-",
			"--log.level", "error"}, io.Discard, io.Discard)
		checkStartError(t, err, dir, "permission denied")
	})
}

func checkStartError(t *testing.T, err error, dir, cause string) {
	t.Helper()
	if code := exitCode(err, io.Discard); code != 1 {
		t.Errorf("exit %d (%v), want 1", code, err)
	}
	for _, want := range []string{dir, cause, "fix:", "--journal"} {
		if err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("error %v does not mention %q", err, want)
		}
	}
	if err != nil && errors.Is(err, context.Canceled) {
		t.Errorf("error %v is a cancellation, want the journal's", err)
	}
}

package main

import (
	"context"
	"io"
	"math"
	"net"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/journal/journaltest"
	"taut/monitor/monitortest"
)

// datagram is one notification received by the fake systemd.
type datagram struct {
	at  time.Time
	msg string
}

// fakeSystemd is a notify socket like systemd's, with $NOTIFY_SOCKET and
// $WATCHDOG_USEC set for the test.
type fakeSystemd struct {
	mu  sync.Mutex
	got []datagram
}

func newFakeSystemd(t *testing.T, watchdog time.Duration) *fakeSystemd {
	t.Helper()
	path := filepath.Join(t.TempDir(), "notify.sock")
	conn, err := net.ListenUnixgram("unixgram", &net.UnixAddr{Name: path, Net: "unixgram"})
	if err != nil {
		t.Fatal(err)
	}
	f := &fakeSystemd{}
	done := make(chan struct{})
	go func() {
		defer close(done)
		buf := make([]byte, 4096)
		for {
			n, err := conn.Read(buf)
			if err != nil {
				return
			}
			f.mu.Lock()
			f.got = append(f.got, datagram{time.Now(), string(buf[:n])})
			f.mu.Unlock()
		}
	}()
	t.Cleanup(func() { conn.Close(); <-done })
	t.Setenv("NOTIFY_SOCKET", path)
	t.Setenv("WATCHDOG_USEC", strconv.FormatInt(watchdog.Microseconds()*2, 10)) // the daemon pings every half
	return f
}

func (f *fakeSystemd) all() []datagram {
	f.mu.Lock()
	defer f.mu.Unlock()
	return append([]datagram(nil), f.got...)
}

// waitFor waits for a notification starting with prefix (and containing sub) received
// after from, and returns it.
func (f *fakeSystemd) waitFor(t *testing.T, prefix, sub string, from time.Time) datagram {
	t.Helper()
	var hit datagram
	waitForFunc(t, func() bool {
		for _, d := range f.all() {
			if d.at.After(from) && strings.HasPrefix(d.msg, prefix) && strings.Contains(d.msg, sub) {
				hit = d
				return true
			}
		}
		return false
	})
	return hit
}

// count counts notifications starting with prefix received in (from, to].
func (f *fakeSystemd) count(prefix string, from, to time.Time) int {
	n := 0
	for _, d := range f.all() {
		if d.at.After(from) && !d.at.After(to) && strings.HasPrefix(d.msg, prefix) {
			n++
		}
	}
	return n
}

// benchRoundRobin is a scenario of the bench strings sounded in turn, BenchGapS apart,
// for durS seconds.
func benchRoundRobin(t *testing.T, cfg *instrument.Config, durS float64) *monitortest.Scenario {
	t.Helper()
	sc := &monitortest.Scenario{RateHz: benchRate, ToneS: 1.5, EndS: durS}
	strs := cfg.Instrument.Strings
	for k := 0; float64(k)*monitortest.BenchGapS+1.5 < durS; k++ {
		s := &strs[k%len(strs)]
		sc.Soundings = append(sc.Soundings, monitortest.Sounding{AtS: float64(k) * monitortest.BenchGapS, String: s.ID,
			F0Hz: s.TargetHz, B: s.Phys.Inharmonicity(s.Phys.Tension(s.TargetHz))})
	}
	return sc
}

// pacedStdin writes a scenario's PCM into the pipe at speed times real time (4 when
// zero) while running, and writes nothing while paused: a live `arecord | taut
// listen` that can stall.
type pacedStdin struct {
	speed   int
	mu      sync.Mutex
	running bool
	written int64 // bytes
}

func (p *pacedStdin) set(running bool) {
	p.mu.Lock()
	p.running = running
	p.mu.Unlock()
}

func (p *pacedStdin) feed(ctx context.Context, w *io.PipeWriter, pcm io.Reader) {
	defer w.Close()
	speed := p.speed
	if speed == 0 {
		speed = 4
	}
	chunk := make([]byte, speed*benchRate/40*2) // speed × 25 ms of s16le mono every 25 ms
	tick := time.NewTicker(25 * time.Millisecond)
	defer tick.Stop()
	for {
		select {
		case <-ctx.Done():
			return
		case <-tick.C:
		}
		p.mu.Lock()
		run := p.running
		p.mu.Unlock()
		if !run {
			continue
		}
		n, err := io.ReadFull(pcm, chunk)
		if n > 0 {
			if _, werr := w.Write(chunk[:n]); werr != nil {
				return
			}
			p.mu.Lock()
			p.written += int64(n)
			p.mu.Unlock()
		}
		if err != nil {
			return
		}
	}
}

// TestListen_systemdNotify runs `taut listen` on a live-like stdin against a fake
// notify socket with the watchdog on, and walks it through a stall and a journal
// that cannot be written:
//
//   - no READY=1 before the first audio frames; READY=1 before any WATCHDOG=1;
//   - WATCHDOG=1 while frames flow, none while stdin is stalled, again once it flows;
//   - still fed while the journal's writes fail (a full disk) and the held entries
//     are far from the limit: a restart would lose them (see listener.health);
//   - STATUS= lines with the strings summary and what is wrong;
//   - STOPPING=1 when the signal comes, and no WATCHDOG=1 after it;
//   - afterwards the journal holds every reading, without a seq gap.
func TestListen_systemdNotify(t *testing.T) {
	const watchdog = 100 * time.Millisecond
	sd := newFakeSystemd(t, watchdog)
	benchPins(t)
	cfg, err := instrument.Load(benchX30)
	if err != nil {
		t.Fatal(err)
	}
	fsys := &journaltest.FS{NoSync: true}
	rec := &monitortest.Recorder{}
	listenJournalFS, listenExtraSinks = fsys, []monitor.Sink{rec}
	t.Cleanup(func() { listenJournalFS, listenExtraSinks = nil, nil })
	pr, pw := io.Pipe()
	setStdin(t, pr)
	feed := &pacedStdin{}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	go feed.feed(ctx, pw, benchRoundRobin(t, cfg, 120).PCM16())
	dir := t.TempDir()
	runCtx, stop := context.WithCancel(ctx)
	done := make(chan error, 1)
	var stderr syncBuilder
	go func() {
		done <- cmdListen(runCtx, []string{"--config", benchX30, "--journal", dir, "--input", "-", "--http", "127.0.0.1:0",
			"--log.level", "warn"}, io.Discard, &stderr)
	}()
	t0 := time.Now()

	time.Sleep(300 * time.Millisecond)
	if n := len(sd.all()); n != 0 {
		t.Fatalf("%d notifications before any audio, want none: %v", n, sd.all())
	}
	feed.set(true)
	ready := sd.waitFor(t, "READY=1", "", t0)
	sd.waitFor(t, "STATUS=", "7 strings", t0)
	flowing := sd.waitFor(t, "WATCHDOG=1", "", ready.at)
	waitPings(t, sd, 3, ready.at)

	// Stall: stdin delivers nothing. Pings stop within the frame age and a check.
	feed.set(false)
	stalled := time.Now()
	sd.waitFor(t, "STATUS=", "audio: no frames", stalled)
	time.Sleep(400 * time.Millisecond)
	if n := sd.count("WATCHDOG=1", stalled.Add(watchdog+100*time.Millisecond), time.Now()); n != 0 {
		t.Errorf("%d WATCHDOG=1 while stdin was stalled, want none", n)
	}
	feed.set(true)
	resumed := sd.waitFor(t, "WATCHDOG=1", "", time.Now())

	// The disk fills: every write fails until it is cleared.
	fsys.Inject(journaltest.Fault{Op: journaltest.OpWrite, Times: -1, Err: syscall.ENOSPC})
	failing := sd.waitFor(t, "STATUS=", "journal failing", resumed.at)
	if !strings.Contains(failing.msg, "no space left on device") {
		t.Errorf("status %q does not name the cause", failing.msg)
	}
	time.Sleep(500 * time.Millisecond)
	if n := sd.count("WATCHDOG=1", failing.at, time.Now()); n == 0 {
		t.Errorf("no WATCHDOG=1 while the journal failed with few entries held: a restart would lose them")
	}
	fsys.Clear()
	healed := time.Now()
	sd.waitFor(t, "STATUS=", "journal ok", healed)

	stop()
	if err := <-done; err != nil {
		t.Fatalf("listen: %v\n%s", err, stderr.String())
	}
	stopping := sd.waitFor(t, "STOPPING=1", "", t0)
	if n := sd.count("WATCHDOG=1", stopping.at, time.Now().Add(time.Hour)); n != 0 {
		t.Errorf("%d WATCHDOG=1 after STOPPING=1", n)
	}
	if n := sd.count("WATCHDOG=1", t0, ready.at); n != 0 || !flowing.at.After(ready.at) {
		t.Errorf("%d WATCHDOG=1 before READY=1, want READY first", n)
	}
	entries := loadJournal(t, dir) // fails on a seq gap or a bad line
	readings := monitortest.Filter(entries, func(e *monitor.Entry) bool { return e.Kind == monitor.KindReading })
	faults := monitortest.Filter(entries, func(e *monitor.Entry) bool { return e.Kind == monitor.KindFault && e.Reason == "journal" })
	if len(faults) != 1 || len(readings) < 3 {
		t.Errorf("journal: %d readings and %d journal faults, want the readings of the whole run and one fault", len(readings), len(faults))
	}
	checkNothingLost(t, rec.Entries(), entries)
	t.Logf("notifications: %d (%d WATCHDOG=1); readings %d; first ping %v after READY",
		len(sd.all()), sd.count("WATCHDOG=1", t0, time.Now()), len(readings), flowing.at.Sub(ready.at).Round(time.Millisecond))
	checkWatchdogSpacing(t, sd, watchdog)
}

// waitPings waits for n WATCHDOG=1 after from.
func waitPings(t *testing.T, sd *fakeSystemd, n int, from time.Time) {
	t.Helper()
	waitForFunc(t, func() bool { return sd.count("WATCHDOG=1", from, time.Now()) >= n })
}

// checkWatchdogSpacing asserts that consecutive pings are never closer than half the
// interval: the daemon feeds the watchdog on its schedule, not on every check.
func checkWatchdogSpacing(t *testing.T, sd *fakeSystemd, interval time.Duration) {
	t.Helper()
	var last time.Time
	minGap := time.Duration(math.MaxInt64)
	for _, d := range sd.all() {
		if d.msg != "WATCHDOG=1" {
			continue
		}
		if !last.IsZero() {
			minGap = min(minGap, d.at.Sub(last))
		}
		last = d.at
	}
	if minGap < interval/2 {
		t.Errorf("pings %v apart, want about every %v", minGap, interval)
	}
}

// syncBuilder is a strings.Builder safe for the logger's goroutines.
type syncBuilder struct {
	mu sync.Mutex
	b  strings.Builder
}

func (s *syncBuilder) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuilder) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}

// checkNothingLost asserts that the journal holds exactly the entries the sinks were
// given, seq for seq: nothing held during a fault was lost or written twice.
func checkNothingLost(t *testing.T, published, journaled []monitor.Entry) {
	t.Helper()
	bySeq := map[uint64]monitor.Entry{}
	for _, e := range journaled {
		bySeq[e.Seq] = e
	}
	for _, p := range published {
		j, ok := bySeq[p.Seq]
		if !ok || j.Kind != p.Kind || j.String != p.String || !j.Time.Equal(p.Time) {
			t.Errorf("published seq %d (%s %s) is not in the journal as such (found %v: %s %s)", p.Seq, p.Kind, p.String, ok, j.Kind, j.String)
		}
	}
	if len(published) != len(journaled) {
		t.Errorf("sinks got %d entries, the journal holds %d", len(published), len(journaled))
	}
}

package monitor_test

import (
	"context"
	"errors"
	"math"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/jonboulle/clockwork"

	"taut/capture"
	"taut/monitor"
	"taut/monitor/monitortest"
)

var testFormat = capture.Format{SampleRate: testRate, Channels: 1}

// closingScript is a scripted source that counts its Close calls.
type closingScript struct {
	monitortest.Script
	closed atomic.Int32
}

func (s *closingScript) Close() error { s.closed.Add(1); return nil }

func script(steps ...monitortest.Step) *closingScript {
	return &closingScript{Script: monitortest.Script{F: testFormat, Steps: steps}}
}

// reopenLog is an Options.Reopen that hands out scripted results in order and notes
// the fake clock's time of every call, relative to t0.
type reopenLog struct {
	clock   clockwork.Clock
	t0      time.Time
	mu      sync.Mutex
	results []func() (monitor.Source, error)
	at      []time.Duration
}

func (r *reopenLog) reopen(context.Context) (monitor.Source, error) {
	r.mu.Lock()
	defer r.mu.Unlock()
	r.at = append(r.at, r.clock.Since(r.t0))
	if len(r.results) == 0 {
		return nil, errors.New("no more scripted reopens")
	}
	f := r.results[0]
	r.results = r.results[1:]
	return f()
}

func (r *reopenLog) times() []time.Duration {
	r.mu.Lock()
	defer r.mu.Unlock()
	return append([]time.Duration(nil), r.at...)
}

func fail(msg string) func() (monitor.Source, error) {
	return func() (monitor.Source, error) { return nil, errors.New(msg) }
}

func give(src monitor.Source) func() (monitor.Source, error) {
	return func() (monitor.Source, error) { return src, nil }
}

// clockedSink notes the fake clock's time of every entry it receives.
type clockedSink struct {
	clock clockwork.Clock
	mu    sync.Mutex
	at    map[monitor.Kind][]time.Time
	rec   monitortest.Recorder
}

func (s *clockedSink) Publish(e monitor.Entry) {
	s.mu.Lock()
	if s.at == nil {
		s.at = map[monitor.Kind][]time.Time{}
	}
	s.at[e.Kind] = append(s.at[e.Kind], s.clock.Now())
	s.mu.Unlock()
	s.rec.Publish(e)
}

func (s *clockedSink) first(k monitor.Kind) (time.Time, bool) {
	s.mu.Lock()
	defer s.mu.Unlock()
	if len(s.at[k]) == 0 {
		return time.Time{}, false
	}
	return s.at[k][0], true
}

// runOnFakeClock runs m, advancing the fake clock by step whenever at least waiters
// timers or tickers wait on it (and gate, if set, allows it), until Run returns.
func runOnFakeClock(t *testing.T, m *monitor.Monitor, clock *clockwork.FakeClock, waiters int, step time.Duration,
	gate func() bool) error {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 20*time.Second)
	defer cancel()
	done := make(chan error, 1)
	go func() { done <- m.Run(ctx) }()
	for {
		select {
		case err := <-done:
			return err
		default:
		}
		bctx, bcancel := context.WithTimeout(ctx, 20*time.Millisecond)
		if clock.BlockUntilContext(bctx, waiters) == nil && (gate == nil || gate()) {
			clock.Advance(step)
			time.Sleep(2 * time.Millisecond) // let the goroutines woken by the step run
		}
		bcancel()
		if ctx.Err() != nil {
			t.Fatal("run did not end within 20 s")
		}
	}
}

// TestMonitor_reopenAfterError: the device fails mid-run (unplugged); reopening fails
// five times, then a new device delivers. The attempts follow the capped exponential
// backoff on the fake clock (1, 2, 4, 4, 4 s with ReopenMax 4 s), the failure is a
// fault, the time away is one "reopen" gap that also moves the sample clock, and the
// readings before and after are both journaled.
func TestMonitor_reopenAfterError(t *testing.T) {
	cfg := loadBench(t)
	clock := monitortest.Clock()
	first := script(monitortest.Step{Samples: tone(t, cfg, "A3", 0)}, monitortest.Step{Samples: seconds(0.5)},
		monitortest.Step{Err: errors.New("read: device unplugged")})
	second := script(monitortest.Step{Samples: tone(t, cfg, "B3", 0)}, monitortest.Step{Samples: seconds(0.5)})
	rl := &reopenLog{clock: clock, t0: clock.Now(), results: []func() (monitor.Source, error){
		fail("no such device"), fail("no such device"), fail("no such device"), fail("no such device"),
		fail("no such device"), give(second)}}
	j := &monitortest.Journal{}
	m, err := monitor.New(monitor.Options{Config: cfg, Source: first, Journal: j, Logger: testLogger(t), Clock: clock,
		StartTime: monitortest.Evening, Reopen: rl.reopen, ReopenMin: time.Second, ReopenMax: 4 * time.Second})
	if err != nil {
		t.Fatal(err)
	}
	if err := runOnFakeClock(t, m, clock, 1, time.Second, nil); err != nil {
		t.Fatalf("run: %v, want nil after the reopened source ended", err)
	}
	want := []time.Duration{0, 1 * time.Second, 3 * time.Second, 7 * time.Second, 11 * time.Second, 15 * time.Second}
	if got := rl.times(); !equalDurations(got, want) {
		t.Errorf("reopen attempts at %v, want %v (backoff 1 s doubling, capped at 4 s)", got, want)
	}
	entries := j.Entries()
	if got := readings(entries); strings.Join(got, ",") != "A3,B3" {
		t.Errorf("readings %v, want A3 before the failure and B3 after", got)
	}
	checkFaults(t, entries, "audio:device unplugged", "audio-reopen:no such device")
	gaps := monitortest.Filter(entries, func(e *monitor.Entry) bool { return e.Kind == monitor.KindGap })
	if len(gaps) != 1 || gaps[0].Reason != "reopen" {
		t.Fatalf("gaps %+v, want one reopen gap", gaps)
	}
	if lostS := float64(gaps[0].GapFrames) / testRate; lostS < 14.9 || lostS > 15 {
		t.Errorf("reopen gap of %.3f s, want the 15 s the device was away less the first read", lostS)
	}
	audioS := float64(len(tone(t, cfg, "A3", 0))+len(tone(t, cfg, "B3", 0))+2*len(seconds(0.5))) / testRate
	stop := entries[len(entries)-1]
	if wantS := audioS + float64(gaps[0].GapFrames)/testRate; stop.Kind != monitor.KindStop || math.Abs(stop.MonoS-wantS) > 1e-6 {
		t.Errorf("stop at %.3f s (%s), want %.3f s: the sample clock must count the reopen gap", stop.MonoS, stop.Kind, wantS)
	}
	if st := m.Stats(); st.SourceFailures != 1 || st.ReopenAttempts != 6 || st.Reopens != 1 {
		t.Errorf("stats: %d failures, %d attempts, %d reopens; want 1, 6, 1", st.SourceFailures, st.ReopenAttempts, st.Reopens)
	}
	if first.closed.Load() == 0 || second.closed.Load() == 0 {
		t.Errorf("closed: failed source %d times, reopened source %d times; want both closed", first.closed.Load(), second.closed.Load())
	}
}

func equalDurations(a, b []time.Duration) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// checkFaults asserts the fault entries, each given as "reason:detail substring".
func checkFaults(t *testing.T, entries []monitor.Entry, want ...string) {
	t.Helper()
	faults := monitortest.Filter(entries, func(e *monitor.Entry) bool { return e.Kind == monitor.KindFault })
	if len(faults) != len(want) {
		t.Fatalf("faults %+v, want %v", faults, want)
	}
	for i, w := range want {
		reason, detail, _ := strings.Cut(w, ":")
		if faults[i].Reason != reason || !strings.Contains(faults[i].Detail, detail) {
			t.Errorf("fault %d: %s %q, want %s mentioning %q", i, faults[i].Reason, faults[i].Detail, reason, detail)
		}
	}
}

// TestMonitor_reopenAfterStall: the device stops delivering without an error (a
// driver that went quiet). The stall watchdog notices within StallAfter plus a tick,
// cancels the hanging Read, and the source is reopened at once.
func TestMonitor_reopenAfterStall(t *testing.T) {
	cfg := loadBench(t)
	clock := monitortest.Clock()
	first := script(monitortest.Step{Samples: tone(t, cfg, "A3", 0)}, monitortest.Step{Samples: seconds(0.5)},
		monitortest.Step{Stall: true})
	second := script(monitortest.Step{Samples: tone(t, cfg, "B3", 0)}, monitortest.Step{Samples: seconds(0.5)})
	rl := &reopenLog{clock: clock, t0: clock.Now(), results: []func() (monitor.Source, error){give(second)}}
	sink := &clockedSink{clock: clock}
	j := &monitortest.Journal{}
	const stallAfter = 5 * time.Second
	m, err := monitor.New(monitor.Options{Config: cfg, Source: first, Journal: j, Sinks: []monitor.Sink{sink},
		Logger: testLogger(t), Clock: clock, StartTime: monitortest.Evening, StallAfter: stallAfter, Reopen: rl.reopen})
	if err != nil {
		t.Fatal(err)
	}
	// The clock moves only after the first source has delivered everything it will and
	// its note is read, and only until the source is reopened: the second source's
	// audio is then read to its end while no time passes.
	firstFrames := int64(len(tone(t, cfg, "A3", 0)) + len(seconds(0.5)))
	stalled := func() bool {
		st := m.Stats()
		return st.FramesRead >= firstFrames && st.Readings >= 1 && st.Reopens == 0
	}
	if err := runOnFakeClock(t, m, clock, 1, time.Second, stalled); err != nil {
		t.Fatal(err)
	}
	entries := j.Entries()
	checkFaults(t, entries, "audio-stall:reopening")
	noticed, _ := sink.first(monitor.KindFault)
	if took := noticed.Sub(monitortest.Evening); took < stallAfter || took > stallAfter+2*time.Second {
		t.Errorf("stall noticed %v after the last frames, want between %v and %v (a tick or two)", took, stallAfter,
			stallAfter+2*time.Second)
	}
	// The fake clock is stepped a second at a time from the test's goroutine while the
	// monitor's goroutines react, so the attempt may be stamped one step later.
	if at := rl.times(); len(at) != 1 || at[0] < noticed.Sub(monitortest.Evening) ||
		at[0] > noticed.Sub(monitortest.Evening)+time.Second {
		t.Errorf("reopen attempts at %v, want one as soon as the stall was noticed (%v, within one clock step)", at,
			noticed.Sub(monitortest.Evening))
	}
	if got := readings(entries); strings.Join(got, ",") != "A3,B3" {
		t.Errorf("readings %v, want A3,B3", got)
	}
	gaps := monitortest.Filter(entries, func(e *monitor.Entry) bool { return e.Kind == monitor.KindGap })
	if len(gaps) != 1 || gaps[0].Reason != "reopen" || gaps[0].GapFrames < int64(stallAfter.Seconds()*testRate)-testRate {
		t.Errorf("gaps %+v, want one reopen gap of about %v", gaps, stallAfter)
	}
	t.Logf("stall noticed after %v; reopened at %v; gap %.2f s", noticed.Sub(monitortest.Evening), rl.times(),
		float64(gaps[0].GapFrames)/testRate)
}

// TestMonitor_reopenFlapping: a device that comes back broken (fails before its first
// frames) is not reopened in a tight loop: the wait keeps growing across its failures,
// and the time away is one gap from the last good frames to the first new ones.
func TestMonitor_reopenFlapping(t *testing.T) {
	cfg := loadBench(t)
	clock := monitortest.Clock()
	broken := func() (monitor.Source, error) {
		return script(monitortest.Step{Err: errors.New("read: I/O error")}), nil
	}
	first := script(monitortest.Step{Samples: tone(t, cfg, "A3", 0)}, monitortest.Step{Err: errors.New("read: device unplugged")})
	good := script(monitortest.Step{Samples: tone(t, cfg, "B3", 0)}, monitortest.Step{Samples: seconds(0.5)})
	rl := &reopenLog{clock: clock, t0: clock.Now(), results: []func() (monitor.Source, error){broken, broken, broken, give(good)}}
	j := &monitortest.Journal{}
	m, err := monitor.New(monitor.Options{Config: cfg, Source: first, Journal: j, Logger: testLogger(t), Clock: clock,
		StartTime: monitortest.Evening, Reopen: rl.reopen})
	if err != nil {
		t.Fatal(err)
	}
	if err := runOnFakeClock(t, m, clock, 1, time.Second, nil); err != nil {
		t.Fatal(err)
	}
	want := []time.Duration{0, 1 * time.Second, 3 * time.Second, 7 * time.Second}
	if got := rl.times(); !equalDurations(got, want) {
		t.Errorf("reopen attempts at %v, want %v", got, want)
	}
	gaps := monitortest.Filter(j.Entries(), func(e *monitor.Entry) bool { return e.Kind == monitor.KindGap })
	if len(gaps) != 1 || math.Abs(float64(gaps[0].GapFrames)/testRate-7) > 0.1 {
		t.Errorf("gaps %+v, want one reopen gap of about 7 s", gaps)
	}
	if got := readings(j.Entries()); strings.Join(got, ",") != "A3,B3" {
		t.Errorf("readings %v, want A3,B3", got)
	}
}

// hangingSource delivers its samples, then blocks in Read ignoring the context (a
// driver stuck in C code) until release is closed.
type hangingSource struct {
	samples []float32
	sent    bool
	release chan struct{}
}

func (s *hangingSource) Format() capture.Format { return testFormat }

func (s *hangingSource) Read(_ context.Context, dst []float32) (int, error) {
	if !s.sent {
		s.sent = true
		return copy(dst, s.samples), nil
	}
	<-s.release
	return 0, errors.New("released")
}

// TestMonitor_stuckRead: when the cancelled Read does not return, the monitor cannot
// reopen; it says so as an "audio-stuck" fault (only a restart, by systemd's watchdog,
// can help) and still stops when asked.
func TestMonitor_stuckRead(t *testing.T) {
	cfg := loadBench(t)
	clock := monitortest.Clock()
	src := &hangingSource{samples: seconds(0.01), release: make(chan struct{})}
	rec := &monitortest.Recorder{}
	m, err := monitor.New(monitor.Options{Config: cfg, Source: src, Sinks: []monitor.Sink{rec}, Logger: testLogger(t),
		Clock: clock, StartTime: monitortest.Evening, StallAfter: 5 * time.Second,
		Reopen: func(context.Context) (monitor.Source, error) { return nil, errors.New("must not be called") }})
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	go func() { done <- m.Run(ctx) }()
	waitFor(t, func() bool {
		clock.Advance(time.Second)
		time.Sleep(time.Millisecond)
		return len(rec.Kind(monitor.KindFault)) >= 2
	})
	cancel()
	close(src.release)
	if err := <-done; err != nil {
		t.Fatal(err)
	}
	checkFaults(t, rec.Entries(), "audio-stall:reopening", "audio-stuck:only restarting the process")
	if st := m.Stats(); st.ReopenAttempts != 0 {
		t.Errorf("%d reopen attempts while the old Read was still running", st.ReopenAttempts)
	}
}

// TestMonitor_reopenOtherFormat: a device that comes back at another sample rate ends
// the run with an error saying a restart is needed; what was heard is journaled.
func TestMonitor_reopenOtherFormat(t *testing.T) {
	cfg := loadBench(t)
	clock := monitortest.Clock()
	first := script(monitortest.Step{Samples: tone(t, cfg, "A3", 0)}, monitortest.Step{Err: errors.New("unplugged")})
	other := &monitortest.Script{F: capture.Format{SampleRate: 48000, Channels: 1}}
	rl := &reopenLog{clock: clock, t0: clock.Now(), results: []func() (monitor.Source, error){give(other)}}
	j := &monitortest.Journal{}
	m, err := monitor.New(monitor.Options{Config: cfg, Source: first, Journal: j, Logger: testLogger(t), Clock: clock,
		StartTime: monitortest.Evening, Reopen: rl.reopen})
	if err != nil {
		t.Fatal(err)
	}
	err = runOnFakeClock(t, m, clock, 1, time.Second, nil)
	if err == nil || !strings.Contains(err.Error(), "48000 Hz") || !strings.Contains(err.Error(), "restart") {
		t.Fatalf("run: %v, want an error naming the new rate and asking for a restart", err)
	}
	if got := readings(j.Entries()); strings.Join(got, ",") != "A3" {
		t.Errorf("readings %v, want A3", got)
	}
	if last := j.Entries()[len(j.Entries())-1]; last.Kind != monitor.KindStop {
		t.Errorf("last entry %s, want stop", last.Kind)
	}
}

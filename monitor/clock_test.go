package monitor_test

import (
	"context"
	"math"
	"strings"
	"testing"
	"time"

	"taut/capture"
	"taut/monitor"
	"taut/monitor/monitortest"
)

// Boards without a real-time clock start with a stale wall clock and jump when NTP
// syncs. These tests check that every interval and rate uses the sample clock or the
// monotonic clock, and that a jump is journaled.

// TestMonitor_clockJumpIsNoStall: a wall clock set three hours forward while the
// source is briefly quiet is no stall; only elapsed (monotonic) time counts, and the
// stall watchdog still fires once StallAfter has really passed.
func TestMonitor_clockJumpIsNoStall(t *testing.T) {
	cfg := loadBench(t)
	clock := monitortest.NewJumpClock()
	src := script(monitortest.Step{Samples: seconds(0.5)}, monitortest.Step{Stall: true})
	rec := &monitortest.Recorder{}
	m, err := monitor.New(monitor.Options{Config: cfg, Source: src, Sinks: []monitor.Sink{rec}, Logger: testLogger(t),
		Clock: clock, LiveClock: true, StallAfter: 5 * time.Second})
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	go func() { done <- m.Run(ctx) }()
	waitFor(t, func() bool { return m.Stats().FramesRead == int64(len(seconds(0.5))) })
	step := func(n int) {
		for range n {
			clock.Advance(time.Second)
			time.Sleep(3 * time.Millisecond)
		}
	}
	step(1)
	clock.Jump(3 * time.Hour)
	step(3) // 4 s elapsed: no stall yet, whatever the wall clock says
	if f := rec.Kind(monitor.KindFault); len(f) != 0 {
		t.Fatalf("faults %+v after 4 s of monotonic time and a 3 h wall-clock jump, want none", f)
	}
	waitFor(t, func() bool { step(1); return len(rec.Kind(monitor.KindFault)) == 1 })
	cancel()
	if err := <-done; err != nil {
		t.Fatal(err)
	}
	if f := rec.Kind(monitor.KindFault)[0]; f.Reason != "audio-stall" || !strings.Contains(f.Detail, "5s") {
		t.Errorf("fault %s %q, want an audio-stall after 5 s", f.Reason, f.Detail)
	}
}

// driftScript is B3 read every ten minutes for an hour and a half, sagging 3 cents an
// hour, with idle (skipped) time between the notes.
func driftScript(t *testing.T) []monitortest.Step {
	cfg := loadBench(t)
	var steps []monitortest.Step
	for k := range 10 {
		x := tone(t, cfg, "B3", -0.5*float64(k))
		st := monitortest.Step{Samples: x}
		if k > 0 {
			st.Gap = &capture.Gap{Frames: 600*testRate - int64(len(x)), Reason: capture.GapIdle}
		}
		steps = append(steps, st)
	}
	return steps
}

// jumpAt moves the clock's wall time by d when the nth reading arrives.
type jumpAt struct {
	clock *monitortest.JumpClock
	n     int
	d     time.Duration
	seen  int
}

func (j *jumpAt) Publish(e monitor.Entry) {
	if e.Kind == monitor.KindReading {
		if j.seen++; j.seen == j.n {
			j.clock.Jump(j.d)
		}
	}
}

// TestMonitor_clockJumpRatesUnchanged runs the same drifting string twice with the
// wall clock (LiveClock), once with the clock set back two hours after the fourth
// reading: the jump is journaled once, entry times move with the wall clock, and
// every reading's drift rate and state are exactly those of the run without the jump.
func TestMonitor_clockJumpRatesUnchanged(t *testing.T) {
	cfg := loadBench(t)
	run := func(jump time.Duration) []monitor.Entry {
		clock := monitortest.NewJumpClock()
		j := &monitortest.Journal{}
		var sinks []monitor.Sink
		if jump != 0 {
			sinks = append(sinks, &jumpAt{clock: clock, n: 4, d: jump})
		}
		m, err := monitor.New(monitor.Options{Config: cfg, Journal: j, Sinks: sinks, Logger: testLogger(t), Clock: clock,
			LiveClock: true, Source: script(driftScript(t)...)})
		if err != nil {
			t.Fatal(err)
		}
		if err := m.Run(context.Background()); err != nil {
			t.Fatal(err)
		}
		return j.Entries()
	}
	plain, jumped := run(0), run(-2*time.Hour)
	if c := monitortest.Filter(plain, isKind(monitor.KindClock)); len(c) != 0 {
		t.Errorf("clock entries %+v without a jump", c)
	}
	c := monitortest.Filter(jumped, isKind(monitor.KindClock))
	if len(c) != 1 || c[0].ClockJumpS != -7200 {
		t.Fatalf("clock entries %+v, want one of -7200 s", c)
	}
	a, b := monitortest.Filter(plain, isKind(monitor.KindReading)), monitortest.Filter(jumped, isKind(monitor.KindReading))
	if len(a) != 10 || len(b) != 10 {
		t.Fatalf("%d and %d readings, want 10 each", len(a), len(b))
	}
	for i := range a {
		if a[i].RateCentsHour != b[i].RateCentsHour || a[i].State != b[i].State {
			t.Errorf("reading %d: rate %.4f c/h %v with the jump, %.4f c/h %v without", i, b[i].RateCentsHour, b[i].State,
				a[i].RateCentsHour, a[i].State)
		}
		if wantShift := time.Duration(0); i >= 4 {
			wantShift = -2 * time.Hour
			if got := b[i].Time.Sub(a[i].Time); got != wantShift {
				t.Errorf("reading %d: time moved %v, want %v with the wall clock", i, got, wantShift)
			}
		}
	}
	last := a[len(a)-1]
	if math.Abs(last.RateCentsHour+3) > 0.5 || last.State != monitor.Settling {
		t.Errorf("last reading: %.2f c/h %v, want about -3 c/h and settling", last.RateCentsHour, last.State)
	}
}

func isKind(k monitor.Kind) func(*monitor.Entry) bool {
	return func(e *monitor.Entry) bool { return e.Kind == k }
}

// TestMonitor_resumeWithClockBehind: the board restarts with its wall clock a day
// behind the journal (no real-time clock). The resumed history is placed to end at
// the start, the move is journaled as a clock entry, and new readings extend the
// series: a string that starts to sag after the restart is seen settling. Without
// the move, the history would lie a day in the future and swallow the new readings.
func TestMonitor_resumeWithClockBehind(t *testing.T) {
	cfg := loadBench(t)
	var hist []monitor.Entry
	for k := range 7 { // steady at target for the hour before the restart
		at := monitortest.Evening.Add(time.Duration(k-6) * 10 * time.Minute)
		hist = append(hist, monitor.Entry{Kind: monitor.KindReading, Time: at, String: "B3", Cents: 0, State: monitor.Steady})
	}
	src := script(driftScript(t)[1:]...) // the first note ten minutes after the restart
	src.Steps[0].Gap = &capture.Gap{Frames: 600 * testRate, Reason: capture.GapIdle}
	for i := range src.Steps {
		src.Steps[i].Samples = tone(t, cfg, "B3", -1*float64(i+1)) // 6 cents an hour
	}
	j := &monitortest.Journal{}
	m, err := monitor.New(monitor.Options{Config: cfg, Source: src, Journal: j, Logger: testLogger(t), Resume: hist,
		StartTime: monitortest.Evening.Add(-24 * time.Hour)})
	if err != nil {
		t.Fatal(err)
	}
	if err := m.Run(context.Background()); err != nil {
		t.Fatal(err)
	}
	entries := j.Entries()
	if !strings.Contains(entries[0].Detail, "resumed 1 strings") {
		t.Errorf("start entry %q, want 1 string resumed", entries[0].Detail)
	}
	if c := entries[1]; c.Kind != monitor.KindClock || c.ClockJumpS != -86400 || !strings.Contains(c.Detail, "went back") {
		t.Errorf("entry after start %s (%v s, %q), want a clock entry of -86400 s", c.Kind, c.ClockJumpS, c.Detail)
	}
	r := monitortest.Filter(entries, isKind(monitor.KindReading))
	last := r[len(r)-1]
	if last.State != monitor.Settling || last.RateCentsHour > -1 {
		t.Errorf("after 1.5 h of sagging 6 c/h: %v at %.2f c/h, want settling with a clear negative rate",
			last.State, last.RateCentsHour)
	}
}

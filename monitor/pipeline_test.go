package monitor_test

import (
	"context"
	"errors"
	"math"
	"strings"
	"sync"
	"testing"
	"time"

	"taut/capture"
	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/monitortest"
)

// gateSink blocks in Publish on the first reading until released: analysis stalls.
type gateSink struct {
	once sync.Once
	gate chan struct{}
}

func (g *gateSink) Publish(e monitor.Entry) {
	if e.Kind == monitor.KindReading {
		g.once.Do(func() { <-g.gate })
	}
}

// TestMonitor_dropsWhenBehind: with DropWhenBehind, capture keeps reading while
// analysis is stuck; the lost audio is counted, journaled as a "dropped" gap and the
// sample clock still counts it.
func TestMonitor_dropsWhenBehind(t *testing.T) {
	cfg := loadBench(t)
	steps := []monitortest.Step{{Samples: tone(t, cfg, "A3", 0)}, {Samples: seconds(20)}, {Samples: tone(t, cfg, "B3", 0)}}
	total := int64(0)
	for _, s := range steps {
		total += int64(len(s.Samples))
	}
	gate := &gateSink{gate: make(chan struct{})}
	j := &monitortest.Journal{}
	m, err := monitor.New(monitor.Options{Config: cfg, Journal: j, Sinks: []monitor.Sink{gate}, Logger: testLogger(t),
		Source:         &monitortest.Script{F: capture.Format{SampleRate: testRate, Channels: 1}, Steps: steps},
		DropWhenBehind: true, BufferBlocks: 4})
	if err != nil {
		t.Fatal(err)
	}
	done := make(chan error, 1)
	go func() { done <- m.Run(context.Background()) }()
	waitFor(t, func() bool { return m.Stats().FramesRead == total })
	close(gate.gate)
	if err := <-done; err != nil {
		t.Fatal(err)
	}
	st := m.Stats()
	gaps := monitortest.Filter(j.Entries(), func(e *monitor.Entry) bool { return e.Kind == monitor.KindGap })
	var dropped int64
	for _, g := range gaps {
		if g.Reason != "dropped" {
			t.Errorf("gap reason %q, want dropped", g.Reason)
		}
		dropped += g.GapFrames
	}
	if st.FramesDropped == 0 || dropped != st.FramesDropped {
		t.Errorf("dropped %d frames, gaps journal %d", st.FramesDropped, dropped)
	}
	stop := j.Entries()[len(j.Entries())-1]
	if want := float64(total) / testRate; stop.Kind != monitor.KindStop || math.Abs(stop.MonoS-want) > 1e-6 {
		t.Errorf("stop at %v s (%s), want %v s: the sample clock must count dropped frames", stop.MonoS, stop.Kind, want)
	}
}

// TestMonitor_journalFails: appends fail for a while; the monitor reports one fault,
// keeps running, and once the journal heals it holds every entry the sinks saw.
func TestMonitor_journalFails(t *testing.T) {
	cfg := loadBench(t)
	j := &monitortest.Journal{}
	j.SetFailure(errors.New("write journal-000001.jsonl: no space left on device"))
	rec := &monitortest.Recorder{}
	heal := healOn{j: j, id: "C4"}
	_, m, err := runScriptWith(t, cfg, j, []monitor.Sink{rec, &heal},
		monitortest.Step{Samples: tone(t, cfg, "A3", 0)}, monitortest.Step{Samples: tone(t, cfg, "C4", 0)},
		monitortest.Step{Samples: tone(t, cfg, "E4", 0)}, monitortest.Step{Samples: seconds(0.5)})
	if err != nil {
		t.Fatal(err)
	}
	faults := rec.Kind(monitor.KindFault)
	if len(faults) != 1 || faults[0].Reason != "journal" || !strings.Contains(faults[0].Detail, "no space") {
		t.Fatalf("faults %+v, want one journal fault naming the cause", faults)
	}
	if m.Stats().JournalErrors < 2 {
		t.Errorf("%d journal errors counted", m.Stats().JournalErrors)
	}
	if got := readings(j.Entries()); strings.Join(got, ",") != "A3,C4,E4" {
		t.Errorf("journal readings %v, want A3,C4,E4", got)
	}
	written := map[uint64]bool{}
	for _, e := range j.Entries() {
		written[e.Seq] = true
	}
	for _, e := range rec.Entries() {
		if !written[e.Seq] {
			t.Errorf("seq %d (%s) reached the sinks but not the journal", e.Seq, e.Kind)
		}
	}
}

// healOn heals the journal when string id is read.
type healOn struct {
	j  *monitortest.Journal
	id string
}

func (h *healOn) Publish(e monitor.Entry) {
	if e.Kind == monitor.KindReading && e.String == h.id {
		h.j.SetFailure(nil)
	}
}

func runScriptWith(t *testing.T, cfg *instrument.Config, j *monitortest.Journal, sinks []monitor.Sink, steps ...monitortest.Step) (*monitortest.Journal, *monitor.Monitor, error) {
	t.Helper()
	m, err := monitor.New(monitor.Options{Config: cfg, Journal: j, Sinks: sinks, Logger: testLogger(t),
		Source: &monitortest.Script{F: capture.Format{SampleRate: testRate, Channels: 1}, Steps: steps}})
	if err != nil {
		t.Fatal(err)
	}
	return j, m, m.Run(context.Background())
}

// TestMonitor_clockJump: with LiveClock, a wall clock set forward after start (NTP on
// a board without a real-time clock) is journaled once as a clock entry.
func TestMonitor_clockJump(t *testing.T) {
	cfg := loadBench(t)
	clock := monitortest.NewJumpClock()
	j := &monitortest.Journal{}
	m, err := monitor.New(monitor.Options{Config: cfg, Journal: j, Logger: testLogger(t), Clock: clock, LiveClock: true,
		Source: &monitortest.Script{F: capture.Format{SampleRate: testRate, Channels: 1},
			Steps: []monitortest.Step{{Samples: seconds(3)}}}})
	if err != nil {
		t.Fatal(err)
	}
	clock.Jump(3 * time.Hour)
	if err := m.Run(context.Background()); err != nil {
		t.Fatal(err)
	}
	jumps := monitortest.Filter(j.Entries(), func(e *monitor.Entry) bool { return e.Kind == monitor.KindClock })
	if len(jumps) != 1 || jumps[0].ClockJumpS != 3*3600 {
		t.Fatalf("clock entries %+v, want one jump of 10800 s", jumps)
	}
	if stop := j.Entries()[len(j.Entries())-1]; !stop.Time.Equal(clock.Now()) || stop.MonoS != 0 {
		t.Errorf("stop entry at %v (mono %v s), want the wall clock %v and no monotonic time passed",
			stop.Time, stop.MonoS, clock.Now())
	}
}

package main

import (
	"context"
	"errors"
	"io"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"taut/capture"
	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/monitortest"
)

// fakeMic is a USB microphone that can be unplugged and plugged back. Every device
// opened on it plays the same scenario on, at four times real time; while unplugged, the
// open device fails its reads and opening fails.
type fakeMic struct {
	mu      sync.Mutex
	samples []float32
	pos     int
	plugged bool
	gen     int         // bumped by unplug: devices opened before fail
	opens   []time.Time // every open attempt
}

func (m *fakeMic) setPlugged(p bool) {
	m.mu.Lock()
	defer m.mu.Unlock()
	if m.plugged && !p {
		m.gen++
	}
	m.plugged = p
}

func (m *fakeMic) open(string) (audioSource, error) {
	m.mu.Lock()
	defer m.mu.Unlock()
	m.opens = append(m.opens, time.Now())
	if !m.plugged {
		return nil, errors.New("no input device matches \"mic\"")
	}
	return &fakeMicStream{mic: m, gen: m.gen}, nil
}

func (m *fakeMic) openTimes() []time.Time {
	m.mu.Lock()
	defer m.mu.Unlock()
	return append([]time.Time(nil), m.opens...)
}

type fakeMicStream struct {
	mic    *fakeMic
	gen    int
	closed atomic.Bool
}

func (s *fakeMicStream) Format() capture.Format {
	return capture.Format{SampleRate: benchRate, Channels: 1}
}

func (s *fakeMicStream) Read(ctx context.Context, dst []float32) (int, error) {
	select {
	case <-ctx.Done():
		return 0, ctx.Err()
	case <-time.After(5 * time.Millisecond): // 20 ms of audio every 5 ms
	}
	m := s.mic
	m.mu.Lock()
	defer m.mu.Unlock()
	if m.gen != s.gen || s.closed.Load() {
		return 0, errors.New("read: device unplugged (input/output error)")
	}
	n := copy(dst[:min(len(dst), benchRate/50)], m.samples[m.pos%len(m.samples):])
	m.pos += n
	return n, nil
}

func (s *fakeMicStream) Close() error { s.closed.Store(true); return nil }

// TestListen_deviceUnplugged: the live input is unplugged mid-run. The daemon notices
// at its next read, journals the fault, reopens the device by name with capped
// exponential backoff (100 ms doubling to 400 ms here), stops feeding the systemd
// watchdog while it cannot, and once the device is back: feeds it again, journals the
// time away as a "reopen" gap and goes on reading strings. Nothing journaled is lost.
func TestListen_deviceUnplugged(t *testing.T) {
	const watchdog = 100 * time.Millisecond
	sd := newFakeSystemd(t, watchdog)
	benchPins(t)
	cfg, err := instrument.Load(benchX30)
	if err != nil {
		t.Fatal(err)
	}
	sc := benchRoundRobin(t, cfg, 60)
	mic := &fakeMic{samples: sc.Render(0, sc.Frames()), plugged: true}
	rec := &monitortest.Recorder{}
	oldOpen, oldMin, oldMax := openAudioDevice, deviceReopenMin, deviceReopenMax
	openAudioDevice, deviceReopenMin, deviceReopenMax = mic.open, 100*time.Millisecond, 400*time.Millisecond
	listenExtraSinks = []monitor.Sink{rec}
	t.Cleanup(func() {
		openAudioDevice, deviceReopenMin, deviceReopenMax = oldOpen, oldMin, oldMax
		listenExtraSinks = nil
	})
	dir := t.TempDir()
	ctx, stop := context.WithCancel(context.Background())
	defer stop()
	done := make(chan error, 1)
	var stderr syncBuilder
	go func() {
		done <- cmdListen(ctx, []string{"--config", benchX30, "--journal", dir, "--device", "mic", "--log.level", "warn"},
			io.Discard, &stderr)
	}()
	ready := sd.waitFor(t, "READY=1", "", time.Time{})
	waitForFunc(t, func() bool { return len(rec.Kind(monitor.KindReading)) >= 2 })
	waitPings(t, sd, 2, ready.at)

	mic.setPlugged(false)
	unplugged := time.Now()
	down := sd.waitFor(t, "STATUS=", "reopening the input", unplugged)
	time.Sleep(900 * time.Millisecond)
	if n := sd.count("WATCHDOG=1", down.at.Add(60*time.Millisecond), time.Now()); n != 0 {
		t.Errorf("%d WATCHDOG=1 while the device could not be reopened, want none", n)
	}
	mic.setPlugged(true)
	plugged := time.Now()
	back := sd.waitFor(t, "WATCHDOG=1", "", plugged)
	readingsBack := len(rec.Kind(monitor.KindReading))
	waitForFunc(t, func() bool { return len(rec.Kind(monitor.KindReading)) >= readingsBack+2 })
	stop()
	if err := <-done; err != nil {
		t.Fatalf("listen: %v\n%s", err, stderr.String())
	}

	opens := mic.openTimes()[1:] // after the first open at start
	var waits []time.Duration
	for i := 1; i < len(opens); i++ {
		waits = append(waits, opens[i].Sub(opens[i-1]).Round(10*time.Millisecond))
	}
	for i, w := range waits {
		want := min(100*time.Millisecond<<i, 400*time.Millisecond)
		if i < len(waits)-1 && (w < want || w > want+150*time.Millisecond) { // the last wait ends early when plugged
			t.Errorf("wait %d before reopening: %v, want %v (100 ms doubling, capped at 400 ms)", i+1, w, want)
		}
	}
	entries := loadJournal(t, dir)
	checkNothingLost(t, rec.Entries(), entries)
	var fault, reopenFault, gap *monitor.Entry
	for i := range entries {
		e := &entries[i]
		switch {
		case e.Kind == monitor.KindFault && e.Reason == "audio" && fault == nil:
			fault = e
		case e.Kind == monitor.KindFault && e.Reason == "audio-reopen":
			reopenFault = e
		case e.Kind == monitor.KindGap && e.Reason == "reopen":
			gap = e
		}
	}
	if fault == nil || !strings.Contains(fault.Detail, "unplugged") || reopenFault == nil || gap == nil {
		t.Fatalf("journal: fault %+v, reopen fault %+v, gap %+v; want all three", fault, reopenFault, gap)
	}
	awayS := float64(gap.GapFrames) / benchRate
	if want := back.at.Sub(unplugged).Seconds(); awayS < 0.5*want || awayS > want+0.5 {
		t.Errorf("reopen gap %.2f s, want about the %.2f s the device was away", awayS, want)
	}
	after := monitortest.Filter(entries, func(e *monitor.Entry) bool { return e.Kind == monitor.KindReading && e.Seq > gap.Seq })
	if len(after) < 2 {
		t.Errorf("%d readings after the reopen, want the strings read again", len(after))
	}
	t.Logf("unplugged for %v: %d open attempts, waits %v; gap journaled %.2f s; first ping %v after plugging back",
		plugged.Sub(unplugged).Round(time.Millisecond), len(opens), waits, awayS, back.at.Sub(plugged).Round(time.Millisecond))
}

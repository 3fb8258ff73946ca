package monitor

import (
	"context"
	"fmt"
	"sync"
	"time"

	"taut/capture"
)

// shutdownGrace is how long Run waits, after ctx ends, for the source to return from
// a blocked Read (a stuck device call cannot be cancelled from Go).
const shutdownGrace = 2 * time.Second

// Run listens until the source ends (io.EOF) or ctx ends, then analyses what was
// already captured, journals a stop entry and returns nil. A source error other than a
// gap also ends the run in order, after a fault entry, and is returned.
func (m *Monitor) Run(ctx context.Context) error {
	m.clk.monoStart = m.clock.Now()
	m.emitStart()
	m.advanceQuiet(0)
	free, full := m.pool()
	capErr := make(chan error, 1)
	go func() { capErr <- m.capture(ctx, free, full) }()

	bg, stopBg := context.WithCancel(ctx)
	var wg sync.WaitGroup
	if m.exciter != nil && m.cfg.Exciter.Enabled {
		wg.Go(func() { m.rounds(bg) })
	}
	if m.opts.StallAfter > 0 {
		wg.Go(func() { m.watch(bg) })
	}
	err := m.loop(ctx, free, full, capErr)
	stopBg()
	wg.Wait()
	m.finish(err)
	return err
}

// loop analyses blocks until capture closes the queue, emitting the events other
// goroutines send meanwhile.
func (m *Monitor) loop(ctx context.Context, free, full chan *block, capErr chan error) error {
	done := ctx.Done()
	var grace <-chan time.Time
	for {
		select {
		case b, ok := <-full:
			if !ok {
				return <-capErr
			}
			m.process(b)
			free <- b
		case e := <-m.events:
			m.emitEvent(e)
		case <-done:
			done, grace = nil, time.After(shutdownGrace)
		case <-grace:
			m.log.Warn().Dur("waited", shutdownGrace).Msg("audio source did not stop; stopping without it")
			return nil
		}
	}
}

// process advances the sample clock over a block's gap and feeds its samples to the lanes.
func (m *Monitor) process(b *block) {
	if b.dropped > 0 {
		m.lostAudio(b.dropped, "dropped", "analysis fell behind and dropped")
	}
	switch {
	case b.reason == capture.GapIdle:
		for _, l := range m.lanes {
			if l.open {
				m.finishEarly(l, 0)
			}
		}
		m.frame += b.gap
	case b.reason == reasonReopen:
		m.lostAudio(b.gap, b.reason, "the audio source was reopened after a failure; not captured:")
	case b.reason != "":
		m.lostAudio(b.gap, b.reason, "the source lost")
	}
	if b.n > 0 {
		m.advanceQuiet(m.seconds(m.frame))
		for _, l := range m.lanes {
			m.push(l, b.buf[:b.n], m.frame)
		}
		m.frame += int64(b.n / m.format.Channels)
	}
	m.advanceQuiet(m.seconds(m.frame))
	m.checkClock()
}

// lostAudio journals lost frames as a gap and moves the sample clock over them. A note
// being collected across the gap is dropped: its audio is not continuous.
func (m *Monitor) lostAudio(frames int64, reason, what string) {
	for _, l := range m.lanes {
		l.discard()
	}
	m.stats.gaps.Add(1)
	e := m.newEntry(KindGap, m.seconds(m.frame))
	e.GapFrames, e.Reason = frames, reason
	e.Detail = fmt.Sprintf("%s %.2f s of audio (%d frames)", what, float64(frames)/m.rateHz, frames)
	m.emit(e)
	m.frame += frames
}

// sendEvent queues an entry from another goroutine for the analysis goroutine, which
// stamps and emits it. It never blocks: with the queue full the event is only logged.
func (m *Monitor) sendEvent(e Entry) {
	select {
	case m.events <- e:
	default:
		m.log.Error().Str("kind", string(e.Kind)).Str("detail", e.Detail).Msg("event queue full; event only logged")
	}
}

func (m *Monitor) emitEvent(ev Entry) {
	e := m.newEntry(ev.Kind, m.seconds(m.frame))
	e.String, e.Reason, e.Detail, e.GapFrames = ev.String, ev.Reason, ev.Detail, ev.GapFrames
	m.emit(e)
}

func (m *Monitor) emitStart() {
	e := m.newEntry(KindStart, 0)
	e.Detail = fmt.Sprintf("resumed %d strings; listening for %d strings on %d channel(s) at %d Hz",
		m.resumed, len(m.trackers), m.format.Channels, m.format.SampleRate)
	m.emit(e)
	if rc := m.resumeClock; rc != nil {
		c := m.newEntry(KindClock, 0)
		c.ClockJumpS, c.Detail = rc.ClockJumpS, rc.Detail
		m.emit(c)
	}
}

// finish analyses notes cut short by the end, emits the queued events and the stop entry.
func (m *Monitor) finish(runErr error) {
	for _, l := range m.lanes {
		if l.open {
			m.finishEarly(l, 0)
		}
	}
	for {
		select {
		case e := <-m.events:
			m.emitEvent(e)
			continue
		default:
		}
		break
	}
	if runErr != nil {
		f := m.newEntry(KindFault, m.seconds(m.frame))
		f.Reason, f.Detail = "audio", runErr.Error()
		m.emit(f)
	}
	s := m.stats.snapshot()
	e := m.newEntry(KindStop, m.seconds(m.frame))
	e.Detail = fmt.Sprintf("%d readings, %d unmatched, %d notes without pitch, %d frames dropped",
		s.Readings, s.Unmatched, s.NoPitch, s.FramesDropped)
	m.emit(e)
}

// watch raises a fault when the source delivers no frame for StallAfter, and logs
// when frames flow again. With Options.Reopen it also cancels the hanging Read, so that
// capture closes and reopens the source; if the Read does not return even then (a
// driver stuck in C code), it reports that only a restart can help: the listener's
// systemd watchdog is no longer fed while frames do not flow. Elapsed time is measured
// with Since (the monotonic clock), so a wall-clock jump is no stall.
func (m *Monitor) watch(ctx context.Context) {
	t := m.clock.NewTicker(min(m.opts.StallAfter/4, time.Second))
	defer t.Stop()
	w := stallWatch{last: m.captured.Load(), since: m.clock.Now(), gen: m.srcGen.Load()}
	for {
		select {
		case <-ctx.Done():
			return
		case <-t.Chan():
		}
		m.watchTick(&w)
	}
}

// stallWatch is the state of watch between ticks.
type stallWatch struct {
	last     int64     // capture's sample clock at the last change
	since    time.Time // when it last changed
	gen      int64     // source generation watched
	stalled  bool
	kickedAt time.Time // when the hanging Read was cancelled (zero: not)
	failures int64     // SourceFailures when it was cancelled
	stuck    bool      // the stuck Read was reported
}

func (m *Monitor) watchTick(w *stallWatch) {
	if g := m.srcGen.Load(); g != w.gen { // a reopened source: watch it afresh
		*w = stallWatch{last: m.captured.Load(), since: m.clock.Now(), gen: g}
		return
	}
	if m.reopening.Load() { // capture is replacing a failed source and says so itself
		return
	}
	if c := m.captured.Load(); c != w.last {
		if w.stalled {
			m.log.Info().Msg("audio frames flow again")
		}
		*w = stallWatch{last: c, since: m.clock.Now(), gen: w.gen}
		return
	}
	quiet := m.clock.Since(w.since)
	if !w.stalled && quiet >= m.opts.StallAfter {
		w.stalled = true
		d := fmt.Sprintf("no audio frames for %s: check the input device or the program feeding stdin",
			quiet.Round(time.Second))
		if m.opts.Reopen != nil {
			d = fmt.Sprintf("no audio frames for %s: closing and reopening the input device", quiet.Round(time.Second))
		}
		m.log.Error().Msg(d)
		m.sendEvent(Entry{Kind: KindFault, Reason: "audio-stall", Detail: d})
		if m.opts.Reopen != nil {
			w.kickedAt, w.failures = m.clock.Now(), m.stats.sourceFailures.Load()
			m.gate.kick(&stallError{after: quiet})
		}
	}
	if !w.kickedAt.IsZero() && !w.stuck && m.stats.sourceFailures.Load() == w.failures &&
		m.clock.Since(w.kickedAt) >= m.opts.StallAfter {
		w.stuck = true
		d := fmt.Sprintf("the audio source has not returned from a read %s after it was cancelled (a driver stuck "+
			"inside the device call): only restarting the process can recover it; under systemd the watchdog does",
			m.clock.Since(w.kickedAt).Round(time.Second))
		m.log.Error().Msg(d)
		m.sendEvent(Entry{Kind: KindFault, Reason: "audio-stuck", Detail: d})
	}
}

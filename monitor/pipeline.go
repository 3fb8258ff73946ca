package monitor

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"time"

	"taut/capture"
)

// bufferSeconds is the audio queued between capture and analysis by default.
const bufferSeconds = 4

// block is one read of the source, handed from capture to analysis.
type block struct {
	buf     []float32
	n       int    // valid samples in buf
	gap     int64  // frames the source lost (or skipped, if idle) before these samples
	reason  string // the gap's reason; "" when none
	dropped int64  // frames the monitor dropped before these samples (analysis behind)
}

// blockFrames returns frames per read: about 20 ms, at least 256.
func (m *Monitor) blockFrames() int { return max(256, m.format.SampleRate/50) }

// pool makes the fixed set of blocks that circulate between capture and analysis: the
// whole of the monitor's audio memory.
func (m *Monitor) pool() (free, full chan *block) {
	n := m.opts.BufferBlocks
	if n <= 0 {
		n = bufferSeconds * m.format.SampleRate / m.blockFrames()
	}
	free, full = make(chan *block, n), make(chan *block, n)
	for range n {
		free <- &block{buf: make([]float32, m.blockFrames()*m.format.Channels)}
	}
	return free, full
}

// capture reads the source until EOF, an error or ctx ends, and queues the blocks for
// analysis. With DropWhenBehind it never waits for analysis: when no block is free the
// audio is read into scratch and dropped, counted and reported with the next block.
// With Options.Reopen a failed or stalled source is replaced (see reopen) and capture
// goes on. It closes full when done and returns the source's error (nil at EOF or on
// ctx end).
func (m *Monitor) capture(ctx context.Context, free, full chan *block) error {
	defer close(full)
	defer m.closeOwned()
	defer m.gate.release()
	scratch := make([]float32, m.blockFrames()*m.format.Channels)
	var pending block // gap and drops not yet handed on
	drops := logLimiter{every: 10 * time.Second}
	var live liveSync
	readCtx := m.gate.arm(ctx)
	for {
		b := m.takeFree(ctx, free)
		if b == nil && ctx.Err() != nil {
			return nil
		}
		dst := scratch
		if b != nil {
			dst = b.buf
		}
		n, err := m.src.Read(readCtx, dst)
		err = explainRead(ctx, readCtx, err)
		gap, err := pending.addGap(err)
		frames := int64(n / m.format.Channels)
		if frames > 0 && m.reopener.gapPending {
			gap += m.reopenGap(frames, &pending)
		}
		if m.opts.LiveClock && frames > 0 {
			gap += m.resync(&live, frames+gap, &pending)
		}
		m.captured.Add(frames + gap)
		if frames > 0 {
			m.stats.framesRead.Add(frames)
			m.reopener.lastFrame = m.clock.Now()
			m.stats.frameAt(m.clock.Since(m.stats.base))
		}
		switch {
		case b == nil && frames > 0:
			pending.dropped += frames
			m.stats.framesDropped.Add(frames)
			drops.event(m.log).Int64("dropped_frames", pending.dropped).Msg("analysis is behind: audio dropped")
		case b != nil:
			b.n, b.gap, b.reason, b.dropped = n, pending.gap, pending.reason, pending.dropped
			pending = block{}
			full <- b // never blocks: full has room for every block of the pool
		}
		if done, rerr := m.endOfRead(ctx, err); done {
			if rerr != nil && m.opts.Reopen != nil && ctx.Err() == nil {
				ok, ferr := m.reopen(ctx, rerr)
				if ok {
					readCtx = m.gate.arm(ctx)
					continue
				}
				rerr = ferr // nil when ctx ended while reopening
			}
			m.flushPending(ctx, &pending, free, full)
			return rerr
		}
	}
}

// takeFree returns a free block; with DropWhenBehind it returns nil at once when none
// is free, otherwise it waits (nil when ctx ends).
func (m *Monitor) takeFree(ctx context.Context, free chan *block) *block {
	if m.opts.DropWhenBehind {
		select {
		case b := <-free:
			return b
		default:
			return nil
		}
	}
	select {
	case b := <-free:
		return b
	case <-ctx.Done():
		return nil
	}
}

// addGap folds a *capture.Gap returned by Read into the pending gap and returns the
// frames it adds and the error without it.
func (p *block) addGap(err error) (int64, error) {
	var g *capture.Gap
	if !errors.As(err, &g) {
		return 0, err
	}
	frames := max(g.Frames, 0)
	p.gap += frames
	if p.reason == "" || p.reason == capture.GapIdle {
		p.reason = g.Reason
	}
	if g.Frames < 0 && p.reason != capture.GapIdle {
		p.reason += " (length unknown)"
	}
	return frames, nil
}

// endOfRead decides whether capture stops after a Read error.
func (m *Monitor) endOfRead(ctx context.Context, err error) (bool, error) {
	switch {
	case err == nil:
		return false, nil
	case errors.Is(err, io.EOF):
		return true, nil
	case ctx.Err() != nil:
		return true, nil
	}
	return true, fmt.Errorf("read audio: %w", err)
}

// flushPending hands on a gap or drop still pending at the end, waiting for analysis
// to free a block, so the journal and the stop entry's time include it.
func (m *Monitor) flushPending(ctx context.Context, p *block, free, full chan *block) {
	if p.gap == 0 && p.dropped == 0 {
		return
	}
	select {
	case b := <-free:
		b.n, b.gap, b.reason, b.dropped = 0, p.gap, p.reason, p.dropped
		full <- b
	case <-ctx.Done():
		m.log.Warn().Int64("dropped_frames", p.dropped).Int64("gap_frames", p.gap).
			Msg("stopped before the last gap was journaled")
	}
}

// liveSync anchors the sample clock of a live source to the monotonic clock.
type liveSync struct {
	start   time.Time
	counted int64 // frames (and gap frames) since start
	ok      bool
}

// resync compares, for a live source, the frames counted with the time elapsed since
// the first frames. When the source stalled and the frames fall more than
// max(StallAfter, 2 s) behind, the shortfall becomes a "stall" gap before the frames
// just read, so the sample clock keeps time with the world. It returns the gap frames.
func (m *Monitor) resync(s *liveSync, frames int64, p *block) int64 {
	now := m.clock.Now()
	if !s.ok {
		s.start, s.counted, s.ok = now.Add(-durationS(float64(frames)/m.rateHz)), frames, true
		return 0
	}
	s.counted += frames
	lag := int64(now.Sub(s.start).Seconds()*m.rateHz) - s.counted
	if float64(lag) <= math.Max(m.opts.StallAfter.Seconds(), 2)*m.rateHz {
		return 0
	}
	p.gap += lag
	if p.reason == "" {
		p.reason = "stall"
	}
	s.counted += lag
	return lag
}

package monitor

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"sync"
	"time"
)

// Defaults and bounds of source reopening (engineering choices, not from a source).
const (
	defaultReopenMin = time.Second
	defaultReopenMax = 30 * time.Second
	// reopenStable is how long a reopened source must deliver before a new failure
	// starts the backoff from ReopenMin again. A source that fails sooner (a device
	// that comes back broken) keeps the grown wait, so a flapping device cannot make
	// the monitor reopen it in a tight loop.
	reopenStable = time.Minute
)

// stallError is the cause given to a Read cancelled by the stall watchdog.
type stallError struct{ after time.Duration }

func (e *stallError) Error() string {
	return fmt.Sprintf("the audio source delivered no frames for %s", e.after.Round(time.Second))
}

// readGate holds the cancel function of the capture goroutine's current Read context,
// so that the stall watchdog can cancel a Read that hangs.
type readGate struct {
	mu     sync.Mutex
	cancel context.CancelCauseFunc
}

// arm returns a fresh context for Reads, derived from parent, releasing the previous one.
func (g *readGate) arm(parent context.Context) context.Context {
	ctx, cancel := context.WithCancelCause(parent)
	g.mu.Lock()
	if g.cancel != nil {
		g.cancel(nil)
	}
	g.cancel = cancel
	g.mu.Unlock()
	return ctx
}

// kick cancels the current Read context with cause.
func (g *readGate) kick(cause error) {
	g.mu.Lock()
	defer g.mu.Unlock()
	if g.cancel != nil {
		g.cancel(cause)
	}
}

// release cancels the last Read context (end of capture).
func (g *readGate) release() {
	g.mu.Lock()
	defer g.mu.Unlock()
	if g.cancel != nil {
		g.cancel(nil)
		g.cancel = nil
	}
}

// explainRead turns the error of a Read that the stall watchdog cancelled into the stall.
func explainRead(ctx, readCtx context.Context, err error) error {
	if err == nil || ctx.Err() != nil || readCtx.Err() == nil {
		return err
	}
	var se *stallError
	if cause := context.Cause(readCtx); errors.As(cause, &se) {
		return se
	}
	return err
}

// reopener is the capture goroutine's reopening state.
type reopener struct {
	owned      bool          // the current source came from Options.Reopen: the monitor closes it
	wait       time.Duration // the next backoff
	reopenedAt time.Time     // when the current source was put in place (zero: the original)
	lastFrame  time.Time     // clock time of the latest frames read
	gapPending bool          // the next frames are the first of a reopened source
	gapFrom    time.Time     // audio is lost from here to the reopened source's first frames
}

func (m *Monitor) reopenBounds() (lo, hi time.Duration) {
	lo, hi = m.opts.ReopenMin, m.opts.ReopenMax
	if lo <= 0 {
		lo = defaultReopenMin
	}
	if hi <= 0 {
		hi = defaultReopenMax
	}
	return lo, max(lo, hi)
}

// reopen replaces a source that failed with cause: it closes it and calls
// Options.Reopen until a source with the same format is in place (true) or ctx ends
// (false, nil). A source with another format ends the run with an error: the analysis
// was set up for the old one, and only a restart can adapt.
func (m *Monitor) reopen(ctx context.Context, cause error) (bool, error) {
	r := &m.reopener
	m.stats.sourceFailures.Add(1)
	m.reopening.Store(true)
	defer m.reopening.Store(false)
	var se *stallError
	if !errors.As(cause, &se) { // the watchdog has already reported a stall
		d := fmt.Sprintf("audio source failed: %v; closing and reopening it", cause)
		m.log.Error().Err(cause).Msg("audio source failed; reopening it")
		m.sendEvent(Entry{Kind: KindFault, Reason: "audio", Detail: d})
	}
	failedAt := m.clock.Now()
	if !r.gapPending { // else a reopened source failed before its first frames: the gap goes on
		r.gapFrom = r.lastFrame
		if r.gapFrom.IsZero() {
			r.gapFrom = failedAt
		}
	}
	m.closeSource()
	lo, hi := m.reopenBounds()
	if r.reopenedAt.IsZero() || m.clock.Since(r.reopenedAt) >= reopenStable {
		r.wait = lo
	} else {
		// The last reopened source came back broken: wait before trying again.
		if !m.sleep(ctx, r.wait) {
			return false, nil
		}
		r.wait = min(2*r.wait, hi)
	}
	for attempt := 1; ; attempt++ {
		m.stats.reopenAttempts.Add(1)
		src, err := m.opts.Reopen(ctx)
		if err == nil && src != nil && src.Format() != m.format {
			f := src.Format()
			closeQuietly(src)
			return false, fmt.Errorf("reopened audio source delivers %d Hz, %d channel(s); the run started with %d Hz, %d channel(s): restart to listen at the new format",
				f.SampleRate, f.Channels, m.format.SampleRate, m.format.Channels)
		}
		if err == nil && src == nil {
			err = errors.New("reopen returned no source")
		}
		if err == nil {
			m.src, r.owned, r.reopenedAt, r.gapPending = src, true, m.clock.Now(), true
			m.stats.reopens.Add(1)
			m.srcGen.Add(1)
			m.log.Info().Int("attempts", attempt).Dur("down", m.clock.Since(failedAt).Round(time.Millisecond)).
				Msg("audio source reopened")
			return true, nil
		}
		if ctx.Err() != nil {
			return false, nil
		}
		m.log.Warn().Err(err).Int("attempt", attempt).Dur("retry_in", r.wait).Msg("reopen audio source failed")
		if attempt == 1 {
			m.sendEvent(Entry{Kind: KindFault, Reason: "audio-reopen", Detail: fmt.Sprintf(
				"cannot reopen the audio source: %v; retrying, first after %s, then up to every %s", err, r.wait, hi)})
		}
		if !m.sleep(ctx, r.wait) {
			return false, nil
		}
		r.wait = min(2*r.wait, hi)
	}
}

// sleep waits d on the monitor's clock; false when ctx ended first.
func (m *Monitor) sleep(ctx context.Context, d time.Duration) bool {
	select {
	case <-ctx.Done():
		return false
	case <-m.clock.After(d):
		return true
	}
}

// reopenGap returns the frames lost between the old source's last frames and the
// frames just read from a reopened source (the time between, less those frames), and
// marks them as a "reopen" gap in p.
func (m *Monitor) reopenGap(frames int64, p *block) int64 {
	r := &m.reopener
	r.gapPending = false
	lost := int64(math.Round(m.clock.Since(r.gapFrom).Seconds()*m.rateHz)) - frames
	lost = max(lost, 0)
	r.gapFrom = time.Time{}
	p.gap += lost
	p.reason = reasonReopen
	return lost
}

// reasonReopen is the gap reason of audio lost while the source was reopened.
const reasonReopen = "reopen"

// closeSource closes the current source if it can be closed.
func (m *Monitor) closeSource() {
	if err := closeQuietly(m.src); err != nil {
		m.log.Warn().Err(err).Msg("close failed audio source")
	}
}

// closeOwned closes the current source if the monitor opened it (Options.Reopen).
func (m *Monitor) closeOwned() {
	if m.reopener.owned {
		m.closeSource()
	}
}

func closeQuietly(src Source) error {
	if c, ok := src.(io.Closer); ok {
		return c.Close()
	}
	return nil
}

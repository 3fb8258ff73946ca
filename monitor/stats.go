package monitor

import (
	"math"
	"sync/atomic"
	"time"
)

var posInf = math.Inf(1)

// Stats counts what the monitor has seen since it started.
type Stats struct {
	FramesRead    int64 // frames delivered by the source
	FramesDropped int64 // frames dropped because analysis fell behind
	Gaps          int64 // gaps journaled (lost audio: overflow, drops, stalls); idle gaps are not counted
	Notes         int64 // onsets analysed to a pitch
	NoPitch       int64 // onsets that gave no usable pitch (silence, noise, clipping)
	Readings      int64 // notes matched to a string
	Unmatched     int64 // notes no string could claim
	JournalErrors int64 // failed journal appends (the journal keeps and retries them)
	// LastFrame is the clock time when the source last delivered frames. On the real
	// clock it carries a monotonic reading (it is the monitor's creation time plus the
	// monotonic time elapsed since), so time.Since(LastFrame) is immune to wall-clock
	// jumps; its wall part drifts from the wall clock by the jumps since then.
	LastFrame time.Time

	SourceFailures int64 // times the source failed or stalled and a reopen began (Options.Reopen)
	ReopenAttempts int64 // calls of Options.Reopen, failed or not
	Reopens        int64 // reopens that put a new source in place
}

// counters are the atomic form of Stats, written by the capture and analysis goroutines.
type counters struct {
	framesRead, framesDropped, gaps, notes, noPitch atomic.Int64
	readings, unmatched, journalErrors              atomic.Int64
	lastFrameNs                                     atomic.Int64 // 1 + ns after base; 0: none yet
	base                                            time.Time    // set in New, before any goroutine
	sourceFailures, reopenAttempts, reopens         atomic.Int64
}

func (c *counters) snapshot() Stats {
	s := Stats{
		FramesRead: c.framesRead.Load(), FramesDropped: c.framesDropped.Load(), Gaps: c.gaps.Load(),
		Notes: c.notes.Load(), NoPitch: c.noPitch.Load(), Readings: c.readings.Load(),
		Unmatched: c.unmatched.Load(), JournalErrors: c.journalErrors.Load(),
		SourceFailures: c.sourceFailures.Load(), ReopenAttempts: c.reopenAttempts.Load(), Reopens: c.reopens.Load(),
	}
	if ns := c.lastFrameNs.Load(); ns != 0 {
		s.LastFrame = c.base.Add(time.Duration(ns - 1))
	}
	return s
}

// frameAt records that frames arrived now, measured from base on clock's monotonic
// time (Since).
func (c *counters) frameAt(elapsed time.Duration) { c.lastFrameNs.Store(int64(elapsed) + 1) }

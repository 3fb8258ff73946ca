package monitor

import (
	"context"
	"errors"
	"fmt"
	"math/rand/v2"
	"sync/atomic"
	"time"

	"github.com/jonboulle/clockwork"
	"github.com/rs/zerolog"

	"taut/capture"
	"taut/monitor/instrument"
	"taut/pitch"
)

// Source delivers interleaved float32 samples; capture's sources implement it.
// Read returns a *capture.Gap together with valid samples when frames were lost
// before them, and io.EOF at the end.
type Source interface {
	Format() capture.Format
	Read(ctx context.Context, dst []float32) (int, error)
}

// Journal records entries durably. Append assigns e.Seq. An error means the entry
// is held and retried by the journal, not lost; the monitor reports it and goes on.
type Journal interface {
	Append(e *Entry) error
}

// Exciter drives one string (a GPIO pulse to a solenoid or electromagnet).
type Exciter interface {
	Strike(ctx context.Context, id string) error
}

// Options configure a Monitor. Config and Source are required.
type Options struct {
	Config  *instrument.Config
	Source  Source
	Journal Journal // nil: entries go to the sinks only
	Sinks   []Sink
	Exciter Exciter // nil: no rounds (Excite may still be called, e.g. by a simulation)
	Logger  zerolog.Logger

	// Resume is the recovered history (journal.Recovery.Entries, oldest first): each
	// string's readings and last state are restored so a restart loses nothing.
	Resume []Entry
	// StartTime is the wall time of sample 0; zero means the clock's now.
	StartTime time.Time
	// LiveClock stamps entries with the wall clock and measures elapsed time with the
	// monotonic clock, recording wall-clock jumps as KindClock entries. False (replay,
	// simulation): Time = StartTime + sample time and MonoS = sample time.
	LiveClock bool
	// Clock is the time source for LiveClock, rounds and the stall watchdog; nil means
	// the real clock.
	Clock clockwork.Clock
	// StallAfter raises a fault when no frame arrived for this long; 0 disables. With
	// Reopen set, a stalled source is also cancelled, closed and reopened.
	StallAfter time.Duration
	// Reopen, if set, opens the audio source again after it failed (a Read error other
	// than a gap or io.EOF: a USB microphone unplugged) or stalled (no frame for
	// StallAfter: a driver that stopped delivering). The failed source is closed first
	// when it has a Close method, so Close must tolerate a second call by its owner.
	// Attempts are spaced by capped exponential backoff (ReopenMin doubling up to
	// ReopenMax) until one succeeds or ctx ends; the lost time is journaled as a
	// KindGap with reason "reopen". The new source must have the same Format. Nil: a
	// failed source ends the run (right for files and stdin, which cannot be reopened).
	Reopen func(ctx context.Context) (Source, error)
	// ReopenMin and ReopenMax bound the wait between reopen attempts; 0 means 1 s and
	// 30 s.
	ReopenMin, ReopenMax time.Duration
	// DropWhenBehind drops audio (counted, journaled as a "dropped" gap) when analysis
	// falls behind, so a live device never overflows. False makes capture wait for
	// analysis instead: right for files and pipes, which then lose nothing.
	DropWhenBehind bool
	// BufferBlocks bounds the blocks (about 20 ms each) queued between capture and
	// analysis; 0 means 4 s of audio.
	BufferBlocks int
	// RunID identifies this run in every entry; "" makes one from StartTime.
	RunID string
}

// Monitor turns audio into readings, states and journal entries. Run drives it.
type Monitor struct {
	cfg     *instrument.Config
	lim     limits
	src     Source
	format  capture.Format
	rateHz  float64
	journal Journal
	sinks   []Sink
	exciter Exciter
	log     zerolog.Logger
	clock   clockwork.Clock
	opts    Options
	runID   string
	quietHr quietHours

	// Owned by the analysis goroutine (Run).
	analyzer    *pitch.Analyzer
	note        pitch.Note
	trackers    []*tracker
	matcher     matcher
	lanes       []*lane
	fit         fitScratch
	frame       int64 // analysis sample clock: frames and gap frames since sample 0
	nextQuiet   float64
	entry       Entry // reused for every entry, so emitting allocates nothing
	stateEntry  Entry
	prev        State
	clk         liveClock
	jDown       bool // journal appends are failing
	resumed     int
	resumeClock *Entry  // a clock entry about resumed history from the future, emitted after start
	hintMinHz   float64 // the analyser's search range
	hintMaxHz   float64
	clipLog     logLimiter

	captured  atomic.Int64 // capture-side sample clock, for Excite by the round scheduler
	gate      readGate     // lets the stall watchdog cancel a Read that hangs
	reopener  reopener     // owned by the capture goroutine
	srcGen    atomic.Int64 // bumped when a reopened source takes over
	reopening atomic.Bool  // capture is in reopen
	excites   exciteLog
	events    chan Entry // faults from other goroutines, emitted by the analysis goroutine
	stats     counters
}

// New checks the options and prepares the analyser, the string trackers and the
// listening lanes (one per input channel that strings are heard on).
func New(opts Options) (*Monitor, error) {
	if err := checkOptions(&opts); err != nil {
		return nil, err
	}
	m := &Monitor{
		cfg: opts.Config, lim: limitsFrom(opts.Config), src: opts.Source, format: opts.Source.Format(),
		journal: opts.Journal, sinks: opts.Sinks, exciter: opts.Exciter, log: opts.Logger,
		clock: opts.Clock, opts: opts, runID: opts.RunID, events: make(chan Entry, 64),
		clipLog: logLimiter{every: time.Minute},
	}
	m.rateHz = float64(m.format.SampleRate)
	if m.clock == nil {
		m.clock = clockwork.NewRealClock()
	}
	m.stats.base = m.clock.Now()
	if m.opts.StartTime.IsZero() {
		m.opts.StartTime = m.clock.Now()
	}
	m.opts.StartTime = m.opts.StartTime.Round(0)
	if m.runID == "" {
		m.runID = fmt.Sprintf("%s-%04x", m.opts.StartTime.UTC().Format("20060102T150405Z"), rand.Uint32N(1<<16))
	}
	var err error
	if m.quietHr, err = parseQuietHours(m.cfg.Exciter.QuietHours); err != nil {
		return nil, err
	}
	if err := m.setupStrings(); err != nil {
		return nil, err
	}
	if err := m.setupLanes(); err != nil {
		return nil, err
	}
	m.restore(opts.Resume)
	return m, nil
}

func checkOptions(o *Options) error {
	switch {
	case o.Config == nil:
		return errors.New("monitor: no config")
	case o.Source == nil:
		return errors.New("monitor: no audio source")
	case len(o.Config.Instrument.Strings) == 0:
		return errors.New("monitor: the config has no strings to listen for")
	}
	if err := o.Source.Format().Validate(); err != nil {
		return fmt.Errorf("monitor: audio source: %w", err)
	}
	return nil
}

// setupStrings checks every string's physics and target and makes its tracker.
func (m *Monitor) setupStrings() error {
	strs := m.cfg.Instrument.Strings
	m.trackers = make([]*tracker, len(strs))
	for i := range strs {
		s := &strs[i]
		if err := s.Phys.Validate(); err != nil {
			return fmt.Errorf("monitor: string %s: %w", s.ID, err)
		}
		if !(s.TargetHz > 0) {
			return fmt.Errorf("monitor: string %s: target %v Hz; want a positive frequency", s.ID, s.TargetHz)
		}
		if s.Channel > m.format.Channels {
			return fmt.Errorf("monitor: string %s is on input channel %d but the input has %d channel(s)",
				s.ID, s.Channel, m.format.Channels)
		}
		m.trackers[i] = newTracker(&m.lim)
	}
	m.matcher = matcher{strings: strs, trackers: m.trackers, lim: &m.lim}
	m.nextQuiet = posInf
	return nil
}

// Stats returns the monitor's counters; safe to call from any goroutine.
func (m *Monitor) Stats() Stats { return m.stats.snapshot() }

// RunID returns the identifier stamped on this run's entries.
func (m *Monitor) RunID() string { return m.runID }

// Excite records that string id was driven at sample frame (the monitor's sample
// clock: frames and gap frames since sample 0). An onset within
// [frame, frame + Exciter.Listen) is attributed to that string. Safe for concurrent use.
func (m *Monitor) Excite(id string, frame int64) {
	idx := m.stringIndex(id)
	if idx < 0 {
		m.log.Warn().Str("string", id).Msg("excite: no such string in the config")
		return
	}
	m.excites.add(idx, frame, frame+int64(m.lim.exciteListenS*m.rateHz))
}

// Frame returns the capture side's sample clock: the frame the next sample read will
// have. The round scheduler passes it to Excite.
func (m *Monitor) Frame() int64 { return m.captured.Load() }

func (m *Monitor) stringIndex(id string) int {
	for i := range m.cfg.Instrument.Strings {
		if m.cfg.Instrument.Strings[i].ID == id {
			return i
		}
	}
	return -1
}

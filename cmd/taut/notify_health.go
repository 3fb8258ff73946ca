package main

import (
	"fmt"
	"strings"
	"sync"
	"time"

	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/journal"
)

// healthState is what the health check remembers between checks. Audio flow is judged
// by the monitor's frame counter moving, timed with the monotonic clock, so a wall
// clock that jumps (boards without a real-time clock) cannot fake or hide a stall.
type healthState struct {
	frames    int64     // FramesRead at the last change
	changedAt time.Time // when it last changed (monotonic)
	backlog   int       // journal backlog at the previous check
	written   uint64    // journal entries written at the previous check
}

// ready implements pipeline: audio frames arrived and the status page, if any, serves.
// The journal was recovered before the monitor existed.
func (l *listener) ready() bool {
	m := l.mon.Load()
	if m == nil || m.Stats().FramesRead == 0 {
		return false
	}
	if l.httpAddr != "" {
		s := l.status.Load()
		return s != nil && s.Addr() != nil
	}
	return true
}

// health implements pipeline: ok (feed the watchdog) while audio frames arrived within
// frameAge and the journal is not about to lose entries; why says what is wrong or
// degraded ("" when all is well).
//
// A journal that returns write errors (a full or read-only disk) is degraded, not
// dead: the writer holds entries in memory and retries, the fault lamp, /healthz and
// STATUS= show it, and the restorer can free space without losing the night. A restart
// by the watchdog would throw those held entries away and fix nothing, so the
// watchdog is only starved once the held entries near the journal's limit, when
// losing them is certain anyway and a fresh process is the better bet.
func (l *listener) health(h *healthState, frameAge time.Duration) (bool, string) {
	now := time.Now()
	var problems, degraded []string
	if m := l.mon.Load(); m != nil {
		st := m.Stats()
		if st.FramesRead != h.frames || h.changedAt.IsZero() {
			h.frames, h.changedAt = st.FramesRead, now
		}
		if age := now.Sub(h.changedAt); age > frameAge {
			what := fmt.Sprintf("audio: no frames for %s", age.Round(time.Second))
			if st.SourceFailures > st.Reopens {
				what += fmt.Sprintf(", reopening the input (%d attempts)", st.ReopenAttempts)
			}
			problems = append(problems, what)
		}
	}
	if l.journal != nil {
		js := l.journal.Stats()
		draining := js.Backlog < h.backlog && js.Written > h.written
		h.backlog, h.written = js.Backlog, js.Written
		switch {
		case draining:
		case js.LastError != nil && js.Backlog >= journalBacklogStarve:
			problems = append(problems, fmt.Sprintf("journal failing and %d entries held, near the limit: %v", js.Backlog, js.LastError))
		case js.LastError != nil:
			degraded = append(degraded, fmt.Sprintf("journal failing, %d entries held and retried: %v", js.Backlog, js.LastError))
		case js.Backlog > 0:
			degraded = append(degraded, fmt.Sprintf("journal: %d entries waiting to be written", js.Backlog))
		}
	}
	return len(problems) == 0, strings.Join(append(problems, degraded...), "; ")
}

// journalBacklogStarve is the held-entry count at which a failing journal starves the
// watchdog: 90 % of the writer's default backlog.
const journalBacklogStarve = journal.DefaultBacklogEntries * 9 / 10

// summary implements pipeline: the strings part of the STATUS= line.
func (l *listener) summary() string { return l.states.summary() }

// stringStates is a monitor.Sink that keeps every string's latest state for the
// STATUS= line, seeded from the journal's recovered history.
type stringStates struct {
	mu    sync.Mutex
	index map[string]int
	state []monitor.State
}

func newStringStates(cfg *instrument.Config, rec *journal.Recovery) *stringStates {
	s := &stringStates{index: map[string]int{}, state: make([]monitor.State, len(cfg.Instrument.Strings))}
	for i, str := range cfg.Instrument.Strings {
		s.index[str.ID] = i
	}
	if rec != nil {
		for _, e := range rec.Entries {
			s.Publish(e)
		}
	}
	return s
}

// Publish takes the state of a reading or state entry.
func (s *stringStates) Publish(e monitor.Entry) {
	if e.String == "" || (e.Kind != monitor.KindReading && e.Kind != monitor.KindState) {
		return
	}
	s.mu.Lock()
	defer s.mu.Unlock()
	if i, ok := s.index[e.String]; ok && e.State <= monitor.Alarm {
		s.state[i] = e.State
	}
}

// summary is e.g. "36 strings: 20 steady, 10 settling, 1 alarm, 5 quiet".
func (s *stringStates) summary() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	var count [monitor.Alarm + 1]int
	for _, st := range s.state {
		count[st]++
	}
	var parts []string
	for _, st := range []monitor.State{monitor.Steady, monitor.Settling, monitor.OffTarget, monitor.Alarm, monitor.Quiet} {
		if count[st] > 0 {
			parts = append(parts, fmt.Sprintf("%d %s", count[st], st))
		}
	}
	return fmt.Sprintf("%d strings: %s", len(s.state), strings.Join(parts, ", "))
}

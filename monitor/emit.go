package monitor

import (
	"time"

	"github.com/rs/zerolog"
)

// newEntry resets the monitor's reusable entry for an event at sample time tS.
func (m *Monitor) newEntry(kind Kind, tS float64) *Entry {
	m.entry = Entry{Kind: kind}
	m.stamp(&m.entry, tS)
	return &m.entry
}

// emit journals e first (Append assigns Seq) and then hands it to every sink. A failed
// append does not lose the entry (the journal holds and retries it); it is reported
// once as a fault entry, and again only after the journal recovered in between.
func (m *Monitor) emit(e *Entry) {
	e.Run = m.runID
	if m.journal != nil {
		if err := m.journal.Append(e); err != nil {
			m.journalFailed(e, err)
		} else if m.jDown {
			m.jDown = false
			m.log.Info().Msg("journal writes work again")
		}
	}
	for _, s := range m.sinks {
		s.Publish(*e)
	}
}

func (m *Monitor) journalFailed(cause *Entry, err error) {
	m.stats.journalErrors.Add(1)
	if m.jDown {
		return
	}
	m.jDown = true
	m.log.Error().Err(err).Msg("journal append failed; entries are held in memory and retried until the disk " +
		"takes them: check free space on the journal's file system and that it is mounted read-write")
	f := Entry{Kind: KindFault, Time: cause.Time, MonoS: cause.MonoS, Run: m.runID, Reason: "journal",
		Detail: "journal write failed, entries held in memory and retried: " + err.Error()}
	_ = m.journal.Append(&f) // held with the rest; the first error was reported above
	for _, s := range m.sinks {
		s.Publish(f)
	}
}

// logLimiter lets a repeated warning through at most once per period; the rest go to
// debug, with the count of those held back on the next warning.
type logLimiter struct {
	every      time.Duration
	last       time.Time
	suppressed int
}

func (r *logLimiter) event(log zerolog.Logger) *zerolog.Event {
	now := time.Now()
	if !r.last.IsZero() && now.Sub(r.last) < r.every {
		r.suppressed++
		return log.Debug()
	}
	ev := log.Warn()
	if r.suppressed > 0 {
		ev = ev.Int("suppressed", r.suppressed)
	}
	r.last, r.suppressed = now, 0
	return ev
}

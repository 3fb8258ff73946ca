package monitor

import (
	"fmt"
	"math"
	"strings"
	"time"
)

// restore rebuilds each string's series, latches and state from recovered journal
// entries (oldest first) by replaying its readings through the tracker, then takes the
// last state the journal recorded for it. Resumed readings sit at negative times on the
// run timeline (their wall time before StartTime). The per-partial baselines are not in
// the journal and are learnt again from new steady readings; the B baseline resumes.
func (m *Monitor) restore(hist []Entry) {
	shift := m.resumeShift(hist)
	type last struct {
		state  State
		reason string
		seen   bool
	}
	lasts := make([]last, len(m.trackers))
	unknown := 0
	for i := range hist {
		e := &hist[i]
		if e.String == "" || (e.Kind != KindReading && e.Kind != KindState) {
			continue
		}
		idx := m.stringIndex(e.String)
		if idx < 0 {
			unknown++
			continue
		}
		if e.Kind == KindReading {
			r := reading{t: e.Time.Sub(m.opts.StartTime).Seconds() - shift, cents: e.Cents, tensionN: e.TensionN,
				margin: e.Margin, b: e.Inharmonicity, partials: e.Partials}
			for k := range r.dev {
				r.dev[k] = math.NaN()
			}
			m.trackers[idx].update(&r, &m.lim, &m.fit)
		}
		lasts[idx] = last{state: e.State, reason: e.Reason, seen: true}
	}
	for idx, l := range lasts {
		tr := m.trackers[idx]
		if !l.seen {
			continue
		}
		tr.state, tr.reason = l.state, l.reason
		if l.state == Alarm && strings.Contains(l.reason, "jump") && !tr.jump && tr.hasLast {
			tr.jump, tr.jumpRefCents = true, tr.lastCents+m.lim.jumpCents
		}
		if tr.hasLast {
			m.resumed++
			m.noteQuiet(tr)
		}
	}
	if unknown > 0 {
		m.log.Warn().Int("entries", unknown).Msg("resume: journal entries name strings not in this config; ignored")
	}
}

// resumeShift returns how far (seconds) the resumed history must move back so that
// none of it lies after StartTime. A journal whose latest entry is later than the
// clock now means the wall clock went back across the restart (a board without a
// real-time clock booting with an old time): the history is then placed to end just
// at the start, the move is journaled as a KindClock entry after the start entry,
// and the series, quiet deadlines and rates stay in order. Otherwise 0.
func (m *Monitor) resumeShift(hist []Entry) float64 {
	var latest time.Time
	for i := range hist {
		if hist[i].Time.After(latest) {
			latest = hist[i].Time
		}
	}
	if !latest.After(m.opts.StartTime) {
		return 0
	}
	behind := latest.Sub(m.opts.StartTime).Seconds()
	m.resumeClock = &Entry{Kind: KindClock, ClockJumpS: -behind, Detail: fmt.Sprintf(
		"the wall clock (%s) is %.0f s behind the journal's latest entry (%s): it went back across the restart "+
			"(a board without a real-time clock?); the resumed history is placed to end at this start",
		m.opts.StartTime.UTC().Format(time.RFC3339), behind, latest.UTC().Format(time.RFC3339))}
	m.log.Warn().Float64("clock_behind_s", behind).Msg("wall clock is behind the journal; resumed history moved back")
	return behind
}

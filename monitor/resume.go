package monitor

import (
	"math"
	"strings"
)

// restore rebuilds each string's series, latches and state from recovered journal
// entries (oldest first) by replaying its readings through the tracker, then takes the
// last state the journal recorded for it. Resumed readings sit at negative times on the
// run timeline (their wall time before StartTime). The per-partial baselines are not in
// the journal and are learnt again from new steady readings; the B baseline resumes.
func (m *Monitor) restore(hist []Entry) {
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
			r := reading{t: e.Time.Sub(m.opts.StartTime).Seconds(), cents: e.Cents, tensionN: e.TensionN,
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

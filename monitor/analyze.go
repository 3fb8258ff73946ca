package monitor

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"taut/pitch"
	"taut/pitch/note"
)

// begin opens a note at an onset: it decides the candidate strings (a one-string pickup
// channel, else the strings the exciter just drove, else every string of the lane),
// restricts the pitch search to their plausible range and sizes the window for it.
func (m *Monitor) begin(l *lane, onset int64) {
	l.open, l.onset, l.clipped = true, onset, 0
	l.win = l.win[:0]
	l.skip = pitch.AttackSkip(m.rateHz)
	l.by, l.noteCands = "", l.noteCands[:0]
	switch {
	case l.pick > 0 && len(l.cands) == 1 && m.cfg.Instrument.Strings[l.cands[0]].Channel == l.pick:
		l.by, l.noteCands = byChannel, append(l.noteCands, l.cands[0])
	default:
		l.noteCands = m.excites.take(l.noteCands, onset, l.hears)
		switch len(l.noteCands) {
		case 0:
			l.noteCands = append(l.noteCands, l.cands...)
		case 1:
			l.by = byExciter
		}
	}
	t := m.seconds(onset)
	minHz, maxHz := m.matcher.hintRange(l.noteCands, t)
	l.hint = pitch.Hint{MinHz: math.Max(minHz, m.hintMinHz), MaxHz: math.Min(maxHz, m.hintMaxHz)}
	l.need = min(pitch.WindowLen(m.rateHz, l.hint.MinHz), cap(l.win))
}

// hears reports whether string idx is heard on the lane.
func (l *lane) hears(idx int) bool {
	for _, c := range l.cands {
		if c == idx {
			return true
		}
	}
	return false
}

// analyze measures the collected window and turns the note into a reading of a string
// or an unmatched entry.
func (m *Monitor) analyze(l *lane) {
	t := m.seconds(l.onset)
	if float64(l.clipped) > clipShare*float64(len(l.win)) {
		m.noPitch(fmt.Errorf("%w: %d of %d samples at full scale; lower the input gain", pitch.ErrClipped,
			l.clipped, len(l.win)), l)
		return
	}
	if err := m.analyzer.Analyze(&m.note, l.win, l.hint); err != nil {
		m.noPitch(err, l)
		return
	}
	m.heard(l, t)
}

// heard attributes the analysed note (m.note) with onset at sample time t and records
// it: the reading path after pitch analysis.
func (m *Monitor) heard(l *lane, t float64) {
	m.stats.notes.Add(1)
	var mt match
	if l.by != "" {
		mt = m.matcher.direct(l.noteCands[0], m.note.FundamentalHz, l.by)
	} else {
		mt = m.matcher.nearest(l.noteCands, m.note.FundamentalHz, t)
	}
	m.advanceQuiet(t)
	if mt.idx < 0 {
		m.emitUnmatched(&mt, t)
		return
	}
	m.record(mt.idx, mt.cents, t, mt.by)
}

// noPitch counts an onset that gave no usable pitch. Clipping is worth a warning (the
// gain is too high); the rest (a knock, noise, a decayed note) only a debug line.
func (m *Monitor) noPitch(err error, l *lane) {
	m.stats.noPitch.Add(1)
	ev := m.log.Debug()
	if errors.Is(err, pitch.ErrClipped) {
		ev = m.clipLog.event(m.log)
	}
	ev.Err(err).Int("lane_channel", l.pick).Float64("onset_s", m.seconds(l.onset)).Msg("note without a usable pitch")
}

// record turns the analysed note into a reading of string idx, updates the string's
// state and emits the reading (and the state change, if any).
func (m *Monitor) record(idx int, cents, t float64, by string) {
	s := &m.cfg.Instrument.Strings[idx]
	tr := m.trackers[idx]
	r := reading{t: t, cents: cents, b: m.note.B, partials: len(m.note.Partials)}
	r.tensionN = s.Phys.Tension(m.note.F0Hz)
	r.margin = finiteOr0(s.Phys.Margin(r.tensionN))
	m.partialDevs(&r.dev)
	prev, prevReason := tr.state, tr.reason
	state, reason := tr.update(&r, &m.lim, &m.fit)
	m.noteQuiet(tr)

	e := m.newEntry(KindReading, t)
	e.String, e.FundamentalHz, e.F0Hz, e.Inharmonicity = s.ID, m.note.FundamentalHz, m.note.F0Hz, m.note.B
	e.Cents, e.TensionN, e.Margin, e.RateCentsHour = cents, r.tensionN, r.margin, tr.rate
	e.Clarity, e.Partials, e.State = m.note.Clarity, r.partials, state
	if state == Alarm {
		e.Reason = reason
	}
	e.Detail = m.readingDetail(s.ID, idx, &r, by)
	m.emit(e)
	if state != prev || (state == Alarm && reason != prevReason) {
		se := &m.stateEntry
		*se = *e // a state entry carries the reading that caused it
		se.Seq, se.Kind, se.Prev, se.Reason, se.Detail = 0, KindState, statePtr(prev), reason, ""
		m.emit(se)
	}
	m.stats.readings.Add(1) // after the entries: a reader of Stats finds them journaled
}

// partialDevs fills dev with each tracked partial's deviation from n·f0 in cents.
func (m *Monitor) partialDevs(dev *partialDevs) {
	for i := range dev {
		dev[i] = math.NaN()
	}
	for _, p := range m.note.Partials {
		if i := p.N - 2; i >= 0 && i < trackedPartials && p.Hz > 0 {
			dev[i] = note.Cents(p.Hz, float64(p.N)*m.note.F0Hz)
		}
	}
}

// Engineering bounds for flagging a measured B against the string data's prediction:
// the prediction uses the core alone, a lower bound for wound strings (reference-values
// §2.3), so wound strings get more room above.
const (
	bLowRatio       = 0.5
	bHighRatioPlain = 2
	bHighRatioWound = 3
	cautionSentence = "caution: raise no further without checking the maker's specification and local professional practice"
)

// readingDetail says, for people, what is unusual about a reading: how it was
// attributed when not by prediction, a margin past the warning level (with the
// safety caution), and a measured B far from the string data's prediction.
func (m *Monitor) readingDetail(id string, idx int, r *reading, by string) string {
	var parts []string
	if by == byChannel || by == byExciter {
		parts = append(parts, "by "+by)
	}
	if r.margin > m.lim.marginWarn {
		parts = append(parts, fmt.Sprintf("margin %.2f above the %.2f warning level (%s); %s",
			r.margin, m.lim.marginWarn, m.cfg.Instrument.Strings[idx].Phys.Core.Material.Basis, cautionSentence))
	}
	phys := &m.cfg.Instrument.Strings[idx].Phys
	if pred := phys.Inharmonicity(r.tensionN); r.partials >= minPartialsForB && pred > 0 && r.b > 0 {
		hi := float64(bHighRatioPlain)
		if phys.Wound() {
			hi = bHighRatioWound
		}
		if ratio := r.b / pred; ratio < bLowRatio || ratio > hi {
			parts = append(parts, fmt.Sprintf("measured B %.3g is %.2f× the %.3g predicted from the string data (check gauge and material)",
				r.b, ratio, pred))
		}
	}
	if len(parts) == 0 {
		return ""
	}
	return strings.Join(parts, "; ")
}

func finiteOr0(v float64) float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0
	}
	return v
}

// emitUnmatched journals a note no string could claim; it is never guessed.
func (m *Monitor) emitUnmatched(mt *match, t float64) {
	e := m.newEntry(KindUnmatched, t)
	e.FundamentalHz, e.F0Hz, e.Inharmonicity = m.note.FundamentalHz, m.note.F0Hz, m.note.B
	e.Clarity, e.Partials = m.note.Clarity, len(m.note.Partials)
	e.Reason, e.Detail = mt.reason, mt.detail
	m.emit(e)
	m.stats.unmatched.Add(1)
}

// stateValues backs the Prev pointers of state entries: sinks may keep entries, so
// Prev must never point at memory the monitor reuses, and a shared read-only value
// costs no allocation. Nobody writes through Prev.
var stateValues = [...]State{Quiet, Settling, Steady, OffTarget, Alarm}

func statePtr(s State) *State {
	if int(s) < len(stateValues) {
		return &stateValues[s]
	}
	return &s
}

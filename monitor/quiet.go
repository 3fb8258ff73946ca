package monitor

import (
	"math"
	"slices"
)

// noteQuiet takes a tracker's quiet deadline into account after a reading.
func (m *Monitor) noteQuiet(tr *tracker) {
	if d, ok := tr.quietDeadline(&m.lim); ok {
		m.nextQuiet = math.Min(m.nextQuiet, d)
	}
}

// advanceQuiet turns every string whose last reading is QuietAfter old by sample time
// t quiet, in deadline order, each entry stamped at its deadline (never before the run
// started). Called before anything at time t is emitted, so entries stay in time order.
func (m *Monitor) advanceQuiet(t float64) {
	if t < m.nextQuiet {
		return
	}
	type due struct {
		idx int
		at  float64
	}
	var list []due
	m.nextQuiet = posInf
	for i, tr := range m.trackers {
		d, ok := tr.quietDeadline(&m.lim)
		switch {
		case !ok:
		case d <= t:
			list = append(list, due{i, math.Max(d, 0)})
		default:
			m.nextQuiet = math.Min(m.nextQuiet, d)
		}
	}
	slices.SortStableFunc(list, func(a, b due) int { return cmpFloat(a.at, b.at) })
	for _, q := range list {
		tr := m.trackers[q.idx]
		prev := tr.state
		tr.state, tr.reason = Quiet, "no-reading"
		e := m.newEntry(KindState, q.at)
		e.String, e.State, e.Reason = m.cfg.Instrument.Strings[q.idx].ID, Quiet, "no-reading"
		e.Prev = statePtr(prev)
		e.Cents, e.RateCentsHour = tr.lastCents, tr.rate
		m.emit(e)
	}
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

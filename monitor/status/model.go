package status

import (
	"time"

	"taut/monitor"
	"taut/monitor/instrument"
)

// StringStatus is one string's latest figures, as /api/strings and the page show them.
type StringStatus struct {
	ID            string        `json:"id"`
	Note          string        `json:"note"`
	Section       string        `json:"section,omitempty"`
	TargetHz      float64       `json:"target_hz"`
	Material      string        `json:"material,omitempty"` // core material name
	Basis         string        `json:"strength_basis,omitempty"`
	Heard         bool          `json:"heard"` // a reading arrived since the server started
	State         monitor.State `json:"state"`
	Reason        string        `json:"reason,omitempty"` // why the latest state change happened
	F0Hz          float64       `json:"f0_hz,omitempty"`
	Cents         float64       `json:"cents"`
	TensionN      float64       `json:"tension_n,omitempty"`
	Margin        float64       `json:"margin,omitempty"` // tension / breaking load
	RateCentsHour float64       `json:"rate_cents_per_hour"`
	Inharmonicity float64       `json:"inharmonicity,omitempty"`
	Time          time.Time     `json:"time,omitzero"`  // the latest reading's own time (journal clock)
	AgeS          float64       `json:"age_s,omitzero"` // seconds since that reading arrived, when sent
	Seq           uint64        `json:"seq"`            // journal seq of the latest entry for this string

	arrived time.Time // server clock; ages and staleness never depend on the journal's wall clock
}

// Event is a notable entry kept for the page's recent-events list: state changes,
// faults, gaps, clock jumps, starts and stops (readings are too many to list).
type Event struct {
	Seq    uint64         `json:"seq"`
	Time   time.Time      `json:"time"`
	Kind   monitor.Kind   `json:"kind"`
	String string         `json:"string,omitempty"`
	State  *monitor.State `json:"state,omitempty"` // KindState: the new state
	Prev   *monitor.State `json:"prev_state,omitempty"`
	Reason string         `json:"reason,omitempty"`
	Detail string         `json:"detail,omitempty"`
}

// Snapshot is the whole state at one revision: /api/strings and the first SSE message.
type Snapshot struct {
	Rev           uint64         `json:"rev"` // updates that follow carry rev+1, rev+2, ...
	Seq           uint64         `json:"seq"` // journal seq of the latest entry published
	Instrument    string         `json:"instrument"`
	ReferenceHz   float64        `json:"reference_hz"`
	Version       string         `json:"version"`
	Now           time.Time      `json:"now"`
	Heard         bool           `json:"heard"`                     // any reading since the server started
	SinceReadingS float64        `json:"since_reading_s,omitempty"` // seconds since the latest reading arrived
	Stale         bool           `json:"stale"`                     // no reading for StaleAfterS
	StaleAfterS   float64        `json:"stale_after_s"`
	MarginWarn    float64        `json:"margin_warn"` // high-margin badge and caution from here: the config's margin_warn, at most tension.CautionFloor
	MarginAlarm   float64        `json:"margin_alarm"`
	Unmatched     uint64         `json:"unmatched"` // unmatched notes since the server started
	Strings       []StringStatus `json:"strings"`   // in scale order, as in the config
	Events        []Event        `json:"events"`    // oldest first
}

// Update is one SSE change message: what one published entry changed.
type Update struct {
	Rev       uint64        `json:"rev"`
	Seq       uint64        `json:"seq"`
	String    *StringStatus `json:"string,omitempty"`
	Event     *Event        `json:"event,omitempty"`
	Unmatched uint64        `json:"unmatched"`
	Reading   bool          `json:"reading"` // this entry was a reading: the staleness clock restarts
}

// eventKinds are the entry kinds listed as events.
var eventKinds = map[monitor.Kind]bool{
	monitor.KindState: true, monitor.KindGap: true, monitor.KindClock: true,
	monitor.KindStart: true, monitor.KindStop: true, monitor.KindFault: true,
}

func rowsFromConfig(cfg *instrument.Config) ([]StringStatus, map[string]int) {
	rows := make([]StringStatus, len(cfg.Instrument.Strings))
	index := make(map[string]int, len(rows))
	for i, st := range cfg.Instrument.Strings {
		rows[i] = StringStatus{ID: st.ID, Note: st.Note, Section: st.Section, TargetHz: st.TargetHz}
		if m := st.Phys.Core.Material; m != nil {
			rows[i].Material, rows[i].Basis = m.Name, m.Basis
		}
		index[st.ID] = i
	}
	return rows, index
}

// apply copies a reading's (or a state entry's) figures into the row.
func (r *StringStatus) apply(e *monitor.Entry, now time.Time) {
	r.Seq = e.Seq
	// A state entry always says why (possibly nothing); a reading's reason counts
	// when it has one or when the state changed with it.
	if e.Kind == monitor.KindState || e.Reason != "" || e.State != r.State {
		r.Reason = e.Reason
	}
	r.State = e.State
	if e.Kind != monitor.KindReading && e.F0Hz == 0 {
		return // a state entry without reading figures (e.g. gone quiet)
	}
	r.Heard = true
	r.F0Hz, r.Cents, r.TensionN, r.Margin = e.F0Hz, e.Cents, e.TensionN, e.Margin
	r.RateCentsHour, r.Inharmonicity = e.RateCentsHour, e.Inharmonicity
	r.Time = e.Time
	if e.Kind == monitor.KindReading {
		r.arrived = now
	}
}

func eventOf(e *monitor.Entry) Event {
	ev := Event{Seq: e.Seq, Time: e.Time, Kind: e.Kind, String: e.String, Reason: e.Reason, Detail: e.Detail}
	if e.Prev != nil { // copy: the entry's pointer belongs to the publisher
		p := *e.Prev
		ev.Prev = &p
	}
	if e.Kind == monitor.KindState {
		s := e.State
		ev.State = &s
	}
	return ev
}

// ring keeps the latest events, oldest first.
type ring struct {
	buf  []Event
	next int
	full bool
}

func newRing(n int) *ring { return &ring{buf: make([]Event, n)} }

func (r *ring) push(e Event) {
	r.buf[r.next] = e
	r.next = (r.next + 1) % len(r.buf)
	if r.next == 0 {
		r.full = true
	}
}

func (r *ring) list() []Event {
	if !r.full {
		return append([]Event{}, r.buf[:r.next]...) // [] not null in JSON
	}
	out := make([]Event, 0, len(r.buf))
	out = append(out, r.buf[r.next:]...)
	return append(out, r.buf[:r.next]...)
}

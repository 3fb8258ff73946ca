package monitor

import (
	"fmt"
	"time"
)

// State is what a string is doing, as shown by lamps, the status page and the report.
type State uint8

// The string states, in order of increasing concern except Quiet.
const (
	Quiet     State = iota // no recent reading
	Settling               // still drifting faster than the steady threshold
	Steady                 // drift under the threshold and within tolerance of target
	OffTarget              // steady, but further from target than the tolerance
	Alarm                  // margin over the alarm limit, a pitch jump or a partial shift
)

var stateNames = [...]string{"quiet", "settling", "steady", "off-target", "alarm"}

func (s State) String() string {
	if int(s) < len(stateNames) {
		return stateNames[s]
	}
	return fmt.Sprintf("state(%d)", uint8(s))
}

// MarshalText encodes the state by its name.
func (s State) MarshalText() ([]byte, error) { return []byte(s.String()), nil }

// UnmarshalText decodes a state name.
func (s *State) UnmarshalText(b []byte) error {
	p, err := ParseState(string(b))
	if err != nil {
		return err
	}
	*s = p
	return nil
}

// ParseState returns the state with the given name.
func ParseState(name string) (State, error) {
	for i, n := range stateNames {
		if n == name {
			return State(i), nil
		}
	}
	return Quiet, fmt.Errorf("monitor: unknown state %q (want quiet, settling, steady, off-target or alarm)", name)
}

// Kind says what a journal entry records.
type Kind string

// Entry kinds.
const (
	KindReading   Kind = "reading"   // a note matched to a string
	KindState     Kind = "state"     // a string changed state
	KindUnmatched Kind = "unmatched" // a note no string could claim
	KindGap       Kind = "gap"       // audio frames were lost or the source was reopened
	KindClock     Kind = "clock"     // the wall clock jumped against the monotonic clock
	KindStart     Kind = "start"     // the listener started (or resumed)
	KindStop      Kind = "stop"      // the listener stopped cleanly
	KindFault     Kind = "fault"     // a component failed (journal write, audio, lamps)
)

// Entry is one line of the journal and the unit every sink receives.
// Reading fields are set for KindReading (and copied into KindState entries);
// other kinds use Reason and Detail.
type Entry struct {
	Seq   uint64    `json:"seq"`
	Kind  Kind      `json:"kind"`
	Time  time.Time `json:"time"`   // wall clock, RFC 3339 with fraction
	MonoS float64   `json:"mono_s"` // monotonic seconds since this run started
	Run   string    `json:"run"`    // identifies the run (process start) that wrote it

	String        string  `json:"string,omitempty"`         // string id
	FundamentalHz float64 `json:"fundamental_hz,omitempty"` // measured first partial
	F0Hz          float64 `json:"f0_hz,omitempty"`          // fitted ideal f0 (used for tension)
	Inharmonicity float64 `json:"inharmonicity,omitempty"`  // fitted B
	Cents         float64 `json:"cents"`                    // f0 from target, cents
	TensionN      float64 `json:"tension_n,omitempty"`
	Margin        float64 `json:"margin,omitempty"`       // tension / breaking load
	RateCentsHour float64 `json:"rate_cents_per_hour"`    // robust drift rate
	Clarity       float64 `json:"clarity,omitempty"`      // 0..1 from the analyser
	Partials      int     `json:"partials,omitempty"`     // partials found
	State         State   `json:"state"`                  // state after this entry
	Prev          *State  `json:"prev_state,omitempty"`   // KindState: state before
	Reason        string  `json:"reason,omitempty"`       // why: "margin", "jump", "partials", "drift", ...
	Detail        string  `json:"detail,omitempty"`       // free text for people
	GapFrames     int64   `json:"gap_frames,omitempty"`   // KindGap
	ClockJumpS    float64 `json:"clock_jump_s,omitempty"` // KindClock
}

// Sink receives every entry the monitor produces, in order, from one goroutine.
// Publish must not block for long: slow work belongs on the sink's own goroutine.
type Sink interface {
	Publish(Entry)
}

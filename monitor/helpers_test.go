package monitor

import (
	"testing"
	"time"

	"taut/monitor/instrument"
	"taut/monitor/tension"
	"taut/pitch/note"
)

// testString is an invented plain steel string: the tenor section of a workshop
// upright (lengths and gauges invented but plausible).
func testString(t testing.TB, id, noteName string, lengthM, diameterMM float64) instrument.String {
	t.Helper()
	f, err := note.NameHz(noteName, note.A4)
	if err != nil {
		t.Fatal(err)
	}
	return instrument.String{
		ID: id, Note: noteName, TargetHz: f,
		Phys: tension.String{LengthM: lengthM, Core: tension.Layer{
			Material: tension.Builtin()["music_wire"], DiameterM: diameterMM / 1000}},
	}
}

// testConfig is a small instrument with default thresholds.
func testConfig(t testing.TB, strs ...instrument.String) *instrument.Config {
	return &instrument.Config{
		Instrument: instrument.Instrument{Name: "test bench", ReferenceHz: note.A4, Strings: strs},
		Listen: instrument.Listen{SteadyCentsPerHour: 1, ToleranceCents: 3, MarginWarn: 0.70, MarginAlarm: 0.85,
			JumpCents: 25, PartialShift: 0.25, RateWindow: 2 * time.Hour, QuietAfter: 45 * time.Minute,
			MatchCents: 60, AmbiguousCents: 10},
		Exciter: instrument.Exciter{Interval: 10 * time.Minute, Listen: 3 * time.Second},
	}
}

func defaultLimits() limits { return limitsFrom(&instrument.Config{}) }

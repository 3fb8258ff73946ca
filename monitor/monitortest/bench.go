package monitortest

import (
	"fmt"
	"math"

	"taut/monitor"
	"taut/monitor/instrument"
)

// The bench night: the scripted story told to the bench config
// (cmd/taut/testdata/listen/bench.toml, seven invented plain-wire strings A3..G4)
// by the listener's end-to-end tests. Rounds every ten minutes for three hours strike
// the strings in scale order, BenchGapS apart; Scale compresses the time between
// rounds (30: an hour in two minutes) for tests that must render every sample.
const (
	BenchHours  = 3.0
	BenchRounds = 19 // rounds at 0, 10, ..., 180 minutes
	BenchGapS   = 1.6
	benchToneS  = 1.5
)

// BenchString is the script of one bench string: its pitch in cents from target and
// its inharmonicity as a multiple of the string data's prediction, by story hour.
type BenchString struct {
	ID      string
	Cents   func(h float64) float64
	BFactor func(h float64) float64
	UntilH  float64 // sounds only in rounds before this hour
}

func one(float64) float64 { return 1 }

// BenchStrings is the story, in scale order.
var BenchStrings = []BenchString{
	// Sags 2 cents an hour for an hour, then holds at -2: settling, then steady.
	{ID: "A3", Cents: func(h float64) float64 { return -2 * math.Min(h, 1) }, BFactor: one, UntilH: 99},
	// Steady at +0.5 all night.
	{ID: "B3", Cents: func(float64) float64 { return 0.5 }, BFactor: one, UntilH: 99},
	// A new string sagging 25 cents an hour from -5 cents: at three hours it is 80 cents
	// flat, 20 cents above its neighbour B3's target, and must still be read as C4.
	{ID: "C4", Cents: func(h float64) float64 { return -5 - 25*h }, BFactor: one, UntilH: 99},
	// Steady, then nobody plays it after the first hour: quiet 45 minutes later.
	{ID: "D4", Cents: func(float64) float64 { return 0.3 }, BFactor: one, UntilH: 1.01},
	// Steady; from two hours its B is 1.6 times what it was (a loose winding or bridge pin).
	{ID: "E4", Cents: func(float64) float64 { return 0 }, BFactor: func(h float64) float64 {
		if h >= 2 {
			return 1.6
		}
		return 1
	}, UntilH: 99},
	// Steady at +1, then 40 cents lower from 2.5 hours: a slipped pin.
	{ID: "F4", Cents: func(h float64) float64 {
		if h >= 2.5 {
			return -39
		}
		return 1
	}, BFactor: one, UntilH: 99},
	// Its speaking length puts it over the margin alarm at its target from the start.
	{ID: "G4", Cents: func(float64) float64 { return 0 }, BFactor: one, UntilH: 99},
}

// BenchStrayAtH is when a note no string should claim sounds (G#3, 100 cents under A3).
const BenchStrayAtH = 1.5

// BenchNight returns the bench story for cfg's strings at sample rate rateHz, with the
// time between rounds divided by scale.
func BenchNight(cfg *instrument.Config, rateHz int, scale float64) (*Scenario, error) {
	strs := map[string]*instrument.String{}
	for i := range cfg.Instrument.Strings {
		strs[cfg.Instrument.Strings[i].ID] = &cfg.Instrument.Strings[i]
	}
	sc := &Scenario{RateHz: rateHz, ToneS: benchToneS}
	for r := range BenchRounds {
		h := float64(r) / 6
		start := BenchRoundS(r, scale)
		for k, bs := range BenchStrings {
			s, ok := strs[bs.ID]
			if !ok {
				return nil, fmt.Errorf("monitortest: bench config has no string %s", bs.ID)
			}
			if h >= bs.UntilH {
				continue
			}
			f0 := s.TargetHz * math.Exp2(bs.Cents(h)/1200)
			b := s.Phys.Inharmonicity(s.Phys.Tension(f0)) * bs.BFactor(h)
			sc.Soundings = append(sc.Soundings, Sounding{AtS: start + float64(k)*BenchGapS, String: bs.ID, F0Hz: f0, B: b})
		}
		if h == BenchStrayAtH {
			a3 := strs["A3"]
			f0 := a3.TargetHz * math.Exp2(-100.0/1200)
			sc.Soundings = append(sc.Soundings, Sounding{AtS: start + float64(len(BenchStrings))*BenchGapS, F0Hz: f0,
				B: a3.Phys.Inharmonicity(a3.Phys.Tension(f0))})
		}
	}
	sc.EndS = BenchRoundS(BenchRounds-1, scale) + float64(len(BenchStrings)+1)*BenchGapS + 2
	sc.sort()
	return sc, nil
}

// BenchRoundS is the start of round r in sample seconds.
func BenchRoundS(r int, scale float64) float64 { return float64(r) * 600 / scale }

// BenchChange is one expected state change of a bench string: the state, the reason
// and the story hour (and string) it happens at; the sample time is BenchTimeS.
type BenchChange struct {
	State      monitor.State
	Reason     string
	AtH, UpToH float64 // expected between AtH and UpToH (equal when exact)
}

// BenchExpect lists, per string, the state changes the monitor must journal.
var BenchExpect = map[string][]BenchChange{
	"A3": {{monitor.Settling, "few-readings", 0, 0}, {monitor.Steady, "drift", 1.5, 2.67}},
	"B3": {{monitor.Settling, "few-readings", 0, 0}, {monitor.Steady, "drift", 0.5, 0.5}},
	"C4": {{monitor.Settling, "few-readings", 0, 0}},
	"D4": {{monitor.Settling, "few-readings", 0, 0}, {monitor.Steady, "drift", 0.5, 0.5},
		{monitor.Quiet, "no-reading", 1.75, 1.75}},
	"E4": {{monitor.Settling, "few-readings", 0, 0}, {monitor.Steady, "drift", 0.5, 0.5},
		{monitor.Alarm, "partials", 2 + 1.0/6, 2 + 1.0/6}},
	"F4": {{monitor.Settling, "few-readings", 0, 0}, {monitor.Steady, "drift", 0.5, 0.5},
		{monitor.Alarm, "jump", 2.5, 2.5}},
	"G4": {{monitor.Alarm, "margin", 0, 0}},
}

// BenchTimeS is the sample time of string id's note in the round at story hour h.
func BenchTimeS(id string, h float64, scale float64) float64 {
	for k, bs := range BenchStrings {
		if bs.ID == id {
			return h*3600/scale + float64(k)*BenchGapS
		}
	}
	return math.NaN()
}

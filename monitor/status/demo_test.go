package status

import (
	"math"
	"slices"
	"time"

	"github.com/jonboulle/clockwork"

	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/tension"
	"taut/pitch/note"
)

// harpConfig is an invented 36-string workshop lever harp, C2 to C7 diatonic:
// nylon from the top down to the tenor, wound bass (steel core, copper wrap) for
// the lowest eight strings. Lengths and gauges are invented but plausible.
func harpConfig() *instrument.Config {
	mats := tension.Builtin()
	cfg := &instrument.Config{Instrument: instrument.Instrument{
		Name: "Workshop lever harp, 36 strings (demo)", ReferenceHz: note.A4, Materials: mats,
	}}
	cfg.Listen.MarginWarn, cfg.Listen.MarginAlarm = 0.70, 0.85
	letters := []string{"C", "D", "E", "F", "G", "A", "B"}
	for i := range 36 {
		name := letters[i%7] + string(rune('2'+i/7))
		midi, err := note.Parse(name)
		if err != nil {
			panic(err)
		}
		lengthM := 1.45 * math.Pow(0.075/1.45, float64(i)/35)
		st := tension.String{LengthM: lengthM,
			Core: tension.Layer{Material: mats["nylon"], DiameterM: (2.0 - 1.35*float64(i)/35) * 1e-3}}
		if i < 8 { // wound bass
			st.Core = tension.Layer{Material: mats["music_wire"], DiameterM: 0.6e-3}
			st.Wraps = []tension.Layer{{Material: mats["copper"], DiameterM: (0.32 - 0.02*float64(i)) * 1e-3}}
		}
		if name == "A2" { // re-strung with too thin a core under a heavy wrap: its margin runs high
			st.Core.DiameterM, st.Wraps[0].DiameterM = 0.40e-3, 0.30e-3
		}
		cfg.Instrument.Strings = append(cfg.Instrument.Strings, instrument.String{
			ID: name, Note: name, Section: section(i), TargetHz: note.Hz(midi, note.A4), Phys: st,
		})
	}
	return cfg
}

func section(i int) string {
	switch {
	case i < 8:
		return "bass"
	case i < 22:
		return "middle"
	}
	return "treble"
}

// demoState is what a scripted night shows at the moment the screenshots are taken.
type demoState struct {
	state  monitor.State
	cents  float64
	rate   float64 // cents per hour
	reason string
}

var demoNight = map[string]demoState{
	"E2": {monitor.Settling, -17.5, -5.8, "drift"},
	"F2": {monitor.Settling, -11.2, -3.9, "drift"},
	"G3": {monitor.Alarm, -38.4, -1.1, "jump"},
	"C4": {monitor.OffTarget, 5.1, 0.2, "drift"},
	"F4": {monitor.Settling, -8.3, -2.4, "drift"},
	"D5": {monitor.OffTarget, -6.4, -0.3, "drift"},
	"A2": {monitor.Steady, -0.8, 0.1, ""},
	"E6": {monitor.Settling, -9.9, -3.1, "drift"},
}

// demoEntries scripts the night for cfg up to now: a start, a reading per heard
// string, the state changes and a short audio gap. The top four strings are not
// heard yet.
func demoEntries(cfg *instrument.Config, now time.Time) []monitor.Entry {
	start := now.Add(-5 * time.Hour)
	out := []monitor.Entry{{Kind: monitor.KindStart, Time: start, Detail: "resumed from the journal"}}
	strs := cfg.Instrument.Strings
	for i, st := range strs[:len(strs)-4] {
		d, ok := demoNight[st.ID]
		if !ok {
			d = demoState{monitor.Steady, float64(i%5)*0.4 - 0.8, float64(i%3)*0.2 - 0.2, ""}
		}
		e := demoReading(st, d, now.Add(-time.Duration(len(strs)-i)*47*time.Second))
		if d.state != monitor.Steady {
			prev := monitor.Settling
			if d.state == monitor.Settling {
				prev = monitor.Steady
			}
			se := e
			se.Kind, se.Prev, se.Reason = monitor.KindState, &prev, d.reason
			se.Time = e.Time.Add(-90 * time.Minute)
			out = append(out, se)
		}
		out = append(out, e)
	}
	out = append(out, monitor.Entry{Kind: monitor.KindGap, Time: now.Add(-2 * time.Hour), GapFrames: 4800,
		Detail: "4800 frames lost (input overflow)"})
	slices.SortStableFunc(out, func(a, b monitor.Entry) int { return a.Time.Compare(b.Time) }) // a journal is in time order
	for i := range out {
		out[i].Seq = uint64(i + 1)
	}
	return out
}

func demoReading(st instrument.String, d demoState, at time.Time) monitor.Entry {
	f0 := st.TargetHz * math.Pow(2, d.cents/1200)
	tN := st.Phys.Tension(f0)
	return monitor.Entry{
		Kind: monitor.KindReading, Time: at, String: st.ID,
		F0Hz: f0, FundamentalHz: f0, Cents: d.cents, TensionN: tN, Margin: st.Phys.Margin(tN),
		RateCentsHour: d.rate, State: d.state, Inharmonicity: st.Phys.Inharmonicity(tN), Clarity: 0.93,
	}
}

// publishNight publishes the scripted night, moving the fake clock forward to
// each entry's time so that the page shows realistic ages, and ends at now.
func publishNight(s *Server, fc *clockwork.FakeClock, entries []monitor.Entry, now time.Time) {
	for _, e := range entries {
		if d := e.Time.Sub(fc.Now()); d > 0 {
			fc.Advance(d)
		}
		s.Publish(e)
	}
	if d := now.Sub(fc.Now()); d > 0 {
		fc.Advance(d)
	}
}

// pianoNight is an invented upright being re-strung: 224 strings (single, double and
// triple unisons), most steady, a block of new treble strings settling, a few alarms;
// it checks that a whole piano fits the wall display.
func pianoNight(now time.Time) (*instrument.Config, []monitor.Entry) {
	cfg := &instrument.Config{Instrument: instrument.Instrument{Name: "Upright re-string, full scale (demo)", ReferenceHz: note.A4}}
	cfg.Listen.MarginWarn, cfg.Listen.MarginAlarm = 0.70, 0.85
	var out []monitor.Entry
	for midi := 21; midi <= 108; midi++ {
		unisons := 3
		switch {
		case midi < 33:
			unisons = 1
		case midi < 49:
			unisons = 2
		}
		for u := range unisons {
			id := note.Name(midi) + string(rune('a'+u))
			cfg.Instrument.Strings = append(cfg.Instrument.Strings, instrument.String{ID: id, Note: note.Name(midi), TargetHz: note.Hz(midi, note.A4)})
			d := demoState{monitor.Steady, float64((midi+u)%7)*0.3 - 0.9, 0.1, ""}
			switch {
			case midi >= 72 && midi < 80:
				d = demoState{monitor.Settling, -6 - float64(u), -2.5, "drift"}
			case midi == 60 && u == 1:
				d = demoState{monitor.Alarm, -41, -0.4, "jump"}
			case midi == 45:
				d = demoState{monitor.OffTarget, 4.2, 0.1, "drift"}
			}
			out = append(out, monitor.Entry{Kind: monitor.KindReading, Time: now.Add(-time.Duration(len(out)) * 10 * time.Second),
				String: id, F0Hz: note.Hz(midi, note.A4), Cents: d.cents, TensionN: 700, Margin: 0.5,
				RateCentsHour: d.rate, State: d.state, Reason: d.reason})
		}
	}
	slices.Reverse(out) // oldest first
	for i := range out {
		out[i].Seq = uint64(i + 1)
	}
	return cfg, out
}

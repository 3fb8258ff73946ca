package monitor

import (
	"math"
	"testing"

	"taut/monitor/instrument"
	"taut/pitch/note"
)

func TestMatcher_nearest(t *testing.T) {
	strs := []instrument.String{
		testString(t, "B3", "B3", 0.66, 1.0),
		testString(t, "C4", "C4", 0.62, 1.0),
		testString(t, "C#4a", "C#4", 0.59, 1.0), // a unison pair
		testString(t, "C#4b", "C#4", 0.59, 1.0),
		testString(t, "G4", "G4", 0.45, 0.95),
	}
	lim := defaultLimits()
	fit := &fitScratch{}
	trs := make([]*tracker, len(strs))
	for i := range trs {
		trs[i] = newTracker(&lim)
	}
	// B3 steady at its target; C4 new, sagging 30 cents an hour from -10 cents.
	feed(trs[0], &lim, fit, 0, 600, 13, func(int) reading { return plain(0) })
	feed(trs[1], &lim, fit, 0, 600, 13, func(i int) reading { return plain(-10 - 30*float64(i)/6) })
	mt := matcher{strings: strs, trackers: trs, lim: &lim}
	all := []int{0, 1, 2, 3, 4}
	now := 12*600.0 + 600 // C4's last reading -70 cents; predicted now -75
	hz := func(id string, cents float64) float64 {
		for _, s := range strs {
			if s.ID == id {
				return s.TargetHz * pow2(cents/1200)
			}
		}
		t.Fatalf("no string %s", id)
		return 0
	}
	tests := []struct {
		name       string
		f0Hz       float64
		wantID     string // "" = unmatched
		wantReason string
	}{
		// 76 cents under C4 is 24 cents over B3's target: nearest target says B3,
		// the prediction says C4.
		{"SagOntoNeighbourByPrediction", hz("C4", -76), "C4", ""},
		{"SteadyNeighbour", hz("B3", 1), "B3", ""},
		{"UnisonIsAmbiguous", hz("C#4a", 2), "", "ambiguous"},
		{"NewStringPredictsTarget", hz("G4", -20), "G4", ""},
		{"FarFromEverything", hz("G4", 150), "", "too-far"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got := mt.nearest(all, tc.f0Hz, now)
			id := ""
			if got.idx >= 0 {
				id = strs[got.idx].ID
			}
			if id != tc.wantID || got.reason != tc.wantReason {
				t.Errorf("matched %q (%s: %s), want %q (%s)", id, got.reason, got.detail, tc.wantID, tc.wantReason)
			}
		})
	}
}

func TestMatcher_ambiguousBetweenNeighbours(t *testing.T) {
	strs := []instrument.String{testString(t, "F4", "F4", 0.5, 1.0), testString(t, "F#4", "F#4", 0.48, 1.0)}
	lim := defaultLimits()
	lim.matchCents = 60
	mt := matcher{strings: strs, trackers: []*tracker{newTracker(&lim), newTracker(&lim)}, lim: &lim}
	// 48 cents over F4 is 52 under F#4: both within MatchCents, 4 cents apart.
	got := mt.nearest([]int{0, 1}, strs[0].TargetHz*pow2(48.0/1200), 0)
	if got.idx >= 0 || got.reason != "ambiguous" {
		t.Errorf("matched %d (%s), want ambiguous", got.idx, got.reason)
	}
	if c := note.Cents(strs[1].TargetHz, strs[0].TargetHz); c < 99.99 || c > 100.01 {
		t.Fatalf("F4 to F#4 is %.3f cents, want 100 (12-TET)", c)
	}
}

func pow2(x float64) float64 { return math.Exp2(x) }

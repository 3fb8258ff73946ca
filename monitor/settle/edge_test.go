package settle

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

func TestAnalyze_Gap(t *testing.T) {
	// Readings missing from 3 h to 8 h (the listener was down): a gap event, no
	// pull-up or step, and the creep fit still recovers the rate within 10 %.
	all := night(6, 0, 0, 0, 0)
	var pts []Point
	for _, p := range all {
		if p.Hours < 3 || p.Hours >= 8 {
			pts = append(pts, p)
		}
	}
	an, err := Analyze(pts, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if got := kinds(an.Events); !slices.Equal(got, []EventKind{EventGap}) {
		t.Fatalf("events %+v, want one gap", an.Events)
	}
	if g := an.Events[0].GapHours; !near(g, 5+1.0/3, 1e-9) {
		t.Errorf("gap %.3f h, want 5.333", g)
	}
	if want := -5 / 10.3; !near(an.RateNow, want, 0.1*math.Abs(want)) {
		t.Errorf("rate %.3f, want %.3f ± 10 %%", an.RateNow, want)
	}
}

func TestAnalyze_PullUpAcrossGap(t *testing.T) {
	// A rise seen only after a gap is still a pull-up (creep never raises pitch).
	pts := []Point{{0, -2}, {0.5, -4}, {1, -5}, {1.5, -5.8}, {6, 9}, {6.5, 8}, {7, 7.4}}
	an, err := Analyze(pts, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if got := kinds(an.Events); !slices.Equal(got, []EventKind{EventGap, EventPullUp}) {
		t.Fatalf("events %+v, want gap then pull-up", an.Events)
	}
	if len(an.Segments) != 2 || an.Segments[1].First != 4 {
		t.Errorf("segments %+v, want the second to start at point 4", an.Segments)
	}
}

func TestAnalyze_Degenerate(t *testing.T) {
	nan := math.NaN()
	cases := []struct {
		name      string
		pts       []Point
		err       error
		model     Model
		dropped   int
		reordered bool
		rateNaN   bool
		rate      float64
	}{
		{"Empty", nil, ErrNoPoints, ModelNone, 0, false, true, 0},
		{"AllNaN", []Point{{nan, 1}, {1, nan}, {math.Inf(1), 0}}, ErrNoPoints, ModelNone, 3, false, true, 0},
		{"Single", []Point{{2, -4}}, nil, ModelSingle, 0, false, true, 0},
		{"SingleAfterNaN", []Point{{0, nan}, {2, -4}}, nil, ModelSingle, 1, false, true, 0},
		// Two points: Theil–Sen line through both, −2 c/h.
		{"Two", []Point{{0, 0}, {1, -2}}, nil, ModelLine, 0, false, false, -2},
		// Same points in reverse order: sorted by time first, same answer.
		{"TwoReversed", []Point{{1, -2}, {0, 0}}, nil, ModelLine, 0, true, false, -2},
		// Equal times: no slope can be formed; a level with zero rate.
		{"SameTime", []Point{{1, -2}, {1, -4}}, nil, ModelLine, 0, false, false, 0},
		// Five points, one 3 cents off (under the event threshold): Theil–Sen ignores it.
		{"FewRobust", []Point{{0, 0}, {1, -1}, {2, 2}, {3, -3}, {4, -4}}, nil, ModelLine, 0, false, false, -1},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			an, err := Analyze(tc.pts, Options{})
			if !errors.Is(err, tc.err) {
				t.Fatalf("err %v, want %v", err, tc.err)
			}
			if an.Fit.Model != tc.model || an.Dropped != tc.dropped || an.Reordered != tc.reordered {
				t.Errorf("model %s dropped %d reordered %v, want %s %d %v",
					an.Fit.Model, an.Dropped, an.Reordered, tc.model, tc.dropped, tc.reordered)
			}
			if tc.rateNaN != math.IsNaN(an.RateNow) || (!tc.rateNaN && !near(an.RateNow, tc.rate, 1e-9)) {
				t.Errorf("rate %v, want %v (NaN %v)", an.RateNow, tc.rate, tc.rateNaN)
			}
		})
	}
}

func TestAnalyze_ReversedClockSameResult(t *testing.T) {
	// Times out of order (a wall clock stepped back while the caller built hours from
	// it) are sorted by time; the analysis equals that of the sorted series.
	pts := night(7, 5, 12, 0, 0)
	shuffled := slices.Clone(pts)
	rand.New(rand.NewPCG(1, 1)).Shuffle(len(shuffled), func(i, j int) {
		shuffled[i], shuffled[j] = shuffled[j], shuffled[i]
	})
	a, _ := Analyze(pts, Options{})
	b, _ := Analyze(shuffled, Options{})
	if !b.Reordered || a.Reordered {
		t.Errorf("reordered flags %v/%v, want false/true", a.Reordered, b.Reordered)
	}
	if a.RateNow != b.RateNow || a.CentsNow != b.CentsNow || len(a.Events) != len(b.Events) {
		t.Errorf("sorted %.4f/%.4f/%d vs shuffled %.4f/%.4f/%d",
			a.RateNow, a.CentsNow, len(a.Events), b.RateNow, b.CentsNow, len(b.Events))
	}
}

func TestAnalyze_DoesNotModifyInput(t *testing.T) {
	pts := []Point{{2, 1}, {1, 2}, {math.NaN(), 3}}
	before := slices.Clone(pts)
	Analyze(pts, Options{})
	for i := range pts {
		if pts[i].Cents != before[i].Cents || !(pts[i].Hours == before[i].Hours || math.IsNaN(before[i].Hours)) {
			t.Fatalf("input changed: %v → %v", before, pts)
		}
	}
}

func TestAnalysis_FitAt(t *testing.T) {
	// Noise-free log creep with a −10 cent slip at 6 h: FitAt follows the curve and
	// includes the slip from 6 h on.
	f := logCurve(0, 5, 0.3)
	var pts []Point
	for i := 0; i <= 30; i++ {
		h := float64(i) / 3
		c := f(h)
		if h >= 6 {
			c -= 10
		}
		pts = append(pts, Point{h, c})
	}
	an, err := Analyze(pts, Options{})
	if err != nil {
		t.Fatal(err)
	}
	for _, h := range []float64{1, 5.9, 6, 9.5} {
		want := f(h)
		if h >= 6 {
			want -= 10
		}
		if got := an.FitAt(h); !near(got, want, 1e-3) {
			t.Errorf("FitAt(%.1f) = %.4f, want %.4f", h, got, want)
		}
	}
	var empty Analysis
	if !math.IsNaN(empty.FitAt(1)) {
		t.Error("FitAt without a fit is not NaN")
	}
}

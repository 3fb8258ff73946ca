package settle

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// night builds a nylon-like night: log creep from 0 h, optional pull-up at pullH
// (raise riseC, after which a new creep of size share·riseC starts), optional slip of
// slipC at slipH. Rounds every 20 minutes for 10 h, noise 0.3 cents.
func night(seed uint64, pullH, riseC, slipH, slipC float64) []Point {
	rng := rand.New(rand.NewPCG(seed, 3))
	first := logCurve(0, 5, 0.3)
	return series(func(h float64) float64 {
		c := first(h)
		if pullH > 0 && h >= pullH {
			c += riseC - 0.3*riseC/math.Log1p(24/0.5)*math.Log1p((h-pullH)/0.5)
		}
		if slipH > 0 && h >= slipH {
			c += slipC
		}
		return c
	}, 10, 1.0/3, 0.3, rng)
}

func kinds(ev []Event) []EventKind {
	var k []EventKind
	for _, e := range ev {
		k = append(k, e.Kind)
	}
	return k
}

func TestAnalyze_Events(t *testing.T) {
	cases := []struct {
		name     string
		pts      []Point
		want     []EventKind
		wantAtH  []float64 // time of each event
		sizes    []float64 // approximate size of each event
		sizeTol  float64
		segments int
	}{
		{"PullUp", night(1, 5, 15, 0, 0), []EventKind{EventPullUp}, []float64{5}, []float64{15}, 2.5, 2},
		{"Slip", night(2, 0, 0, 6, -10), []EventKind{EventStep}, []float64{6}, []float64{-10}, 2, 1},
		{"PullUpThenSlip", night(3, 4, 15, 7, -8), []EventKind{EventPullUp, EventStep}, []float64{4, 7}, []float64{15, -8}, 2.5, 2},
		{"Outlier", spike(night(4, 0, 0, 0, 0), 15, -12), []EventKind{EventOutlier}, []float64{5}, []float64{-12}, 2, 1},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			an, err := Analyze(tc.pts, Options{})
			if err != nil {
				t.Fatal(err)
			}
			if got := kinds(an.Events); !slices.Equal(got, tc.want) {
				t.Fatalf("events %v, want %v (%+v)", got, tc.want, an.Events)
			}
			for i, e := range an.Events {
				if !near(e.Hours, tc.wantAtH[i], 1e-9) {
					t.Errorf("event %d at %.2f h, want %.2f h", i, e.Hours, tc.wantAtH[i])
				}
				if !near(e.Cents, tc.sizes[i], tc.sizeTol) {
					t.Errorf("event %d size %.2f, want %.2f ± %.1f", i, e.Cents, tc.sizes[i], tc.sizeTol)
				}
			}
			if len(an.Segments) != tc.segments {
				t.Errorf("%d segments, want %d", len(an.Segments), tc.segments)
			}
		})
	}
}

func spike(pts []Point, i int, by float64) []Point {
	pts[i].Cents += by
	return pts
}

func TestAnalyze_StepIsFittedSeparately(t *testing.T) {
	// A slip of −10 cents inside the segment is a level shift in the fit: the smooth
	// creep's rate is unaffected. True rate at 10 h: −5/(0.3 + 10).
	an, err := Analyze(night(2, 0, 0, 6, -10), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(an.Fit.StepCents) != 1 || !near(an.Fit.StepCents[0], -10, 0.6) {
		t.Errorf("fitted steps %v, want [-10 ± 0.6]", an.Fit.StepCents)
	}
	if want := -5 / 10.3; !near(an.RateNow, want, 0.06) {
		t.Errorf("rate %.3f, want %.3f ± 0.06", an.RateNow, want)
	}
}

func TestAnalyze_PullUpShareAndSuggestion(t *testing.T) {
	// After the pull-up of 15 cents at 5 h the string gives back its new creep plus the
	// old creep that goes on: observed from 5 h to 10 h.
	an, err := Analyze(night(1, 5, 15, 0, 0), Options{})
	if err != nil {
		t.Fatal(err)
	}
	seg := an.Segments[1]
	oldCreep := logCurve(0, 5, 0.3)
	trueFall := 0.3*15/math.Log1p(24/0.5)*math.Log1p(5/0.5) + oldCreep(5) - oldCreep(10)
	if !near(seg.FallCents, trueFall, 1.5) { // two readings of 0.3-cent noise, and a rise measured against one
		t.Errorf("fall %.2f cents, want %.2f ± 1.5", seg.FallCents, trueFall)
	}
	s := an.Suggest
	if !near(s.Share, seg.FallShare, 1e-12) {
		t.Errorf("share %.3f, want the segment's %.3f", s.Share, seg.FallShare)
	}
	want := -an.CentsNow / (1 - s.Share)
	if an.CentsNow > -3 || !near(s.RaiseCents, want, 1e-9) || !near(s.AimCents, an.CentsNow+want, 1e-9) {
		t.Errorf("now %.2f, suggestion %+v, want raise %.2f", an.CentsNow, s, want)
	}
}

func TestAnalyze_TradeShareWithoutHistory(t *testing.T) {
	an, err := Analyze(night(5, 0, 0, 0, 0), Options{TradeShare: TradeShareBass})
	if err != nil {
		t.Fatal(err)
	}
	// reference-values §4.3: ~10 % on the bass bridge (trade figure).
	if an.Suggest.Share != 0.10 {
		t.Errorf("share %.2f, want the bass trade figure 0.10", an.Suggest.Share)
	}
	// c(10 h) = −5·ln(1 + 10/0.3) ≈ −17.7 cents: raise by 17.7/0.9.
	want := -an.CentsNow / 0.9
	if !near(an.CentsNow, -5*math.Log1p(10/0.3), 0.5) || !near(an.Suggest.RaiseCents, want, 1e-9) {
		t.Errorf("now %.1f, raise %.2f, want %.2f", an.CentsNow, an.Suggest.RaiseCents, want)
	}
}

func TestAnalyze_ShortNightFastCreep(t *testing.T) {
	// Eleven half-hourly readings of a fresh nylon string from a 5-hour demo night:
	// fast early creep, a pull-up of ~24 cents at 2.5 h, a slip of ~35 cents at 4 h.
	// The curvature of the early creep must not inflate the noise scale so far that
	// the events hide under it.
	cents := []float64{-1.133, -7.764, -11.587, -13.933, -16.086, 7.791, 4.634, 2.394, -34.513, -35.819, -36.995}
	var pts []Point
	for i, c := range cents {
		pts = append(pts, Point{0.00764 + 0.5*float64(i), c})
	}
	an, err := Analyze(pts, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if got := kinds(an.Events); !slices.Equal(got, []EventKind{EventPullUp, EventStep}) {
		t.Fatalf("events %+v, want a pull-up then a step", an.Events)
	}
	if !near(an.Events[1].Cents, -35, 4) {
		t.Errorf("step %.1f cents, want about -35", an.Events[1].Cents)
	}
}

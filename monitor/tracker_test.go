package monitor

import (
	"math"
	"math/rand/v2"
	"testing"
	"unsafe"
)

// feed gives the tracker readings every stepS seconds from t0 with cents from f and
// returns the last state and reason.
func feed(tr *tracker, lim *limits, fit *fitScratch, t0, stepS float64, n int, f func(i int) reading) (State, string) {
	var s State
	var why string
	for i := range n {
		r := f(i)
		r.t = t0 + float64(i)*stepS
		s, why = tr.update(&r, lim, fit)
	}
	return s, why
}

func plain(cents float64) reading {
	r := reading{cents: cents, tensionN: 700, margin: 0.5, b: 3e-4, partials: 10}
	for i := range r.dev {
		r.dev[i] = math.NaN()
	}
	return r
}

func TestTracker_states(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 3))
	noisy := func(c float64) reading { return plain(c + 0.1*rng.NormFloat64()) }
	tests := []struct {
		name       string
		n          int
		cents      func(i int) reading
		wantState  State
		wantReason string
	}{
		{"FirstReading", 1, func(int) reading { return plain(0) }, Settling, "few-readings"},
		{"TooShortSpan", 3, func(int) reading { return plain(0) }, Settling, "few-readings"},
		{"Sagging", 19, func(i int) reading { return noisy(-5 * float64(i) / 6) }, Settling, "drift"},
		{"Steady", 19, func(int) reading { return noisy(0.5) }, Steady, "drift"},
		{"OffTarget", 19, func(int) reading { return noisy(6) }, OffTarget, "tolerance"},
		{"Margin", 1, func(int) reading { r := plain(0); r.margin = 0.9; return r }, Alarm, "margin"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			lim := defaultLimits()
			tr := newTracker(&lim)
			s, why := feed(tr, &lim, &fitScratch{}, 0, 600, tc.n, tc.cents)
			if s != tc.wantState || why != tc.wantReason {
				t.Errorf("state %v (%s), want %v (%s); rate %.2f c/h", s, why, tc.wantState, tc.wantReason, tr.rate)
			}
		})
	}
}

func TestTracker_jumpAndPullUp(t *testing.T) {
	lim := defaultLimits()
	fit := &fitScratch{}
	tr := newTracker(&lim)
	if s, _ := feed(tr, &lim, fit, 0, 600, 19, func(int) reading { return plain(0) }); s != Steady {
		t.Fatalf("before: %v, want steady", s)
	}
	steps := []struct {
		name       string
		cents      float64
		wantState  State
		wantReason string
	}{
		{"Drop40IsJump", -40, Alarm, "jump"},
		{"StaysLatched", -40, Alarm, "jump"},
		{"SmallRiseStillLatched", -30, Alarm, "jump"},
		{"BroughtBackClears", -5, Settling, "pull-up"},
		{"Rise40IsPullUp", 35, Settling, "pull-up"},
		{"Drift5IsNoJump", 30, Settling, "few-readings"},
	}
	now := 18 * 600.0
	for _, st := range steps {
		now += 600
		r := plain(st.cents)
		r.t = now
		s, why := tr.update(&r, &lim, fit)
		if s != st.wantState || why != st.wantReason {
			t.Errorf("%s: state %v (%s), want %v (%s)", st.name, s, why, st.wantState, st.wantReason)
		}
	}
}

func TestTracker_partialShift(t *testing.T) {
	lim := defaultLimits()
	fit := &fitScratch{}
	withB := func(b, dev8 float64) func(int) reading {
		return func(int) reading {
			r := plain(0)
			r.b = b
			r.dev[6] = dev8 // partial 8
			return r
		}
	}
	tests := []struct {
		name      string
		b, dev8   float64
		n         int
		wantState State
		wantWhy   string
	}{
		{"OneShiftedReadingIsNotEnough", 4.5e-4, 16.6, 1, Steady, "drift"},
		{"BUp50Percent", 4.5e-4, 16.6, 2, Alarm, "partials"},
		{"BUp10PercentIsNoise", 3.3e-4, 16.6, 3, Steady, "drift"},
		{"OnePartialMoved", 3e-4, 16.6 + 6, 2, Alarm, "partials"},
		{"PartialNoiseUnderFloor", 3e-4, 16.6 + 2, 3, Steady, "drift"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			tr := newTracker(&lim)
			feed(tr, &lim, fit, 0, 600, 19, withB(3e-4, 16.6))
			if tr.shift.n < baselineMin {
				t.Fatalf("baseline has %d readings after a steady series", tr.shift.n)
			}
			s, why := feed(tr, &lim, fit, 19*600, 600, tc.n, withB(tc.b, tc.dev8))
			if s != tc.wantState || why != tc.wantWhy {
				t.Errorf("state %v (%s), want %v (%s)", s, why, tc.wantState, tc.wantWhy)
			}
		})
	}
}

func TestTracker_pullUpIsNoPartialShift(t *testing.T) {
	lim := defaultLimits()
	fit := &fitScratch{}
	tr := newTracker(&lim)
	feed(tr, &lim, fit, 0, 600, 19, func(int) reading { return plain(0) })
	// 1.5 semitones up: T × 2^(1.5/6) = 1.19, B falls by the same factor (B ∝ 1/T).
	k := math.Exp2(1.5 / 6)
	s, why := feed(tr, &lim, fit, 19*600, 600, 3, func(int) reading {
		r := plain(0)
		r.tensionN *= k
		r.b /= k
		return r
	})
	if s == Alarm {
		t.Errorf("state %v (%s) after a tension change with B ∝ 1/T, want no alarm", s, why)
	}
}

func TestTracker_boundedMemory(t *testing.T) {
	lim := defaultLimits()
	fit := &fitScratch{}
	tr := newTracker(&lim)
	// A string played every 5 s for a whole night: 5760 readings.
	feed(tr, &lim, fit, 0, 5, 8*720, func(i int) reading { return plain(float64(i%7) * 0.01) })
	if tr.count > ringSlots {
		t.Errorf("series holds %d points, want at most %d", tr.count, ringSlots)
	}
	if c := cap(fit.pairs); c > ringSlots*(ringSlots-1)/2 {
		t.Errorf("pair scratch grew to %d, want at most %d", c, ringSlots*(ringSlots-1)/2)
	}
	if size := unsafe.Sizeof(*tr); size > 4096 {
		t.Errorf("a tracker is %d bytes, want a small fixed size", size)
	}
}

func TestTracker_predictUsesTrend(t *testing.T) {
	lim := defaultLimits()
	tr := newTracker(&lim)
	if got := tr.predict(0, &lim); got != 0 {
		t.Errorf("new string predicts %v cents, want its target (0)", got)
	}
	feed(tr, &lim, &fitScratch{}, 0, 600, 7, func(i int) reading { return plain(-12 * float64(i) / 6) })
	// Sagging 12 cents/hour, last at -12 cents after 1 h; 30 minutes later: -18.
	if got := tr.predict(3600+1800, &lim); math.Abs(got+18) > 0.5 {
		t.Errorf("prediction %.2f cents, want -18 (last reading plus trend)", got)
	}
	if got := tr.predict(3600+10*3600, &lim); got < -12-lim.jumpCents-1e-9 {
		t.Errorf("prediction %.2f cents after 10 h, want the change capped at JumpCents", got)
	}
}

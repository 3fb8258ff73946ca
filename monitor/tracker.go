package monitor

import "math"

// Bounds and engineering defaults of the per-string tracker (not from a published
// source; chosen so that the tracker's memory is fixed and one noisy reading cannot
// change a string's state on its own).
const (
	ringSlots       = 64 // series points kept per string; closer readings are merged
	minFitReadings  = 4  // a drift rate needs at least this many points ...
	minFitSpanShare = 4  // ... spanning at least RateWindow / minFitSpanShare
	maxTrendShare   = 4  // prediction uses the trend once points span RateWindow / maxTrendShare
)

// reading is one note matched to a string, reduced to what the tracker keeps.
type reading struct {
	t        float64 // seconds on the run timeline (negative for resumed history)
	cents    float64 // fitted f0 from the string's target
	tensionN float64
	margin   float64
	b        float64 // fitted inharmonicity
	partials int
	dev      partialDevs
}

// slot is one point of a string's drift series: the mean of the readings merged into it.
type slot struct {
	t, cents float64
	n        float64
}

// tracker follows one string: a bounded drift series, the last reading, the drift
// rate and the state with the latches behind an alarm.
type tracker struct {
	slots  [ringSlots]slot
	first  int // index of the oldest slot
	count  int // slots in use
	mergeS float64

	hasLast   bool
	lastT     float64
	lastCents float64
	trend     float64 // cents/hour from any fit, used for prediction
	trendOK   bool
	rate      float64 // cents/hour, valid when rateOK
	rateOK    bool

	state  State
	reason string

	jump         bool    // latched: the pitch dropped by more than JumpCents
	jumpRefCents float64 // where it was expected before the drop
	pulledUp     bool    // this reading rose by more than JumpCents
	shift        shiftCheck
}

func newTracker(lim *limits) *tracker {
	return &tracker{mergeS: lim.rateWindowS / ringSlots}
}

// predict returns the cents from target expected at time t: the last reading plus its
// trend (not the target: a new string may sag a semitone onto its neighbour's
// target). The extrapolated change is capped at JumpCents, beyond which a change is a
// jump rather than drift. A string never heard predicts its target.
func (tr *tracker) predict(t float64, lim *limits) float64 {
	if !tr.hasLast {
		return 0
	}
	if !tr.trendOK {
		return tr.lastCents
	}
	dtH := math.Min(math.Max(t-tr.lastT, 0), lim.rateWindowS) / 3600
	change := math.Max(-lim.jumpCents, math.Min(lim.jumpCents, tr.trend*dtH))
	return tr.lastCents + change
}

// update adds a reading and returns the string's state after it and the reason.
func (tr *tracker) update(r *reading, lim *limits, fit *fitScratch) (State, string) {
	tr.checkDiscontinuity(r, lim)
	tr.add(r.t, r.cents)
	tr.hasLast, tr.lastT, tr.lastCents = true, r.t, r.cents
	tr.fitRate(r.t, lim, fit)
	shifted := tr.shift.check(r, lim)
	state, reason := tr.decide(r, lim, shifted)
	if state == Steady || state == OffTarget {
		tr.shift.learn(r)
	}
	tr.state, tr.reason = state, reason
	return state, reason
}

// checkDiscontinuity compares the reading with the prediction: a drop beyond
// JumpCents latches a jump alarm (a slipped pin or a broken string); a rise beyond it
// is a pull-up that clears the latch and restarts settling. Either way the drift
// series restarts, so the rate fit never spans the step.
func (tr *tracker) checkDiscontinuity(r *reading, lim *limits) {
	tr.pulledUp = false
	if !tr.hasLast {
		return
	}
	expected := tr.predict(r.t, lim)
	switch d := r.cents - expected; {
	case d < -lim.jumpCents:
		if !tr.jump {
			tr.jumpRefCents = expected
		}
		tr.jump = true
		tr.restart()
	case d > lim.jumpCents:
		tr.jump = false
		tr.pulledUp = true
		tr.restart()
	}
	if tr.jump && r.cents >= tr.jumpRefCents-lim.jumpCents/2 {
		// Brought back near where it was before the drop: a pull-up in all but size.
		tr.jump, tr.pulledUp = false, true
		tr.restart()
	}
}

func (tr *tracker) restart() {
	tr.first, tr.count = 0, 0
	tr.trendOK, tr.rateOK = false, false
}

// add appends a point to the series, merging it into the newest slot when closer than
// RateWindow/ringSlots, so the series covers the window at a bounded size.
func (tr *tracker) add(t, cents float64) {
	if tr.count > 0 {
		s := &tr.slots[(tr.first+tr.count-1)%ringSlots]
		if t-s.t < tr.mergeS {
			s.t = (s.t*s.n + t) / (s.n + 1)
			s.cents = (s.cents*s.n + cents) / (s.n + 1)
			s.n++
			return
		}
	}
	if tr.count == ringSlots {
		tr.first = (tr.first + 1) % ringSlots
		tr.count--
	}
	tr.slots[(tr.first+tr.count)%ringSlots] = slot{t: t, cents: cents, n: 1}
	tr.count++
}

// fitScratch is the reusable memory of the rate fit, shared by all trackers of one
// monitor (they run on one goroutine).
type fitScratch struct {
	t, y, pairs []float64
}

// fitRate fits the drift rate in cents/hour over the points within RateWindow of now.
func (tr *tracker) fitRate(now float64, lim *limits, fit *fitScratch) {
	fit.t, fit.y = fit.t[:0], fit.y[:0]
	for i := range tr.count {
		s := tr.slots[(tr.first+i)%ringSlots]
		if s.t >= now-lim.rateWindowS {
			fit.t = append(fit.t, s.t/3600)
			fit.y = append(fit.y, s.cents)
		}
	}
	var slope float64
	var ok bool
	slope, ok, fit.pairs = theilSen(fit.pairs, fit.t, fit.y)
	span := 0.0
	if len(fit.t) > 1 {
		// 1 % slack: readings every 10 minutes span 30 minutes even when onset
		// detection puts the first a few milliseconds late.
		span = (fit.t[len(fit.t)-1] - fit.t[0]) * 3600 * 1.01
	}
	tr.trend, tr.trendOK = slope, ok && span >= lim.rateWindowS/maxTrendShare
	tr.rate, tr.rateOK = slope, ok && len(fit.t) >= minFitReadings && span >= lim.rateWindowS/minFitSpanShare
	if !tr.rateOK {
		tr.rate = 0
	}
}

// alarmReasons names every combination of the three alarm causes, indexed by the bit
// set margin=1, jump=2, partials=4 (no string built per reading).
var alarmReasons = [8]string{"", "margin", "jump", "margin,jump", "partials",
	"margin,partials", "jump,partials", "margin,jump,partials"}

// decide applies the state rules of design.md to the tracker after a reading.
func (tr *tracker) decide(r *reading, lim *limits, shifted bool) (State, string) {
	var why int
	if r.margin > lim.marginAlarm {
		why |= 1
	}
	if tr.jump {
		why |= 2
	}
	if shifted {
		why |= 4
	}
	switch {
	case why != 0:
		return Alarm, alarmReasons[why]
	case tr.pulledUp:
		return Settling, "pull-up"
	case !tr.rateOK:
		return Settling, "few-readings"
	case math.Abs(tr.rate) >= lim.steadyCentsPerHour:
		return Settling, "drift"
	case math.Abs(r.cents) > lim.toleranceCents:
		return OffTarget, "tolerance"
	}
	return Steady, "drift"
}

// quietDeadline returns when the string goes quiet without another reading, and
// whether it is not quiet already.
func (tr *tracker) quietDeadline(lim *limits) (float64, bool) {
	return tr.lastT + lim.quietAfterS, tr.hasLast && tr.state != Quiet
}

package monitor

import "math"

// Engineering defaults of the partial-shift check (not from a published source).
const (
	trackedPartials   = 8 // partials 2..9 are compared with their steady deviation
	partialFloorCents = 3 // a partial must move at least this far, whatever PartialShift says
	minPartialsForB   = 4 // fewer partials give too loose a fit of B to compare
	baselineMin       = 3 // steady readings needed before the check starts
	baselineSpan      = 16
	shiftConfirm      = 2 // consecutive shifted readings that raise the alarm
)

// partialDevs holds, for partials n = 2..9, the measured deviation in cents from n·f0;
// NaN where the partial was not found.
type partialDevs [trackedPartials]float64

// shiftCheck compares a string's inharmonicity and partial deviations with its own
// earlier steady readings. A loose winding or bridge pin changes them while the pitch
// may stay put.
//
// B falls as tension rises (B ∝ 1/T, Fletcher 1964) and a partial's deviation from n·f0
// goes with B (≈ 865.6·B·n² cents, reference-values §2.1), so the baseline keeps B·T
// and deviation·T: a pull-up does not look like a shift. The baseline is a running
// mean over the last baselineSpan steady readings and is frozen while a shift is seen.
type shiftCheck struct {
	n       int
	bt      float64 // mean B·T, N
	dev     [trackedPartials]float64
	devN    [trackedPartials]int
	strikes int
	alarm   bool
}

// check reports whether the string is in a partial-shift alarm after reading r.
func (s *shiftCheck) check(r *reading, lim *limits) bool {
	if s.n < baselineMin {
		return false
	}
	if s.beyond(r, lim) {
		s.strikes++
	} else {
		s.strikes, s.alarm = 0, false
	}
	if s.strikes >= shiftConfirm {
		s.alarm = true
	}
	return s.alarm
}

func (s *shiftCheck) beyond(r *reading, lim *limits) bool {
	t := tensionScale(r.tensionN)
	if r.partials >= minPartialsForB && r.b > 0 && s.bt > 0 &&
		math.Abs(r.b*t-s.bt) > lim.partialShift*s.bt {
		return true
	}
	for i, d := range r.dev {
		if math.IsNaN(d) || s.devN[i] < baselineMin {
			continue
		}
		base := s.dev[i] / t
		if math.Abs(d-base) > math.Max(lim.partialShift*math.Abs(base), partialFloorCents) {
			return true
		}
	}
	return false
}

// learn adds a steady reading to the baseline unless a shift is being seen.
func (s *shiftCheck) learn(r *reading) {
	if s.strikes > 0 || s.alarm {
		return
	}
	t := tensionScale(r.tensionN)
	if r.partials >= minPartialsForB && r.b > 0 {
		s.n++
		s.bt += (r.b*t - s.bt) / float64(min(s.n, baselineSpan))
	}
	for i, d := range r.dev {
		if !math.IsNaN(d) {
			s.devN[i]++
			s.dev[i] += (d*t - s.dev[i]) / float64(min(s.devN[i], baselineSpan))
		}
	}
}

// tensionScale is the tension used to normalise B; 1 when the string's physics give none.
func tensionScale(tensionN float64) float64 {
	if tensionN > 0 && !math.IsInf(tensionN, 0) {
		return tensionN
	}
	return 1
}

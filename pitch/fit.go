package pitch

import (
	"errors"
	"fmt"
	"math"
)

// FitPartials fits the stiff-string model f_n = n·f0·sqrt(1 + B·n²) to measured partials
// by ordinary least squares on the linear form (f_n/n)² = f0² + f0²·B·n², every partial
// weighted alike. It needs at least two partials with distinct positive N and positive Hz.
// Analyze uses the same fit with weights from each partial's signal-to-noise ratio.
func FitPartials(partials []Partial) (f0Hz, b float64, err error) {
	var s fitSums
	for i, p := range partials {
		if p.N < 1 || !(p.Hz > 0) || math.IsInf(p.Hz, 0) {
			return 0, 0, fmt.Errorf("pitch: fit partials: partial %d: want N >= 1 and a finite Hz > 0, got N=%d Hz=%v", i, p.N, p.Hz)
		}
		s.add(p.N, p.Hz, 1)
	}
	f0Hz, b, ok := s.solve()
	if !ok {
		return 0, 0, errors.New("pitch: fit partials: need at least two partials with different N")
	}
	return f0Hz, b, nil
}

// fitSums accumulates a weighted straight-line fit y = a + c·x with x = n² and
// y = (f_n/n)², so that f0 = sqrt(a) and B = c/a. Sums are kept about a fixed origin
// (the first point) to avoid cancellation when y is large.
type fitSums struct {
	n                        int
	x0, y0                   float64
	sw, swx, swy, swxx, swxy float64
}

func (s *fitSums) add(n int, hz, w float64) {
	x := float64(n * n)
	y := (hz / float64(n)) * (hz / float64(n))
	if s.n == 0 {
		s.x0, s.y0 = x, y
	}
	s.n++
	dx, dy := x-s.x0, y-s.y0
	s.sw += w
	s.swx += w * dx
	s.swy += w * dy
	s.swxx += w * dx * dx
	s.swxy += w * dx * dy
}

// solve returns f0 and B, or ok=false when the points do not determine a line
// (fewer than two distinct n) or the intercept is not positive.
func (s *fitSums) solve() (f0Hz, b float64, ok bool) {
	if s.n < 2 || s.sw <= 0 {
		return 0, 0, false
	}
	mx, my := s.swx/s.sw, s.swy/s.sw
	sxx := s.swxx - s.sw*mx*mx
	if sxx <= 1e-12*s.swxx || sxx <= 0 {
		return 0, 0, false
	}
	slope := (s.swxy - s.sw*mx*my) / sxx
	a := s.y0 + my - slope*(s.x0+mx)
	if !(a > 0) {
		return 0, 0, false
	}
	return math.Sqrt(a), slope / a, true
}

// modelHz returns partial n of the stiff-string model.
func modelHz(n int, f0Hz, b float64) float64 {
	fn := float64(n)
	return fn * f0Hz * math.Sqrt(math.Max(1+b*fn*fn, 1e-6))
}

package main

import (
	"math"
	"slices"

	"taut/pitch/note"
)

// Error classes. A gross error is off by more than grossCents; an octave error is a
// gross error within grossCents of a whole number of octaves (the estimator locked onto
// a sub- or super-octave). A miss is a tone for which the analyser gave no pitch.
const grossCents = 50

// summary aggregates the answers for one group of tones.
type summary struct {
	N        int
	MedianC  float64 // median |error| in cents; a miss counts as +Inf
	P90C     float64 // 90th percentile of |error| (nearest rank); a miss counts as +Inf
	Gross    int     // |error| > 50 cents, misses included
	Octave   int     // of Gross: within 50 cents of ±1200·k, k ≠ 0
	Misses   int     // of Gross: no pitch at all
	absCents []float64
}

// errorCents is the signed error of gotHz against truthHz in cents, or NaN for a miss.
func errorCents(gotHz, truthHz float64) float64 {
	if gotHz <= 0 || math.IsNaN(gotHz) || math.IsInf(gotHz, 0) {
		return math.NaN()
	}
	return note.Cents(gotHz, truthHz)
}

// isOctaveError reports whether a gross error in cents sits near a whole octave.
func isOctaveError(c float64) bool {
	k := math.Round(c / 1200)
	return k != 0 && math.Abs(c-1200*k) <= grossCents
}

// summarize computes the statistics of signed errors in cents (NaN = miss).
func summarize(errs []float64) summary {
	s := summary{N: len(errs), absCents: make([]float64, 0, len(errs))}
	for _, c := range errs {
		a := math.Abs(c)
		switch {
		case math.IsNaN(c):
			a = math.Inf(1)
			s.Gross++
			s.Misses++
		case a > grossCents:
			s.Gross++
			if isOctaveError(c) {
				s.Octave++
			}
		}
		s.absCents = append(s.absCents, a)
	}
	slices.Sort(s.absCents)
	s.MedianC = median(s.absCents)
	s.P90C = nearestRank(s.absCents, 0.9)
	return s
}

// median of sorted values (mean of the middle two for an even count); NaN when empty.
func median(sorted []float64) float64 {
	n := len(sorted)
	switch {
	case n == 0:
		return math.NaN()
	case n%2 == 1:
		return sorted[n/2]
	case math.IsInf(sorted[n/2], 1):
		return math.Inf(1)
	}
	return (sorted[n/2-1] + sorted[n/2]) / 2
}

// nearestRank returns the p-quantile of sorted values by the nearest-rank rule: the
// smallest value with at least p·n values at or below it. NaN when empty.
func nearestRank(sorted []float64, p float64) float64 {
	n := len(sorted)
	if n == 0 {
		return math.NaN()
	}
	k := int(math.Ceil(p*float64(n))) - 1
	return sorted[min(max(k, 0), n-1)]
}

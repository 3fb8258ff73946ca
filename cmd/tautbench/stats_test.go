package main

import (
	"math"
	"testing"
)

func TestSummarize(t *testing.T) {
	nan := math.NaN()
	tests := []struct {
		name                     string
		errs                     []float64
		median, p90              float64
		gross, octave, misses, n int
	}{
		{"odd count", []float64{-3, 1, 2}, 2, 3, 0, 0, 0, 3},
		{"even count averages the middle two", []float64{0.5, -0.1, 0.3, 0.2}, 0.25, 0.5, 0, 0, 0, 4},
		// nearest rank: ceil(0.9·10) = 9th smallest of |1..10|
		{"p90 nearest rank", []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, -10}, 5.5, 9, 0, 0, 0, 10},
		{"50 cents is not gross", []float64{50, -50}, 50, 50, 0, 0, 0, 2},
		{"octave up and down", []float64{1199, -1210, 0.1}, 1199, 1210, 2, 2, 0, 3},
		{"twelfth is gross, not octave", []float64{1902, 0.1, 0.2}, 0.2, 1902, 1, 0, 0, 3},
		{"two octaves", []float64{2400.3, 0, 0}, 0, 2400.3, 1, 1, 0, 3},
		{"miss counts as infinite", []float64{nan, 1, 2}, 2, math.Inf(1), 1, 0, 1, 3},
		{"half missing", []float64{nan, nan, 1, 2}, math.Inf(1), math.Inf(1), 2, 0, 2, 4},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got := summarize(tt.errs)
			if got.N != tt.n || got.Gross != tt.gross || got.Octave != tt.octave || got.Misses != tt.misses {
				t.Errorf("counts: got n=%d gross=%d octave=%d misses=%d, want %d %d %d %d",
					got.N, got.Gross, got.Octave, got.Misses, tt.n, tt.gross, tt.octave, tt.misses)
			}
			if !closeOrBothInf(got.MedianC, tt.median) || !closeOrBothInf(got.P90C, tt.p90) {
				t.Errorf("median, p90 = %g, %g; want %g, %g", got.MedianC, got.P90C, tt.median, tt.p90)
			}
		})
	}
}

func closeOrBothInf(got, want float64) bool {
	if math.IsInf(want, 1) {
		return math.IsInf(got, 1)
	}
	return math.Abs(got-want) < 1e-9
}

func TestSummarize_Empty(t *testing.T) {
	s := summarize(nil)
	if s.N != 0 || !math.IsNaN(s.MedianC) || !math.IsNaN(s.P90C) {
		t.Errorf("got %+v, want N=0 and NaN statistics", s)
	}
}

func TestErrorCents(t *testing.T) {
	tests := []struct {
		name        string
		got, truth  float64
		want        float64
		wantMissing bool
	}{
		// cent definition: 1200·log2(f2/f1) (reference-values.md, "Units" line)
		{"octave", 880, 440, 1200, false},
		{"semitone", 440 * math.Pow(2, 1.0/12), 440, 100, false},
		{"flat", 440, 440 * math.Pow(2, 0.5/1200), -0.5, false},
		{"zero is a miss", 0, 440, 0, true},
		{"NaN is a miss", math.NaN(), 440, 0, true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got := errorCents(tt.got, tt.truth)
			if tt.wantMissing {
				if !math.IsNaN(got) {
					t.Errorf("got %g, want NaN (miss)", got)
				}
				return
			}
			if math.Abs(got-tt.want) > 1e-9 {
				t.Errorf("got %g cents, want %g", got, tt.want)
			}
		})
	}
}

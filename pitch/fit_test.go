package pitch

import (
	"errors"
	"math"
	"testing"
)

func TestFitPartials_PublishedPiano(t *testing.T) {
	// Measured partials of one grand piano, University of Alabama in Huntsville piano
	// pages, "Inharmonicity" (reference-values §2.2). The reference values for our
	// ordinary least-squares fit of (f_n/n)² against n² are those recorded in §2.2
	// (the page itself gives B = 7.5145e-4 for A4 from its own fit).
	tests := []struct {
		name   string
		hz     []float64
		wantF0 float64
		wantB  float64
		tolF0  float64
		tolB   float64
	}{
		{"A4", []float64{440.0, 880.9, 1323.9, 1769.8, 2219.7, 2674.6, 3135.4, 3603.1}, 439.80, 7.61e-4, 0.005, 0.005e-4},
		{"A3", []float64{219.79, 439.83, 660.00, 880.66, 1101.82, 1323.99, 1546.78, 1770.32}, math.NaN(), 2.16e-4, 0, 0.005e-4},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			ps := make([]Partial, len(tc.hz))
			for i, hz := range tc.hz {
				ps[i] = Partial{N: i + 1, Hz: hz}
			}
			f0, b, err := FitPartials(ps)
			if err != nil {
				t.Fatal(err)
			}
			if !math.IsNaN(tc.wantF0) && math.Abs(f0-tc.wantF0) > tc.tolF0 {
				t.Errorf("f0 = %.4f Hz, want %.2f", f0, tc.wantF0)
			}
			if math.Abs(b-tc.wantB) > tc.tolB {
				t.Errorf("B = %.4e, want %.3e", b, tc.wantB)
			}
		})
	}
}

func TestFitPartials_ExactModel(t *testing.T) {
	// Partials generated from f_n = n·f0·sqrt(1+B·n²) (Fletcher 1964) come back exactly,
	// whichever partials are present.
	const f0, b = 55.0, 3e-4
	ps := []Partial{{N: 2}, {N: 3}, {N: 7}, {N: 11}}
	for i := range ps {
		ps[i].Hz = modelHz(ps[i].N, f0, b)
	}
	gotF0, gotB, err := FitPartials(ps)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(gotF0-f0) > 1e-9 || math.Abs(gotB-b) > 1e-12 {
		t.Errorf("FitPartials = %v, %v, want %v, %v", gotF0, gotB, f0, b)
	}
}

func TestFitPartials_BadInput(t *testing.T) {
	tests := []struct {
		name string
		ps   []Partial
	}{
		{"Empty", nil},
		{"One", []Partial{{N: 1, Hz: 440}}},
		{"SameN", []Partial{{N: 2, Hz: 880}, {N: 2, Hz: 881}}},
		{"ZeroN", []Partial{{N: 0, Hz: 440}, {N: 2, Hz: 880}}},
		{"NegativeHz", []Partial{{N: 1, Hz: -440}, {N: 2, Hz: 880}}},
		{"NaN", []Partial{{N: 1, Hz: math.NaN()}, {N: 2, Hz: 880}}},
		{"Inf", []Partial{{N: 1, Hz: math.Inf(1)}, {N: 2, Hz: 880}}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if _, _, err := FitPartials(tc.ps); err == nil || errors.Is(err, ErrNoPitch) {
				t.Errorf("FitPartials(%v): err = %v, want a fit error", tc.ps, err)
			}
		})
	}
}

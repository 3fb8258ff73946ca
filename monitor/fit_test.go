package monitor

import (
	"math"
	"math/rand/v2"
	"testing"
)

func TestTheilSen(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	tests := []struct {
		name      string
		slope     float64 // cents/hour
		noise     float64 // cents, Gaussian σ
		outliers  int     // readings replaced by wild values
		tolerance float64
	}{
		{"Flat", 0, 0.2, 0, 0.3},
		{"Sagging", -4, 0.3, 0, 0.4},
		{"Rising", 2, 0.3, 0, 0.4},
		{"SaggingWithOutliers", -4, 0.3, 3, 0.6},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var tt, y []float64
			for i := range 19 { // a reading every 10 minutes for 3 hours
				h := float64(i) / 6
				tt = append(tt, h)
				y = append(y, tc.slope*h+tc.noise*rng.NormFloat64())
			}
			for k := range tc.outliers {
				y[3+5*k] += 30 // a neighbour's note or a knock measured as this string
			}
			got, ok, _ := theilSen(nil, tt, y)
			if !ok || math.Abs(got-tc.slope) > tc.tolerance {
				t.Errorf("slope = %.3f (ok %v), want %.1f ± %.1f", got, ok, tc.slope, tc.tolerance)
			}
		})
	}
}

func TestTheilSen_tooFewPoints(t *testing.T) {
	if _, ok, _ := theilSen(nil, []float64{1, 1}, []float64{0, 5}); ok {
		t.Error("two readings at the same time gave a slope")
	}
}

func TestMedian(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 2))
	for _, n := range []int{1, 2, 3, 10, 33, 34, 101, 2016} {
		x := make([]float64, n)
		for i := range x {
			x[i] = float64(i)
		}
		rng.Shuffle(n, func(i, j int) { x[i], x[j] = x[j], x[i] })
		want := float64(n-1) / 2
		if got := median(x); got != want {
			t.Errorf("median of 0..%d = %v, want %v", n-1, got, want)
		}
	}
}

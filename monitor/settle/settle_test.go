package settle

import (
	"math"
	"math/rand/v2"
	"testing"
)

// The check values in these tests are synthetic: no published cents-versus-hours
// settling curve exists (reference-values §4.3, §9), so each test builds a series from
// known parameters plus seeded Gaussian noise and checks that the analysis recovers
// them within the tolerance stated beside each check.

// series samples f every stepH hours from 0 to endH with noise of SD sdCents.
func series(f func(h float64) float64, endH, stepH, sdCents float64, rng *rand.Rand) []Point {
	var pts []Point
	for i := 0; float64(i)*stepH <= endH+1e-9; i++ {
		h := math.Round(float64(i)*stepH*1e9) / 1e9
		pts = append(pts, Point{h, f(h) + sdCents*rng.NormFloat64()})
	}
	return pts
}

func logCurve(a, b, t0 float64) func(float64) float64 {
	return func(h float64) float64 { return a - b*math.Log1p(h/t0) }
}

func expCurve(cInf, amp, tau float64) func(float64) float64 {
	return func(h float64) float64 { return cInf + amp*math.Exp(-h/tau) }
}

func near(got, want, tol float64) bool { return math.Abs(got-want) <= tol }

func TestAnalyze_RecoversParameters(t *testing.T) {
	const seeds = 20
	cases := []struct {
		name      string
		f         func(float64) float64
		model     Model
		want      []float64 // true parameters
		tol       []float64 // absolute tolerance per parameter
		rateNow   float64   // true rate at 10 h
		rateTol   float64
		minChosen int // of the seeds, how many must pick the true model
	}{
		// 10 h at 20-minute rounds, noise 0.3 cents.
		{"LogCreep", logCurve(2, 6, 0.5), ModelLogCreep,
			[]float64{2, 6, 0.5}, []float64{1.0, 0.6, 0.2}, -6 / 10.5, 0.05, 19},
		{"Exponential", expCurve(-12, 10, 2), ModelExp,
			[]float64{-12, 10, 2}, []float64{0.4, 0.8, 0.3}, -10.0 / 2 * math.Exp(-5), 0.03, 19},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			chosen := 0
			for seed := uint64(1); seed <= seeds; seed++ {
				pts := series(tc.f, 10, 1.0/3, 0.3, rand.New(rand.NewPCG(seed, 1)))
				an, err := Analyze(pts, Options{})
				if err != nil {
					t.Fatal(err)
				}
				if len(an.Events) != 0 {
					t.Errorf("seed %d: events %+v in a smooth series", seed, an.Events)
				}
				if !near(an.RateNow, tc.rateNow, tc.rateTol) {
					t.Errorf("seed %d: rate %.4f c/h, want %.4f ± %.2f", seed, an.RateNow, tc.rateNow, tc.rateTol)
				}
				// The delta-method SE must cover the error at 4σ.
				if math.Abs(an.RateNow-tc.rateNow) > 4*an.RateSE {
					t.Errorf("seed %d: rate error %.4f beyond 4 × SE %.4f", seed, an.RateNow-tc.rateNow, an.RateSE)
				}
				if an.Fit.Model != tc.model {
					continue
				}
				chosen++
				for j, w := range tc.want {
					if !near(an.Fit.Params[j], w, tc.tol[j]) {
						t.Errorf("seed %d: %s = %.3f, want %.3f ± %.2f", seed, an.Fit.Names[j], an.Fit.Params[j], w, tc.tol[j])
					}
				}
				if !near(an.Fit.ResidualSD, 0.3, 0.15) { // ±0.15 ≈ 4 sampling SDs of s at n = 31
					t.Errorf("seed %d: residual SD %.3f, want 0.3 ± 0.15", seed, an.Fit.ResidualSD)
				}
			}
			if chosen < tc.minChosen {
				t.Errorf("true model chosen for %d of %d seeds, want ≥ %d", chosen, seeds, tc.minChosen)
			}
		})
	}
}

func TestAnalyze_HoursToSteadyExact(t *testing.T) {
	// Noise-free curves: the answers follow from the formulas in doc.go.
	cases := []struct {
		name    string
		f       func(float64) float64
		endH    float64
		want    float64 // hours from the last point until |rate| < 1 c/h
		ahead   float64 // cents at last + 24 h
		wantMod Model
	}{
		// log: |rate| = b/(t0+t) = 1 at t = b − t0 = 5.5 h; last point 3 h.
		{"LogCreep", logCurve(0, 6, 0.5), 3, 2.5, -6 * math.Log1p(27/0.5), ModelLogCreep},
		// exp: |rate| = (A/τ)e^(−t/τ) = 1 at t = τ·ln(A/τ) = 2·ln 5; last point 2 h.
		{"Exponential", expCurve(-12, 10, 2), 2, 2*math.Log(5) - 2, -12 + 10*math.Exp(-26.0/2), ModelExp},
		// A line steeper than the threshold never becomes steady by the model.
		{"Line", func(h float64) float64 { return -2 * h }, 3, math.Inf(1), -2 * 27, ModelLine},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			pts := series(tc.f, tc.endH, 0.25, 0, rand.New(rand.NewPCG(1, 1)))
			an, err := Analyze(pts, Options{})
			if err != nil {
				t.Fatal(err)
			}
			if an.Fit.Model != tc.wantMod {
				t.Fatalf("model %s, want %s", an.Fit.Model, tc.wantMod)
			}
			if !(near(an.HoursToSteady, tc.want, 1e-3) || an.HoursToSteady == tc.want) {
				t.Errorf("hours to steady %.5f, want %.5f", an.HoursToSteady, tc.want)
			}
			if !near(an.CentsAhead, tc.ahead, 1e-3) {
				t.Errorf("cents at +24 h %.5f, want %.5f", an.CentsAhead, tc.ahead)
			}
		})
	}
}

func TestAnalyze_NoFalseEvents(t *testing.T) {
	// 200 smooth nylon-like nights at 0.5-cent noise: no pull-up, step or outlier.
	for seed := uint64(1); seed <= 200; seed++ {
		rng := rand.New(rand.NewPCG(seed, 7))
		b := 2 + 8*rng.Float64()
		t0 := 0.1 + rng.Float64()
		pts := series(logCurve(0, b, t0), 10, 1.0/3, 0.5, rng)
		an, _ := Analyze(pts, Options{})
		if len(an.Events) != 0 {
			t.Errorf("seed %d (b=%.1f t0=%.2f): events %+v", seed, b, t0, an.Events)
		}
	}
}

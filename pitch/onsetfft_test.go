package pitch

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/dsp/fourier"
)

func TestRealFFT_MatchesGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	for _, n := range []int{16, 64, 256, 512, 1024} {
		var f realFFT
		f.init(n)
		x := make([]float64, n)
		for i := range x {
			x[i] = rng.NormFloat64()
		}
		want := fourier.NewFFT(n).Coefficients(nil, x)
		got := make([]float64, n/2+1)
		f.power(got, x)
		for k := range got {
			w := real(want[k])*real(want[k]) + imag(want[k])*imag(want[k])
			if math.Abs(got[k]-w) > 1e-9*float64(n) {
				t.Fatalf("n %d: bin %d power %v, want %v (gonum)", n, k, got[k], w)
			}
		}
	}
}

func TestFastLog2(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 2))
	for range 100000 {
		x := math.Exp(rng.Float64()*200 - 100)
		if d := math.Abs(fastLog2(x) - math.Log2(x)); d > 2e-4 {
			t.Fatalf("fastLog2(%v) = %v, want %v", x, fastLog2(x), math.Log2(x))
		}
	}
}

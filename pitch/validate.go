package pitch

import (
	"fmt"
	"math"
)

// load converts x to float64 into level 0 of the pyramid, keeps prefix sums of squares
// for level measurements, and rejects non-finite or clipped input.
func (a *Analyzer) load(x []float32) error {
	buf := a.pyr.buf[0][:len(x)]
	energy := a.energy[:len(x)+1]
	energy[0] = 0
	var sum float64
	clipped := 0
	for i, v := range x {
		f := float64(v)
		if f-f != 0 || math.Abs(f) > maxSample { // NaN, ±Inf or absurd
			return fmt.Errorf("%w: sample %d is %v, want a finite value in [-1, 1]", ErrBadSample, i, v)
		}
		if f >= clipLevel || f <= -clipLevel {
			clipped++
		}
		buf[i] = f
		sum += f * f
		energy[i+1] = sum
	}
	if float64(clipped) >= clipShare*float64(len(x)) && clipped > 0 {
		return fmt.Errorf("%w: %d of %d samples (%.1f%%) at full scale", ErrClipped,
			clipped, len(x), 100*float64(clipped)/float64(len(x)))
	}
	a.levelSum = sum
	a.pyr.reset(len(x))
	return nil
}

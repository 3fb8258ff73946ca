package monitor

import "slices"

// theilSen returns the Theil–Sen slope of the points (t[i], y[i]): the median of the
// slopes of all pairs with distinct t (Sen 1968). One wild reading moves it only as far
// as one pair of the many, so a misheard note does not fake a drift. scratch holds the
// pair slopes and is returned (grown if needed) for reuse; ok is false with fewer than
// two distinct times.
func theilSen(scratch, t, y []float64) (slope float64, ok bool, grown []float64) {
	s := scratch[:0]
	for i := range t {
		for j := i + 1; j < len(t); j++ {
			if dt := t[j] - t[i]; dt != 0 {
				s = append(s, (y[j]-y[i])/dt)
			}
		}
	}
	if len(s) == 0 {
		return 0, false, s
	}
	return median(s), true, s
}

// median returns the median of x, reordering x (sorted in place: no allocation, and
// the pair slopes of a rate window are few enough that a full sort costs little).
// x must not be empty.
func median(x []float64) float64 {
	slices.Sort(x)
	n := len(x)
	if n%2 == 1 {
		return x[n/2]
	}
	return (x[n/2-1] + x[n/2]) / 2
}

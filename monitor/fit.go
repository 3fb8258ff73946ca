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

// median returns the median of x, reordering x. x must not be empty.
func median(x []float64) float64 {
	n := len(x)
	if n <= 32 {
		slices.Sort(x)
		if n%2 == 1 {
			return x[n/2]
		}
		return (x[n/2-1] + x[n/2]) / 2
	}
	hi := selectKth(x, n/2)
	if n%2 == 1 {
		return hi
	}
	// After selection every element left of n/2 is ≤ x[n/2]: the lower middle is their max.
	return (slices.Max(x[:n/2]) + hi) / 2
}

// selectKth partially orders x so that x[k] is the k-th smallest and returns it
// (Hoare's quickselect with a median-of-three pivot; no allocation).
func selectKth(x []float64, k int) float64 {
	lo, hi := 0, len(x)-1
	for lo < hi {
		mid := lo + (hi-lo)/2
		if x[mid] < x[lo] {
			x[mid], x[lo] = x[lo], x[mid]
		}
		if x[hi] < x[lo] {
			x[hi], x[lo] = x[lo], x[hi]
		}
		if x[hi] < x[mid] {
			x[hi], x[mid] = x[mid], x[hi]
		}
		pivot := x[mid]
		i, j := lo, hi
		for i <= j {
			for x[i] < pivot {
				i++
			}
			for x[j] > pivot {
				j--
			}
			if i <= j {
				x[i], x[j] = x[j], x[i]
				i++
				j--
			}
		}
		switch {
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return x[k]
		}
	}
	return x[k]
}

package pitch

import "math"

// The onset detector takes a short spectrum every few milliseconds, so it has its own
// small real FFT with fixed-size tables inside the detector (no allocation, no shared
// state): a radix-2 complex FFT of half the frame on the even and odd samples, split into
// the real frame's spectrum. It is several times faster than a general FFT at these
// sizes, which keeps the detector cheap next to Analyze.

const (
	maxFrame = 1024         // longest onset frame, samples
	maxHalf  = maxFrame / 2 // complex points of its half-size FFT
)

// realFFT is the power spectrum of frames of n = 2·m real samples (m a power of two).
type realFFT struct {
	m      int
	rev    [maxHalf]int32   // bit reversal of m
	cos    [maxHalf]float64 // cos(2πk/n), k < m: twiddles of both stages
	sin    [maxHalf]float64
	re, im [maxHalf + 1]float64
}

func (f *realFFT) init(n int) {
	f.m = n / 2
	bits := 0
	for 1<<bits < f.m {
		bits++
	}
	for i := 0; i < f.m; i++ {
		r := 0
		for b := 0; b < bits; b++ {
			r |= (i >> b & 1) << (bits - 1 - b)
		}
		f.rev[i] = int32(r)
		f.cos[i] = math.Cos(2 * math.Pi * float64(i) / float64(n))
		f.sin[i] = math.Sin(2 * math.Pi * float64(i) / float64(n))
	}
}

// power writes |X_k|² of the n real samples x into p[k], k = 0..m (p has m+1 values).
func (f *realFFT) power(p, x []float64) {
	m := f.m
	re, im := f.re[:m+1], f.im[:m+1]
	for i := 0; i < m; i++ {
		j := f.rev[i]
		re[j], im[j] = x[2*i], x[2*i+1]
	}
	f.complexFFT(re[:m], im[:m])
	// Split Z (the FFT of z_j = x_2j + i·x_2j+1) into the spectrum of x:
	// X_k = (Z_k + Z*_{m−k})/2 − i·e^{−iπk/m}·(Z_k − Z*_{m−k})/2.
	re[m], im[m] = re[0], im[0]
	for k := 0; k <= m/2; k++ {
		ar, ai := re[k], im[k]
		br, bi := re[m-k], -im[m-k] // conj(Z_{m−k})
		er, ei := (ar+br)/2, (ai+bi)/2
		or, oi := (ar-br)/2, (ai-bi)/2
		c, s := f.cos[k], f.sin[k] // e^{−iπk/m} = c − i·s
		p[k] = splitPower(er, ei, or, oi, c, s)
		// For m−k: E becomes conj(E), O becomes −conj(O), and the twiddle −c − i·s.
		p[m-k] = splitPower(er, -ei, -or, oi, -c, s)
	}
}

// splitPower is |E − i·(c − i·s)·O|².
func splitPower(er, ei, or, oi, c, s float64) float64 {
	xr := er + c*oi - s*or
	xi := ei - c*or - s*oi
	return xr*xr + xi*xi
}

// complexFFT transforms re + i·im (in bit-reversed order, m ≥ 4) in place, forward
// sign: the first two stages at once without multiplications, then radix 2.
func (f *realFFT) complexFFT(re, im []float64) {
	m := len(re)
	for s := 0; s+3 < m; s += 4 {
		r, q := re[s:s+4:s+4], im[s:s+4:s+4]
		r0, i0 := r[0]+r[1], q[0]+q[1]
		r1, i1 := r[0]-r[1], q[0]-q[1]
		r2, i2 := r[2]+r[3], q[2]+q[3]
		r3, i3 := r[2]-r[3], q[2]-q[3] // times −i below
		r[0], q[0] = r0+r2, i0+i2
		r[2], q[2] = r0-r2, i0-i2
		r[1], q[1] = r1+i3, i1-r3
		r[3], q[3] = r1-i3, i1+r3
	}
	cos, sin := f.cos[:m], f.sin[:m]
	for size := 8; size <= m; size <<= 1 {
		half := size >> 1
		step := 2 * (m / size) // twiddle e^{−2πij/size} = table entry j·n/size = j·step
		for start := 0; start < m; start += size {
			a, b := re[start:start+half], re[start+half:start+size]
			ai, bi := im[start:start+half], im[start+half:start+size]
			b, ai, bi = b[:len(a)], ai[:len(a)], bi[:len(a)]
			for j := range a {
				c, s := cos[j*step], sin[j*step]
				tr := b[j]*c + bi[j]*s
				ti := bi[j]*c - b[j]*s
				b[j], bi[j] = a[j]-tr, ai[j]-ti
				a[j], ai[j] = a[j]+tr, ai[j]+ti
			}
		}
	}
}

// fastLog2 is log2(x) for x > 0 to within 2e-4: the exponent from the bits, the
// mantissa's logarithm from the series 2/ln 2·(t + t³/3 + t⁵/5), t = (m−1)/(m+1).
func fastLog2(x float64) float64 {
	bits := math.Float64bits(x)
	e := float64(int(bits>>52&0x7ff) - 1023)
	m := math.Float64frombits(bits&(1<<52-1) | 1023<<52)
	if m > math.Sqrt2 { // keep t small: m in [√½, √2)
		m *= 0.5
		e++
	}
	t := (m - 1) / (m + 1)
	t2 := t * t
	return e + t*(2.8853900817779268+t2*(0.9617966939259756+t2*0.5770780163555854))
}

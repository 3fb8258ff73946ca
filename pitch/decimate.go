package pitch

import "math"

// A pyramid holds the input at the full rate (level 0) and successively halved rates
// (level k at rate/2^k), computed lazily and only as far as needed. Each halving is a
// linear-phase half-band FIR filter evaluated only at the kept samples ("valid" mode, so
// no start-up transient). A linear time-invariant filter does not move the frequency of a
// sinusoid, exponentially decaying or not, so decimation costs no accuracy; it only
// shrinks the FFTs for low notes.
type pyramid struct {
	taps []float64   // odd taps h[c±1], h[c±3], …; the centre tap is 1/2
	buf  [][]float64 // buf[k] backs level k
	n    []int       // samples computed at level k
}

const (
	halfbandQ    = 12  // odd taps per side; filter length 4q−1 = 47
	halfbandBeta = 8.0 // Kaiser window shape: about 80 dB stopband
	maxLevels    = 12
)

// halfbandLen is the filter length: 4·halfbandQ − 1.
const halfbandLen = 4*halfbandQ - 1

// passEdge is the highest frequency, as a share of a decimated level's rate, that the
// half-band filters keep free of aliases (the stopband begins near 0.31 of the input rate).
const passEdge = 0.38

func (p *pyramid) init(maxSamples int) {
	p.taps = halfbandTaps(halfbandQ, halfbandBeta)
	p.buf = make([][]float64, maxLevels+1)
	p.n = make([]int, maxLevels+1)
	for k, size := 0, maxSamples; k <= maxLevels; k++ {
		p.buf[k] = make([]float64, size+1)
		size = size/2 + 1
	}
}

// halfbandTaps designs a Kaiser-windowed ideal half-band low-pass (cut-off at a quarter of
// the input rate) and scales the odd taps for unit gain at 0 Hz.
func halfbandTaps(q int, beta float64) []float64 {
	c := float64(2*q - 1) // centre index of the 4q−1 taps
	taps := make([]float64, q)
	var sum float64
	for i := range taps {
		m := float64(2*i + 1)
		sinc := math.Sin(math.Pi*m/2) / (math.Pi * m)
		u := m / (c + 1)
		taps[i] = sinc * bessI0(beta*math.Sqrt(1-u*u)) / bessI0(beta)
		sum += taps[i]
	}
	for i := range taps {
		taps[i] *= 0.25 / sum // 1/2 + 2·Σ taps = 1
	}
	return taps
}

// bessI0 is the modified Bessel function of the first kind, order 0 (power series).
func bessI0(x float64) float64 {
	sum, term := 1.0, 1.0
	for k := 1; k < 50; k++ {
		term *= (x / (2 * float64(k))) * (x / (2 * float64(k)))
		sum += term
		if term < 1e-17*sum {
			break
		}
	}
	return sum
}

// reset starts a new input whose level-0 samples are the first n of buf[0].
func (p *pyramid) reset(n int) {
	clear(p.n)
	p.n[0] = n
}

// level returns up to want samples of level k, computing what is missing.
func (p *pyramid) level(k, want int) []float64 {
	if k == 0 || p.n[k] >= want {
		return p.buf[k][:min(want, p.n[k])]
	}
	in := p.level(k-1, 2*(want-1)+halfbandLen)
	avail := 0
	if len(in) >= halfbandLen {
		avail = (len(in)-halfbandLen)/2 + 1
	}
	avail = min(avail, want, len(p.buf[k]))
	if avail <= p.n[k] {
		return p.buf[k][:p.n[k]]
	}
	p.decimate(p.buf[k][p.n[k]:avail], in, p.n[k])
	p.n[k] = max(p.n[k], avail)
	return p.buf[k][:p.n[k]]
}

// decimate writes out[j] = filtered in at input index 2(j+from)+c.
func (p *pyramid) decimate(out, in []float64, from int) {
	const c = 2*halfbandQ - 1
	taps := p.taps[:halfbandQ]
	for j := range out {
		w := in[2*(j+from) : 2*(j+from)+halfbandLen]
		s := 0.5 * w[c]
		for i, h := range taps {
			m := 2*i + 1
			s += h * (w[c-m] + w[c+m])
		}
		out[j] = s
	}
}

// inputLen returns how many level-0 samples give n samples at level k.
func inputLen(k, n int) int {
	for ; k > 0; k-- {
		n = 2*(n-1) + halfbandLen
	}
	return n
}

// levelRate returns the sample rate of level k.
func levelRate(rate float64, k int) float64 { return rate / float64(int(1)<<k) }

package sim

import (
	"context"
	"math/rand/v2"

	"taut/capture"
)

// source is what Noisy decorates: any capture source.
type source interface {
	Format() capture.Format
	Read(ctx context.Context, dst []float32) (int, error)
}

// NoisySource adds seeded white Gaussian noise of a fixed RMS to every sample a
// source delivers: the room. Skipped (idle) time stays unrendered.
type NoisySource struct {
	src source
	rms float32
	rng *rand.Rand
}

// Noisy wraps src, adding noise of the given RMS (e.g. 0.002 ≈ −54 dBFS).
func Noisy(src source, rms float64, seed uint64) *NoisySource {
	return &NoisySource{src: src, rms: float32(rms), rng: rand.New(rand.NewPCG(seed, 0x0015e))}
}

// Format is the wrapped source's format.
func (s *NoisySource) Format() capture.Format { return s.src.Format() }

// Read reads from the wrapped source and adds the noise to the samples read.
func (s *NoisySource) Read(ctx context.Context, dst []float32) (int, error) {
	n, err := s.src.Read(ctx, dst)
	for i := range dst[:n] {
		dst[i] += s.rms * float32(s.rng.NormFloat64())
	}
	return n, err
}

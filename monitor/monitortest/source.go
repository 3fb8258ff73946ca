package monitortest

import (
	"context"
	"io"
	"sync"

	"taut/capture"
)

// Step is one thing a Script source does: deliver samples (interleaved), report a
// gap before the next samples, fail, or stall until the context ends.
type Step struct {
	Samples []float32
	Gap     *capture.Gap // returned with the next samples (or alone when Samples is nil)
	Err     error        // returned as is
	Stall   bool         // block until ctx ends, then return ctx.Err()
}

// Script is a monitor.Source that plays Steps in order and then returns io.EOF.
// Reads returns at most len(dst) samples, in whole frames.
type Script struct {
	F     capture.Format
	Steps []Step

	mu  sync.Mutex
	i   int
	off int
}

// Format returns F.
func (s *Script) Format() capture.Format { return s.F }

// Read plays the next step.
func (s *Script) Read(ctx context.Context, dst []float32) (int, error) {
	s.mu.Lock()
	if s.i >= len(s.Steps) {
		s.mu.Unlock()
		return 0, io.EOF
	}
	st := &s.Steps[s.i]
	switch {
	case st.Stall:
		s.i++
		s.mu.Unlock()
		<-ctx.Done()
		return 0, ctx.Err()
	case st.Err != nil:
		s.i++
		s.mu.Unlock()
		return 0, st.Err
	}
	defer s.mu.Unlock()
	var gap error
	if st.Gap != nil && s.off == 0 {
		gap = st.Gap
	}
	n := min(len(dst), len(st.Samples)-s.off)
	n -= n % s.F.Channels
	copy(dst, st.Samples[s.off:s.off+n])
	s.off += n
	if s.off >= len(st.Samples) {
		s.i, s.off = s.i+1, 0
	}
	return n, gap
}

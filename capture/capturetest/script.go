// Package capturetest provides fake capture sources for tests: a Script of blocks,
// gaps, stalls and errors; decorators that inject failures into any source (short
// reads, overflow every N blocks, an error after N reads), in the style of
// testing/iotest; and a Recorder that captures a real source once so a test can
// replay it as a Script.
package capturetest

import (
	"context"
	"errors"
	"fmt"
	"io"
	"sync"
	"time"

	"taut/capture"
)

// Source is what every capture source offers; the consumers (monitor, cmd/taut)
// declare the same shape on their side.
type Source interface {
	Format() capture.Format
	Read(ctx context.Context, dst []float32) (int, error)
	Close() error
}

// Step is one scripted event of a Script.
type Step struct {
	Samples []float32     // interleaved samples, delivered over as many Reads as dst needs
	Err     error         // returned with the first Read of Samples, or alone when Samples is empty
	Stall   time.Duration // wait this long before the step; negative = until ctx ends
}

// Block delivers samples.
func Block(samples ...float32) Step { return Step{Samples: samples} }

// GapThen delivers samples with a *capture.Gap saying frames were lost before them.
func GapThen(frames int64, reason string, samples []float32) Step {
	return Step{Samples: samples, Err: &capture.Gap{Frames: frames, Reason: reason}}
}

// Fail returns err from one Read, with no samples.
func Fail(err error) Step { return Step{Err: err} }

// Stall makes the next Read wait for d before going on; d < 0 waits until the Read's
// context ends, like a device that stopped sending.
func Stall(d time.Duration) Step {
	if d == 0 {
		d = -1
	}
	return Step{Stall: d}
}

// ErrClosed is returned by a Script read after Close.
var ErrClosed = errors.New("capturetest: read after Close")

// Script is a source that plays its Steps in order and then returns io.EOF.
type Script struct {
	F        capture.Format
	Steps    []Step
	CloseErr error // returned by Close

	mu      sync.Mutex
	i, off  int
	stalled bool // the stall of step i is over
	reads   int
	closed  bool
}

var _ Source = (*Script)(nil)

// NewScript returns a Script of format f.
func NewScript(f capture.Format, steps ...Step) *Script {
	return &Script{F: f, Steps: steps}
}

// Format returns s.F.
func (s *Script) Format() capture.Format { return s.F }

// Read plays the next part of the script into dst.
func (s *Script) Read(ctx context.Context, dst []float32) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	s.reads++
	if s.closed {
		return 0, ErrClosed
	}
	ch := s.F.Channels
	if len(dst) < ch {
		return 0, fmt.Errorf("capturetest: read buffer of %d samples holds no whole frame of %d channels", len(dst), ch)
	}
	for s.i < len(s.Steps) {
		st := s.Steps[s.i]
		if st.Stall != 0 && !s.stalled {
			if err := s.stall(ctx, st.Stall); err != nil {
				return 0, err
			}
			s.stalled = true
		}
		if len(st.Samples) == 0 {
			s.advance()
			if st.Err != nil {
				return 0, st.Err
			}
			continue
		}
		n := min(len(dst)/ch*ch, len(st.Samples)-s.off)
		copy(dst, st.Samples[s.off:s.off+n])
		var err error
		if s.off == 0 {
			err = st.Err
		}
		if s.off += n; s.off >= len(st.Samples) {
			s.advance()
		}
		return n, err
	}
	return 0, io.EOF
}

func (s *Script) advance() {
	s.i++
	s.off = 0
	s.stalled = false
}

func (s *Script) stall(ctx context.Context, d time.Duration) error {
	if d < 0 {
		<-ctx.Done()
		return ctx.Err()
	}
	t := time.NewTimer(d)
	defer t.Stop()
	select {
	case <-t.C:
		return nil
	case <-ctx.Done():
		return ctx.Err()
	}
}

// Close marks the script closed and returns CloseErr.
func (s *Script) Close() error {
	s.mu.Lock()
	defer s.mu.Unlock()
	s.closed = true
	return s.CloseErr
}

// Reads returns how many times Read was called.
func (s *Script) Reads() int {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.reads
}

// Closed reports whether Close was called.
func (s *Script) Closed() bool {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.closed
}

// Done reports whether every step has been played.
func (s *Script) Done() bool {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.i >= len(s.Steps)
}

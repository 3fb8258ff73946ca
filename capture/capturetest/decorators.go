package capturetest

import (
	"context"
	"errors"
	"io"

	"taut/capture"
)

// ShortReads returns a source whose every Read asks src for at most half of dst,
// rounded down to whole frames but at least one frame (like iotest.HalfReader).
func ShortReads(src Source) Source { return &shortReads{src} }

type shortReads struct{ Source }

func (s *shortReads) Read(ctx context.Context, dst []float32) (int, error) {
	ch := s.Format().Channels
	half := max(1, len(dst)/ch/2) * ch
	return s.Source.Read(ctx, dst[:min(len(dst), half)])
}

// OverflowEvery returns a source whose every nth Read that delivers samples also
// returns a *capture.Gap{Frames: frames, Reason: capture.GapOverflow}, as a device
// that overflows now and then does. A Read that already carries an error keeps it.
func OverflowEvery(src Source, n int, frames int64) Source {
	if n < 1 {
		panic("capturetest: OverflowEvery: n < 1")
	}
	return &overflowEvery{Source: src, n: n, frames: frames}
}

type overflowEvery struct {
	Source
	n, count int
	frames   int64
}

func (s *overflowEvery) Read(ctx context.Context, dst []float32) (int, error) {
	n, err := s.Source.Read(ctx, dst)
	if n == 0 || err != nil {
		return n, err
	}
	if s.count++; s.count%s.n == 0 {
		return n, &capture.Gap{Frames: s.frames, Reason: capture.GapOverflow}
	}
	return n, nil
}

// ErrAfter returns a source that passes n Reads through to src and then returns err
// from every Read, like a device unplugged mid-night.
func ErrAfter(src Source, n int, err error) Source {
	return &errAfter{Source: src, n: n, err: err}
}

type errAfter struct {
	Source
	n   int
	err error
}

func (s *errAfter) Read(ctx context.Context, dst []float32) (int, error) {
	if s.n <= 0 {
		return 0, s.err
	}
	s.n--
	return s.Source.Read(ctx, dst)
}

// ReadAll reads src to the end with reads of blockSamples samples (rounded down to
// whole frames, at least one). It returns the samples, every Gap met (the samples that
// came with a Gap are kept), and the first other error; io.EOF is not an error.
func ReadAll(ctx context.Context, src Source, blockSamples int) ([]float32, []capture.Gap, error) {
	ch := src.Format().Channels
	buf := make([]float32, max(1, blockSamples/ch)*ch)
	var out []float32
	var gaps []capture.Gap
	for {
		n, err := src.Read(ctx, buf)
		out = append(out, buf[:n]...)
		var g *capture.Gap
		switch {
		case err == nil:
		case errors.As(err, &g):
			gaps = append(gaps, *g)
		case errors.Is(err, io.EOF):
			return out, gaps, nil
		default:
			return out, gaps, err
		}
	}
}

// Recorder wraps a source and remembers every Read's result, so that a test can
// record a real device once and replay it as a Script.
type Recorder struct {
	Source
	steps []Step
}

var _ Source = (*Recorder)(nil)

// Record starts recording src.
func Record(src Source) *Recorder { return &Recorder{Source: src} }

// Read reads from the wrapped source and records the result.
func (r *Recorder) Read(ctx context.Context, dst []float32) (int, error) {
	n, err := r.Source.Read(ctx, dst)
	ctxErr := errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded)
	if n > 0 || (err != nil && !errors.Is(err, io.EOF) && !ctxErr) {
		r.steps = append(r.steps, Step{Samples: append([]float32(nil), dst[:n]...), Err: err})
	}
	return n, err
}

// Script returns a Script that replays what was recorded so far.
func (r *Recorder) Script() *Script {
	return NewScript(r.Format(), append([]Step(nil), r.steps...)...)
}

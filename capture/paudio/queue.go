package paudio

import (
	"context"
	"fmt"
	"sync/atomic"

	"taut/capture"
)

// blockQueue carries captured blocks from the capture goroutine to the reader. The
// capture side never waits: when every buffer is queued it drops the block, counts
// it, and marks a Gap on the next block it can deliver. It holds no PortAudio state,
// so it is the same (and tested) in every build.
type blockQueue struct {
	channels int
	blocks   chan block
	free     chan []float32
	stop     <-chan struct{}
	gap      *capture.Gap // frames lost since the last queued block (capture side)

	cur block // reader side
	off int
	err error

	frames, overflows, droppedBlocks, droppedFrames atomic.Int64
}

type block struct {
	buf []float32
	n   int
	gap *capture.Gap // frames lost before this block, or nil
	err error
}

func newBlockQueue(channels, blockSamples, blocks int, stop <-chan struct{}) *blockQueue {
	q := &blockQueue{
		channels: channels,
		blocks:   make(chan block, blocks),
		free:     make(chan []float32, blocks),
		stop:     stop,
	}
	for range blocks {
		q.free <- make([]float32, blockSamples)
	}
	return q
}

// put queues a copy of buf. overflowed says the device discarded audio before it.
func (q *blockQueue) put(buf []float32, overflowed bool) {
	frames := int64(len(buf) / q.channels)
	q.frames.Add(frames)
	if overflowed {
		q.overflows.Add(1)
		// The amount PortAudio discarded is unknown.
		q.gap = &capture.Gap{Frames: -1, Reason: capture.GapOverflow}
	}
	var out []float32
	select {
	case out = <-q.free:
	default:
		q.droppedBlocks.Add(1)
		q.droppedFrames.Add(frames)
		if q.gap == nil {
			q.gap = &capture.Gap{Reason: capture.GapDropped}
		}
		if q.gap.Frames >= 0 {
			q.gap.Frames += frames
		}
		return
	}
	n := copy(out, buf)
	q.blocks <- block{buf: out, n: n, gap: q.gap} // never blocks: there are as many slots as buffers
	q.gap = nil
}

// fail hands a final error to the reader, unless the stream is being stopped.
func (q *blockQueue) fail(err error) {
	select {
	case q.blocks <- block{err: err}:
	case <-q.stop:
	}
}

// read copies queued frames into dst, waiting for a block when none is queued. A
// *capture.Gap comes with the first samples of the block after lost frames.
func (q *blockQueue) read(ctx context.Context, dst []float32) (int, error) {
	if q.err != nil {
		return 0, q.err
	}
	if len(dst) < q.channels {
		return 0, fmt.Errorf("paudio: read buffer of %d samples holds no whole frame of %d channels", len(dst), q.channels)
	}
	var gap *capture.Gap
	if q.off >= q.cur.n {
		if q.cur.buf != nil {
			q.free <- q.cur.buf
			q.cur = block{}
		}
		select {
		case q.cur = <-q.blocks:
			q.off = 0
		case <-ctx.Done():
			return 0, ctx.Err()
		}
		if q.cur.err != nil {
			q.err = q.cur.err
			return 0, q.err
		}
		gap = q.cur.gap
	}
	n := min(len(dst)/q.channels*q.channels, q.cur.n-q.off)
	copy(dst, q.cur.buf[q.off:q.off+n])
	q.off += n
	if gap != nil {
		return n, gap
	}
	return n, nil
}

func (q *blockQueue) stats() Stats {
	return Stats{
		Frames:        q.frames.Load(),
		Overflows:     q.overflows.Load(),
		DroppedBlocks: q.droppedBlocks.Load(),
		DroppedFrames: q.droppedFrames.Load(),
	}
}

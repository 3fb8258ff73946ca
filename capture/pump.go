package capture

import (
	"context"
	"sync"
)

// pump runs a blocking read function in its own goroutine so that a consumer's Read
// can give up when its context ends, even while the input (a pipe, stdin) is silent.
// Blocks circulate between a free list and a full queue, so steady-state reading
// allocates nothing; the reader is held back (not dropped) when the consumer is slow,
// which leaves the choice of dropping to the consumer.
type pump struct {
	read     func(dst []float32) (int, error)
	channels int
	full     chan pumpBlock
	free     chan []float32
	stop     chan struct{}
	once     sync.Once
	start    sync.Once
	cur      pumpBlock
	off      int   // samples of cur already handed out
	err      error // sticky, after the last block
}

type pumpBlock struct {
	buf []float32
	n   int
	err error
}

const pumpBlocks = 4

func newPump(read func(dst []float32) (int, error), channels, blockSamples int) *pump {
	p := &pump{
		read: read, channels: channels,
		full: make(chan pumpBlock, pumpBlocks),
		free: make(chan []float32, pumpBlocks),
		stop: make(chan struct{}),
	}
	for range pumpBlocks {
		p.free <- make([]float32, blockSamples)
	}
	return p
}

func (p *pump) run() {
	for {
		var buf []float32
		select {
		case buf = <-p.free:
		case <-p.stop:
			return
		}
		n, err := p.read(buf)
		select {
		case p.full <- pumpBlock{buf, n, err}:
		case <-p.stop:
			return
		}
		if err != nil {
			return
		}
	}
}

// Read copies whole frames into dst from the blocks the goroutine has read.
func (p *pump) Read(ctx context.Context, dst []float32) (int, error) {
	if p.err != nil {
		return 0, p.err
	}
	if err := ctx.Err(); err != nil {
		return 0, err
	}
	p.start.Do(func() { go p.run() })
	for p.off >= p.cur.n {
		if p.cur.buf != nil {
			if p.cur.err != nil {
				p.err = p.cur.err
				return 0, p.err
			}
			p.free <- p.cur.buf
			p.cur = pumpBlock{}
		}
		select {
		case p.cur = <-p.full:
			p.off = 0
		case <-ctx.Done():
			return 0, ctx.Err()
		}
	}
	n := min(len(dst)/p.channels*p.channels, p.cur.n-p.off)
	copy(dst, p.cur.buf[p.off:p.off+n])
	p.off += n
	return n, nil
}

// Close stops the goroutine once its current read returns.
func (p *pump) Close() {
	p.once.Do(func() { close(p.stop) })
}

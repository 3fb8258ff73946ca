package paudio

import (
	"context"
	"errors"
	"testing"
	"time"

	"taut/capture"
)

func TestBlockQueue(t *testing.T) {
	stop := make(chan struct{})
	q := newBlockQueue(2, 4, 2, stop) // two stereo frames per block, two buffers
	blk := func(v float32) []float32 { return []float32{v, v, v, v} }
	ctx := context.Background()
	dst := make([]float32, 16)

	q.put(blk(1), false)
	q.put(blk(2), true)  // an overflow before block 2
	q.put(blk(3), false) // both buffers queued: dropped
	q.put(blk(4), false) // dropped too
	n, err := q.read(ctx, dst)
	if n != 4 || err != nil || dst[0] != 1 {
		t.Fatalf("read 1 = %d %v %v; want block 1 and no gap", n, dst[:n], err)
	}
	n, err = q.read(ctx, dst[:3]) // room for one frame only
	var g *capture.Gap
	if n != 2 || !errors.As(err, &g) || *g != (capture.Gap{Frames: -1, Reason: capture.GapOverflow}) || dst[0] != 2 {
		t.Fatalf("read 2 = %d %v %v; want the first frame of block 2 with an overflow gap of unknown size", n, dst[:n], err)
	}
	if n, err = q.read(ctx, dst); n != 2 || err != nil {
		t.Fatalf("read 3 = %d %v; want the rest of block 2 and no second gap", n, err)
	}
	q.put(blk(5), false) // a buffer is free again
	n, err = q.read(ctx, dst)
	if n != 4 || !errors.As(err, &g) || *g != (capture.Gap{Frames: 4, Reason: capture.GapDropped}) || dst[0] != 5 {
		t.Fatalf("read 4 = %d %v %v; want block 5 with a dropped gap of 4 frames", n, dst[:n], err)
	}
	if s := q.stats(); s != (Stats{Frames: 10, Overflows: 1, DroppedBlocks: 2, DroppedFrames: 4}) {
		t.Errorf("stats = %+v; want 10 frames, 1 overflow, 2 blocks (4 frames) dropped", s)
	}

	ctx2, cancel := context.WithTimeout(ctx, 10*time.Millisecond)
	defer cancel()
	if _, err := q.read(ctx2, dst); !errors.Is(err, context.DeadlineExceeded) {
		t.Errorf("read of an empty queue = %v; want to wait until ctx ends", err)
	}
	boom := errors.New("device unplugged")
	q.fail(boom)
	if _, err := q.read(ctx, dst); !errors.Is(err, boom) {
		t.Errorf("read after fail = %v; want %v", err, boom)
	}
	if _, err := q.read(ctx, dst); !errors.Is(err, boom) {
		t.Errorf("second read after fail = %v; want the same error again", err)
	}
	if _, err := q.read(ctx, dst[:1]); !errors.Is(err, boom) {
		t.Errorf("read = %v; want the sticky error", err)
	}
}

func TestBlockQueueFailDoesNotBlockWhenStopping(t *testing.T) {
	stop := make(chan struct{})
	q := newBlockQueue(1, 2, 1, stop)
	q.put([]float32{1, 2}, false) // the only slot is full and nobody reads
	close(stop)
	done := make(chan struct{})
	go func() { q.fail(errors.New("late")); close(done) }()
	select {
	case <-done:
	case <-time.After(time.Second):
		t.Fatal("fail blocked on a full queue while the stream was stopping")
	}
}

func TestBlockQueueShortDst(t *testing.T) {
	q := newBlockQueue(2, 4, 1, nil)
	if _, err := q.read(context.Background(), make([]float32, 1)); err == nil {
		t.Error("read into less than a frame: want an error")
	}
}

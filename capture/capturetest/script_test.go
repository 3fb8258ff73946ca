package capturetest

import (
	"context"
	"errors"
	"io"
	"slices"
	"testing"
	"time"

	"taut/capture"
)

var stereo = capture.Format{SampleRate: 8000, Channels: 2}

func TestScriptPlaysSteps(t *testing.T) {
	boom := errors.New("device unplugged")
	s := NewScript(stereo,
		Block(1, 2, 3, 4, 5, 6),
		GapThen(100, capture.GapOverflow, []float32{7, 8}),
		Stall(time.Millisecond),
		Block(9, 10),
		Fail(boom),
		Block(11, 12),
	)
	type result struct {
		samples []float32
		err     error
	}
	var got []result
	buf := make([]float32, 5) // two whole frames at most
	for range 7 {
		n, err := s.Read(context.Background(), buf)
		got = append(got, result{slices.Clone(buf[:n]), err})
	}
	want := []result{
		{[]float32{1, 2, 3, 4}, nil},
		{[]float32{5, 6}, nil},
		{[]float32{7, 8}, &capture.Gap{Frames: 100, Reason: capture.GapOverflow}},
		{[]float32{9, 10}, nil},
		{[]float32{}, boom},
		{[]float32{11, 12}, nil},
		{[]float32{}, io.EOF},
	}
	for i := range want {
		g, w := got[i], want[i]
		var gg, wg *capture.Gap
		sameErr := errors.Is(g.err, w.err) || (errors.As(g.err, &gg) && errors.As(w.err, &wg) && *gg == *wg)
		if !slices.Equal(g.samples, w.samples) || !sameErr {
			t.Errorf("read %d = %v, %v; want %v, %v", i, g.samples, g.err, w.samples, w.err)
		}
	}
	if !s.Done() || s.Reads() != 7 {
		t.Errorf("Done, Reads = %v, %d; want true, 7", s.Done(), s.Reads())
	}
	s.Close()
	if _, err := s.Read(context.Background(), buf); !errors.Is(err, ErrClosed) || !s.Closed() {
		t.Errorf("Read after Close = %v; want ErrClosed", err)
	}
}

func TestStallUntilContextEnds(t *testing.T) {
	s := NewScript(stereo, Block(1, 2), Stall(-1), Block(3, 4))
	buf := make([]float32, 8)
	s.Read(context.Background(), buf)
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Millisecond)
	defer cancel()
	if _, err := s.Read(ctx, buf); !errors.Is(err, context.DeadlineExceeded) {
		t.Errorf("stalled Read = %v; want context.DeadlineExceeded", err)
	}
}

func TestDecorators(t *testing.T) {
	samples := make([]float32, 40)
	for i := range samples {
		samples[i] = float32(i)
	}
	t.Run("short reads", func(t *testing.T) {
		src := ShortReads(NewScript(stereo, Block(samples...)))
		buf := make([]float32, 16)
		n, _ := src.Read(context.Background(), buf)
		if n != 8 {
			t.Errorf("first read = %d samples; want 8 (half of 16, whole frames)", n)
		}
		got, gaps, err := ReadAll(context.Background(), ShortReads(NewScript(stereo, Block(samples...))), 2)
		if err != nil || len(gaps) != 0 || !slices.Equal(got, samples) {
			t.Errorf("ReadAll through ShortReads = %v, %v, %v; want every sample", got, gaps, err)
		}
	})
	t.Run("overflow every 3", func(t *testing.T) {
		got, gaps, err := ReadAll(context.Background(), OverflowEvery(NewScript(stereo, Block(samples...)), 3, 512), 4)
		if err != nil || !slices.Equal(got, samples) {
			t.Fatalf("samples lost: %v, %v", got, err)
		}
		// 10 reads of 4 samples: gaps on reads 3, 6 and 9.
		if len(gaps) != 3 || gaps[0] != (capture.Gap{Frames: 512, Reason: capture.GapOverflow}) {
			t.Errorf("gaps = %v; want 3 overflow gaps of 512 frames", gaps)
		}
	})
	t.Run("error after 2 reads", func(t *testing.T) {
		boom := errors.New("gone")
		got, _, err := ReadAll(context.Background(), ErrAfter(NewScript(stereo, Block(samples...)), 2, boom), 4)
		if !errors.Is(err, boom) || len(got) != 8 {
			t.Errorf("got %d samples, %v; want 8 samples then %v", len(got), err, boom)
		}
	})
}

func TestRecordAndReplay(t *testing.T) {
	live := NewScript(stereo, Block(1, 2, 3, 4), GapThen(-1, capture.GapOverflow, []float32{5, 6}), Block(7, 8))
	rec := Record(live)
	first, gaps1, err := ReadAll(context.Background(), rec, 4)
	if err != nil {
		t.Fatal(err)
	}
	again, gaps2, err := ReadAll(context.Background(), rec.Script(), 4)
	if err != nil || !slices.Equal(first, again) || !slices.Equal(gaps1, gaps2) {
		t.Errorf("replay = %v %v %v; want %v %v", again, gaps2, err, first, gaps1)
	}
}

package capture

import (
	"context"
	"errors"
	"io"
	"testing"
	"time"

	"taut/capture/synth"
)

var _ interface {
	Format() Format
	Read(context.Context, []float32) (int, error)
	Close() error
} = (*SynthSource)(nil)

func TestSynthSourcePlaysQueue(t *testing.T) {
	f := Format{8000, 1}
	c4 := synth.Tone{F0Hz: 261.6256, B: 1e-4, DecayS: 1, Seed: 3}
	a3 := synth.Tone{F0Hz: 220, Seed: 4}
	s := NewSynthSource(f)
	s.Queue(c4, 0.5)
	s.Skip(12345)
	s.QueueSilence(0.01)
	s.Queue(a3, 0.25)
	s.Skip(99)
	s.Close()

	var samples []float32
	var gaps []Gap
	var gapAt []int
	buf := make([]float32, 700)
	for {
		n, err := s.Read(context.Background(), buf)
		var g *Gap
		if errors.As(err, &g) {
			gaps = append(gaps, *g)
			gapAt = append(gapAt, len(samples))
		} else if err == io.EOF {
			break
		} else if err != nil {
			t.Fatal(err)
		}
		samples = append(samples, buf[:n]...)
	}
	want := make([]float32, 4000+80+2000)
	c4.Render(want[:4000], 8000)
	a3.Render(want[4080:], 8000)
	if !slicesEqualBits(samples, want) {
		t.Errorf("samples differ from the tones rendered directly (%d vs %d)", len(samples), len(want))
	}
	if len(gaps) != 2 || gaps[0] != (Gap{12345, GapIdle}) || gapAt[0] != 4000 || gaps[1] != (Gap{99, GapIdle}) || gapAt[1] != 6080 {
		t.Errorf("gaps %v at %v; want idle 12345 at sample 4000 and idle 99 at the end", gaps, gapAt)
	}
}

func TestSynthSourceChannels(t *testing.T) {
	s := NewSynthSource(Format{8000, 3})
	s.QueueChannel(2, synth.Tone{F0Hz: 440}, 0.01)
	s.Queue(synth.Tone{F0Hz: 440}, 0.01)
	s.Close()
	got, err := readAllSource(context.Background(), s, 33)
	if err != nil || len(got) != 3*160 {
		t.Fatalf("got %d samples, %v", len(got), err)
	}
	for i := 0; i < 80; i++ {
		if got[3*i] != 0 || got[3*i+2] != 0 || (i > 0 && got[3*i+1] == 0) {
			t.Fatalf("frame %d = %v; want the tone on channel 2 only", i, got[3*i:3*i+3])
		}
	}
	for i := 80; i < 160; i++ {
		if got[3*i] != got[3*i+1] || got[3*i] != got[3*i+2] {
			t.Fatalf("frame %d = %v; want the tone on every channel", i, got[3*i:3*i+3])
		}
	}
}

func TestSynthSourceWaitsForQueue(t *testing.T) {
	s := NewSynthSource(Format{8000, 1})
	ctx, cancel := context.WithTimeout(context.Background(), 20*time.Millisecond)
	defer cancel()
	if _, err := s.Read(ctx, make([]float32, 8)); !errors.Is(err, context.DeadlineExceeded) {
		t.Fatalf("Read of an empty open queue = %v; want to wait until ctx ends", err)
	}
	go func() {
		time.Sleep(10 * time.Millisecond)
		s.Queue(synth.Tone{F0Hz: 100}, 0.001)
		s.Close()
	}()
	got, err := readAllSource(context.Background(), s, 8)
	if err != nil || len(got) != 8 {
		t.Errorf("got %d samples, %v; want the 8 queued from another goroutine, then io.EOF", len(got), err)
	}
}

func TestSynthSourcePanics(t *testing.T) {
	for name, fn := range map[string]func(s *SynthSource){
		"negative duration": func(s *SynthSource) { s.Queue(synth.Tone{}, -1) },
		"bad channel":       func(s *SynthSource) { s.QueueChannel(3, synth.Tone{}, 1) },
		"negative skip":     func(s *SynthSource) { s.Skip(-5) },
		"queue after close": func(s *SynthSource) { s.Close(); s.QueueSilence(1) },
	} {
		t.Run(name, func(t *testing.T) {
			defer func() {
				if recover() == nil {
					t.Error("no panic")
				}
			}()
			fn(NewSynthSource(Format{8000, 2}))
		})
	}
}

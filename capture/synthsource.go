package capture

import (
	"context"
	"fmt"
	"io"
	"math"
	"slices"
	"sync"

	"taut/capture/synth"
)

// SynthSource plays a queue of synthetic tones, rendered silences and skipped time, in
// order. It stands in for a microphone in tests and the demo: Queue and Skip may be
// called from another goroutine while Read waits for more.
//
// A skip renders nothing: the next Read returns the samples after it together with a
// *Gap{Reason: GapIdle} whose Frames says how much time passed, so a simulated night
// costs only the tones in it. A skip at the very end of a closed queue is reported
// with zero samples. Each tone is rendered whole when it starts, so memory grows with
// the longest single tone, not with the queue.
type SynthSource struct {
	format Format
	notify chan struct{}

	mu     sync.Mutex
	queue  []synthItem
	closed bool
	cur    synthItem
	mono   []float32 // the current item, rendered
	pos    int       // frames of mono already delivered
	gap    int64     // frames skipped since the last delivered sample
}

type synthItem struct {
	kind    synthKind
	tone    synth.Tone
	frames  int64
	channel int // 1-based channel the tone sounds on; 0 = every channel
}

type synthKind uint8

const (
	synthTone synthKind = iota
	synthSilence
	synthSkip
)

// NewSynthSource returns an empty source of format f. It panics if f is invalid.
func NewSynthSource(f Format) *SynthSource {
	if err := f.Validate(); err != nil {
		panic(err)
	}
	return &SynthSource{format: f, notify: make(chan struct{}, 1), pos: 0}
}

// Format returns the format given to NewSynthSource.
func (s *SynthSource) Format() Format { return s.format }

// Queue appends durS seconds of tone, sounding on every channel.
func (s *SynthSource) Queue(tone synth.Tone, durS float64) {
	s.QueueChannel(0, tone, durS)
}

// QueueChannel appends durS seconds of tone on one channel (1-based; 0 = every
// channel); the other channels are silent meanwhile. It panics on a negative or
// non-finite duration, a channel outside 0..Channels, or after Close.
func (s *SynthSource) QueueChannel(channel int, tone synth.Tone, durS float64) {
	if channel < 0 || channel > s.format.Channels {
		panic(fmt.Sprintf("capture: SynthSource: channel %d outside 0..%d", channel, s.format.Channels))
	}
	s.push(synthItem{kind: synthTone, tone: tone, frames: s.durFrames(durS), channel: channel})
}

// QueueSilence appends durS seconds of rendered zeros (unlike Skip, the samples are
// delivered).
func (s *SynthSource) QueueSilence(durS float64) {
	s.push(synthItem{kind: synthSilence, frames: s.durFrames(durS)})
}

// Skip appends frames of unrendered time, reported as an idle Gap.
func (s *SynthSource) Skip(frames int64) {
	if frames < 0 {
		panic(fmt.Sprintf("capture: SynthSource: Skip(%d): want frames >= 0", frames))
	}
	s.push(synthItem{kind: synthSkip, frames: frames})
}

func (s *SynthSource) durFrames(durS float64) int64 {
	if durS < 0 || math.IsNaN(durS) || math.IsInf(durS, 0) {
		panic(fmt.Sprintf("capture: SynthSource: duration %v s; want a finite duration >= 0", durS))
	}
	return int64(math.Round(durS * float64(s.format.SampleRate)))
}

func (s *SynthSource) push(it synthItem) {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.closed {
		panic("capture: SynthSource: queued after Close")
	}
	if it.frames > 0 {
		s.queue = append(s.queue, it)
	}
	s.wake()
}

func (s *SynthSource) wake() {
	select {
	case s.notify <- struct{}{}:
	default:
	}
}

// Close marks the end of the queue: Read delivers what is queued, then io.EOF.
func (s *SynthSource) Close() error {
	s.mu.Lock()
	defer s.mu.Unlock()
	s.closed = true
	s.wake()
	return nil
}

// Read delivers the queued audio in order. While the queue is empty and the source is
// not closed it waits for more, or for ctx to end.
func (s *SynthSource) Read(ctx context.Context, dst []float32) (int, error) {
	ch := s.format.Channels
	if len(dst) < ch {
		return 0, fmt.Errorf("capture: synth: read buffer of %d samples holds no whole frame of %d channels", len(dst), ch)
	}
	for {
		if err := ctx.Err(); err != nil {
			return 0, err
		}
		s.mu.Lock()
		n, ok, err := s.readLocked(dst)
		s.mu.Unlock()
		if ok {
			return n, err
		}
		select {
		case <-s.notify:
		case <-ctx.Done():
			return 0, ctx.Err()
		}
	}
}

// readLocked delivers from the current item, starting the next when it is used up.
// ok is false when there is nothing to deliver yet.
func (s *SynthSource) readLocked(dst []float32) (n int, ok bool, err error) {
	for int64(s.pos) >= s.cur.frames {
		if len(s.queue) == 0 {
			if !s.closed {
				return 0, false, nil
			}
			if s.gap > 0 {
				return 0, true, s.takeGap()
			}
			return 0, true, io.EOF
		}
		s.start(s.queue[0])
		s.queue = s.queue[1:]
	}
	ch := s.format.Channels
	frames := min(len(dst)/ch, int(s.cur.frames)-s.pos)
	out := dst[:frames*ch]
	src := s.mono[s.pos : s.pos+frames]
	switch {
	case ch == 1:
		copy(out, src)
	case s.cur.channel == 0:
		for i, v := range src {
			for c := range ch {
				out[i*ch+c] = v
			}
		}
	default:
		clear(out)
		for i, v := range src {
			out[i*ch+s.cur.channel-1] = v
		}
	}
	s.pos += frames
	if s.gap > 0 {
		return len(out), true, s.takeGap()
	}
	return len(out), true, nil
}

// start makes it the current item, rendering it.
func (s *SynthSource) start(it synthItem) {
	s.pos = 0
	if it.kind == synthSkip {
		s.gap += it.frames
		s.cur = synthItem{}
		return
	}
	s.cur = it
	s.mono = slices.Grow(s.mono[:0], int(it.frames))[:it.frames]
	if it.kind == synthTone {
		it.tone.Render(s.mono, float64(s.format.SampleRate))
	} else {
		clear(s.mono)
	}
}

func (s *SynthSource) takeGap() error {
	g := &Gap{Frames: s.gap, Reason: GapIdle}
	s.gap = 0
	return g
}

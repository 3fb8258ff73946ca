package main

import (
	"context"
	"fmt"
	"runtime"
	"strings"
	"sync"

	"taut/capture"
	"taut/pitch"
)

// fileResult is what measuring one file found.
type fileResult struct {
	file  string
	notes []measuredNote
	err   error // the file could not be read (fully); notes holds what could be measured
}

// measuredNote is one note of a file: its channel, its onset and either a measurement
// or the reason there is none (silence, noise, clipping, too short).
type measuredNote struct {
	channel int // 1-based; 0 = all channels mixed (--mix)
	onsetS  float64
	note    pitch.Note
	err     error
}

// measureFiles measures the files on all CPUs and delivers the results in the order
// of the files. It stops handing out files when ctx ends.
func measureFiles(ctx context.Context, files []string, opts measureOptions) <-chan fileResult {
	out := make(chan fileResult)
	done := make([]chan fileResult, len(files))
	for i := range done {
		done[i] = make(chan fileResult, 1)
	}
	jobs := make(chan int)
	go func() {
		defer close(jobs)
		for i := range files {
			select {
			case jobs <- i:
			case <-ctx.Done():
				return
			}
		}
	}()
	var wg sync.WaitGroup
	for range min(runtime.GOMAXPROCS(0), len(files)) {
		wg.Go(func() {
			m := &meter{opts: opts, analyzers: map[int]*pitch.Analyzer{}}
			for i := range jobs {
				done[i] <- m.measure(files[i])
			}
		})
	}
	go func() {
		defer close(out)
		for i := range files {
			select {
			case r := <-done[i]:
				out <- r
			case <-ctx.Done():
				return
			}
		}
	}()
	return out
}

// meter measures files one after another, reusing its buffers and analysers.
type meter struct {
	opts      measureOptions
	analyzers map[int]*pitch.Analyzer // by sample rate
	mono      []float32
	segs      []pitch.Segment
}

func (m *meter) measure(path string) fileResult {
	res := fileResult{file: path}
	f, samples, err := capture.ReadWAVFile(path)
	res.err = err // a file cut short still has its complete frames measured
	if len(samples) == 0 {
		if err == nil {
			res.err = fmt.Errorf("%s holds no audio frames", path)
		}
		return res
	}
	if m.opts.channel > f.Channels {
		res.err = fmt.Errorf("%s has %d channel(s); --channel %d asks for channel %d", path, f.Channels, m.opts.channel, m.opts.channel)
		return res
	}
	a, err := m.analyzer(f.SampleRate)
	if err != nil {
		res.err = fmt.Errorf("%s: %w", path, err)
		return res
	}
	for _, ch := range m.channels(f.Channels) {
		m.mono = capture.Channel(m.mono, samples, f.Channels, ch)
		if f.Channels == 1 {
			ch = 1
		}
		res.notes = m.measureChannel(res.notes, a, ch, float64(f.SampleRate))
	}
	if res.err == nil && !anyPitched(res.notes) {
		res.err = fmt.Errorf("%s: no pitched note found (%s)", path, noPitchReasons(res.notes))
	}
	return res
}

// channels lists the channels to analyse, as capture.Channel picks them: the one asked
// for, 0 for the mix, or every channel in turn.
func (m *meter) channels(n int) []int {
	switch {
	case m.opts.channel > 0:
		return []int{m.opts.channel}
	case m.opts.mix || n == 1:
		return []int{0}
	}
	chans := make([]int, n)
	for i := range chans {
		chans[i] = i + 1
	}
	return chans
}

// measureChannel segments m.mono into notes and analyses each, appending to dst.
func (m *meter) measureChannel(dst []measuredNote, a *pitch.Analyzer, ch int, rate float64) []measuredNote {
	m.segs = pitch.Segments(m.segs[:0], m.mono, rate, a.Config().MinHz)
	if len(m.segs) == 0 {
		// No onset stands out (a steady tone from its first sample, or noise): measure
		// the start of the channel as one note and let the analyser say if it is no note.
		m.segs = append(m.segs, pitch.Segment{Onset: 0, Start: 0, End: min(len(m.mono), pitch.WindowLen(rate, a.Config().MinHz))})
	}
	for _, s := range m.segs {
		mn := measuredNote{channel: ch, onsetS: float64(s.Onset) / rate}
		start, end := max(0, s.Start), min(len(m.mono), s.End)
		if start >= end {
			mn.err = pitch.ErrTooShort
		} else {
			mn.err = a.Analyze(&mn.note, m.mono[start:end], pitch.Hint{})
		}
		dst = append(dst, mn)
	}
	return dst
}

func anyPitched(notes []measuredNote) bool {
	for _, n := range notes {
		if n.err == nil {
			return true
		}
	}
	return false
}

// noPitchReasons summarises why no note had a pitch, e.g. "2 segment(s): pitch: silence".
func noPitchReasons(notes []measuredNote) string {
	var reasons []string
	seen := map[string]bool{}
	for _, n := range notes {
		if r := n.err.Error(); !seen[r] {
			seen[r] = true
			reasons = append(reasons, r)
		}
	}
	return fmt.Sprintf("%d segment(s) analysed: %s", len(notes), strings.Join(reasons, "; "))
}

// analyzer returns the analyser for a sample rate, making it on first use with a
// buffer long enough for the lowest pitch searched.
func (m *meter) analyzer(rateHz int) (*pitch.Analyzer, error) {
	if a, ok := m.analyzers[rateHz]; ok {
		return a, nil
	}
	minHz := m.opts.minHz
	if minHz == 0 {
		minHz = 25 // pitch's default; below A0 = 27.5 Hz (ISO 16)
	}
	a, err := pitch.New(pitch.Config{
		SampleRate: float64(rateHz),
		MinHz:      m.opts.minHz,
		MaxHz:      m.opts.maxHz,
		MaxSamples: max(1<<16, min(1<<24, pitch.WindowLen(float64(rateHz), minHz))),
	})
	if err != nil {
		return nil, err
	}
	m.analyzers[rateHz] = a
	return a, nil
}

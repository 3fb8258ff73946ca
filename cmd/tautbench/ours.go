package main

import (
	"fmt"
	"syscall"
	"time"

	"taut/capture"
	"taut/pitch"
)

// ourMinHz is the lowest pitch `taut measure` looks for without hints (A0 with room).
const ourMinHz = 25

// ourAnalyser measures files the way `taut measure` does without hints (see
// cmd/taut/measure_files.go): decode the WAV, take the mono channel, find the notes with
// pitch.Segments (or, when no onset stands out, the start of the file), analyse each
// note's window.
type ourAnalyser struct {
	an     *pitch.Analyzer
	rateHz float64
	note   pitch.Note
	mono   []float32
	segs   []pitch.Segment
}

func newOurAnalyser(rateHz float64) (*ourAnalyser, error) {
	an, err := pitch.New(pitch.Config{
		SampleRate: rateHz,
		MaxSamples: max(1<<16, pitch.WindowLen(rateHz, ourMinHz)),
	})
	if err != nil {
		return nil, fmt.Errorf("new analyser: %w", err)
	}
	return &ourAnalyser{an: an, rateHz: rateHz}, nil
}

// measure returns the first partial of the first note in path that has a pitch (a
// corpus file holds one tone; `taut measure` would print the other windows as errors)
// and how many notes had a pitch. With no pitch at all, err is the first note's error.
func (o *ourAnalyser) measure(path string) (hz float64, pitched int, err error) {
	f, x, err := capture.ReadWAVFile(path)
	if err != nil {
		return 0, 0, err
	}
	if float64(f.SampleRate) != o.rateHz || f.Channels != 1 {
		return 0, 0, fmt.Errorf("%s: got %d Hz × %d channels, want %g Hz mono", path, f.SampleRate, f.Channels, o.rateHz)
	}
	o.mono = capture.Channel(o.mono, x, f.Channels, 0)
	o.segs = pitch.Segments(o.segs[:0], o.mono, o.rateHz, ourMinHz)
	if len(o.segs) == 0 {
		o.segs = append(o.segs, pitch.Segment{End: min(len(o.mono), pitch.WindowLen(o.rateHz, ourMinHz))})
	}
	var firstErr error
	for _, s := range o.segs {
		aerr := pitch.ErrTooShort
		if s.Start < s.End {
			aerr = o.an.Analyze(&o.note, o.mono[s.Start:s.End], pitch.Hint{})
		}
		switch {
		case aerr != nil && firstErr == nil:
			firstErr = fmt.Errorf("note at %.3f s: %w", float64(s.Onset)/o.rateHz, aerr)
		case aerr == nil:
			if pitched == 0 {
				hz = o.note.FundamentalHz
			}
			pitched++
		}
	}
	if pitched == 0 {
		return 0, 0, firstErr
	}
	return hz, pitched, nil
}

// cpuTime is this process's user + system CPU time so far (all threads, so the
// garbage collector's work counts too).
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

package capture

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"time"
)

// FileSource replays a list of WAV files in order as one stream, as fast as possible
// or paced against the wall clock. All files must share one Format.
//
// A damaged file (cut short, a NaN sample) ends with an error naming it; the next Read
// goes on with the next file, so one bad file does not lose the rest of a night.
type FileSource struct {
	paths  []string
	format Format
	speed  float64
	i      int // index of the open file in paths
	f      *os.File
	wr     *WAVReader
	start  time.Time // wall time at which frame 0 was due, when pacing
	frames int64     // frames delivered, for pacing
}

// OpenFiles checks the header of every file and opens the first. speed 0 delivers as
// fast as the caller reads; speed s > 0 delivers s seconds of audio per wall-clock
// second (1 = real time).
func OpenFiles(paths []string, speed float64) (*FileSource, error) {
	if len(paths) == 0 {
		return nil, errors.New("capture: no WAV files given")
	}
	if speed < 0 || math.IsNaN(speed) || math.IsInf(speed, 0) {
		return nil, fmt.Errorf("capture: replay speed %v; want 0 (as fast as possible) or a positive factor (1 = real time)", speed)
	}
	s := &FileSource{paths: paths, speed: speed, i: -1}
	for i, p := range paths {
		f, err := probeWAV(p)
		if err != nil {
			return nil, err
		}
		if i == 0 {
			s.format = f
		} else if f != s.format {
			return nil, fmt.Errorf("capture: %s is %d Hz × %d channels but %s is %d Hz × %d channels; want one format for all replayed files",
				p, f.SampleRate, f.Channels, paths[0], s.format.SampleRate, s.format.Channels)
		}
	}
	if err := s.next(); err != nil {
		return nil, err
	}
	return s, nil
}

func probeWAV(path string) (Format, error) {
	f, err := os.Open(path)
	if err != nil {
		return Format{}, fmt.Errorf("capture: %w", err)
	}
	defer f.Close()
	w, err := newWAVReader(bufio.NewReader(f), path)
	if err != nil {
		return Format{}, err
	}
	return w.Format(), nil
}

// next closes the open file and opens the following one; io.EOF after the last.
func (s *FileSource) next() error {
	if s.f != nil {
		s.f.Close()
		s.f, s.wr = nil, nil
	}
	s.i++
	if s.i >= len(s.paths) {
		return io.EOF
	}
	path := s.paths[s.i]
	f, err := os.Open(path)
	if err != nil {
		return fmt.Errorf("capture: %w", err)
	}
	wr, err := newWAVReader(bufio.NewReaderSize(f, 64<<10), path)
	if err != nil {
		f.Close()
		return err
	}
	if wr.Format() != s.format {
		f.Close()
		return fmt.Errorf("capture: %s changed format since it was opened", path)
	}
	s.f, s.wr = f, wr
	return nil
}

// Format returns the format shared by the files.
func (s *FileSource) Format() Format { return s.format }

// Current returns the file being read, or "" after the last.
func (s *FileSource) Current() string {
	if s.wr == nil {
		return ""
	}
	return s.paths[s.i]
}

// Read fills dst with whole frames from the current file, moving on to the next file
// at the end of each. It returns io.EOF after the last file, and ctx.Err() if ctx ends
// while it waits to pace real-time replay.
func (s *FileSource) Read(ctx context.Context, dst []float32) (int, error) {
	if err := ctx.Err(); err != nil {
		return 0, err
	}
	ch := s.format.Channels
	if len(dst) < ch {
		return 0, fmt.Errorf("capture: read buffer of %d samples holds no whole frame of %d channels", len(dst), ch)
	}
	if s.speed > 0 {
		// Small steps keep paced delivery smooth: at most 50 ms of audio per call.
		dst = dst[:min(len(dst), max(1, s.format.SampleRate/20)*ch)]
		if err := s.wait(ctx); err != nil {
			return 0, err
		}
	}
	for s.wr != nil {
		n, err := s.wr.Read(dst)
		if n > 0 {
			s.frames += int64(n / ch)
			return n, nil
		}
		if !errors.Is(err, io.EOF) {
			if nerr := s.next(); nerr != nil && !errors.Is(nerr, io.EOF) {
				return 0, errors.Join(err, nerr)
			}
			return 0, err
		}
		if err := s.next(); err != nil {
			return 0, err
		}
	}
	return 0, io.EOF
}

// wait blocks until the next frame is due at the replay speed: frame k is handed out
// k/(rate·speed) seconds after the first.
func (s *FileSource) wait(ctx context.Context) error {
	if s.frames == 0 {
		s.start = time.Now()
		return nil
	}
	due := s.start.Add(time.Duration(float64(s.frames) / float64(s.format.SampleRate) / s.speed * float64(time.Second)))
	wait := time.Until(due)
	if wait <= 0 {
		return nil
	}
	t := time.NewTimer(wait)
	defer t.Stop()
	select {
	case <-t.C:
		return nil
	case <-ctx.Done():
		return ctx.Err()
	}
}

// Close closes the open file.
func (s *FileSource) Close() error {
	if s.f == nil {
		return nil
	}
	err := s.f.Close()
	s.f, s.wr, s.i = nil, nil, len(s.paths)
	return err
}

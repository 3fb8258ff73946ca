package main

import (
	"bufio"
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"os/exec"
	"slices"
	"strconv"
	"strings"
	"time"
)

// aubio settings: the documented aubiopitch options only, defaults for the rest
// (pitch tolerance, silence gate -90 dB).
const (
	aubioHop         = 512
	aubioBuf         = 4096
	aubioBufBass     = 8192 // for tones below bassBelowHz
	steadyFromS      = 0.3  // steady window after the onset, seconds
	steadyToS        = 1.5
	aubioInstallHint = "install it with `apt-get install aubio-tools` (Debian/Ubuntu), or pass -aubio PATH"
)

var aubioMethods = []string{"yin", "yinfast", "yinfft"}

// aubioFrame is one line of aubiopitch output.
type aubioFrame struct {
	TimeS float64
	Hz    float64
}

// findAubio resolves the aubiopitch binary or explains how to get it.
func findAubio(bin string) (string, error) {
	path, err := exec.LookPath(bin)
	if err != nil {
		return "", fmt.Errorf("aubiopitch not found (%v): %s", err, aubioInstallHint)
	}
	return path, nil
}

// aubioBufFor picks the buffer length the way the benchmark states it: the longer
// buffer for tones whose 12-TET key lies below 110 Hz (a user would choose it knowing
// the string, not the exact detuned pitch).
func aubioBufFor(c testCase) int {
	if keyHz(c.MIDI) < bassBelowHz {
		return aubioBufBass
	}
	return aubioBuf
}

// runAubio runs aubiopitch on one file and returns its frames and the child's CPU time
// (user + system, so process start, WAV decode and analysis are all included).
func runAubio(ctx context.Context, bin, path, method string, buf int) ([]aubioFrame, time.Duration, error) {
	cmd := exec.CommandContext(ctx, bin, "-i", path, "-p", method,
		"-B", strconv.Itoa(buf), "-H", strconv.Itoa(aubioHop), "-u", "hertz")
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	err := cmd.Run()
	var cpu time.Duration
	if cmd.ProcessState != nil {
		cpu = cmd.ProcessState.UserTime() + cmd.ProcessState.SystemTime()
	}
	if err != nil {
		return nil, cpu, fmt.Errorf("run %s: %w: %s", strings.Join(cmd.Args, " "), err, strings.TrimSpace(stderr.String()))
	}
	frames, err := parseAubio(&stdout)
	if err != nil {
		return nil, cpu, fmt.Errorf("aubiopitch %s on %s: %w", method, path, err)
	}
	return frames, cpu, nil
}

// parseAubio reads aubiopitch's "time pitch" lines (seconds, Hz).
func parseAubio(r io.Reader) ([]aubioFrame, error) {
	var frames []aubioFrame
	sc := bufio.NewScanner(r)
	for line := 1; sc.Scan(); line++ {
		text := strings.TrimSpace(sc.Text())
		if text == "" {
			continue
		}
		f, err := parseAubioLine(text)
		if err != nil {
			return nil, fmt.Errorf("output line %d %q: %w", line, text, err)
		}
		frames = append(frames, f)
	}
	return frames, sc.Err()
}

func parseAubioLine(text string) (aubioFrame, error) {
	fields := strings.Fields(text)
	if len(fields) != 2 {
		return aubioFrame{}, fmt.Errorf("want 2 fields (time, Hz), got %d", len(fields))
	}
	t, err := strconv.ParseFloat(fields[0], 64)
	if err != nil {
		return aubioFrame{}, fmt.Errorf("time: %w", err)
	}
	hz, err := strconv.ParseFloat(fields[1], 64)
	if err != nil {
		return aubioFrame{}, fmt.Errorf("pitch: %w", err)
	}
	return aubioFrame{TimeS: t, Hz: hz}, nil
}

var errNoAubioFrames = errors.New("no voiced frames in the steady window")

// steadyMedian is aubio's answer for a tone: the median of steadyPitches.
func steadyMedian(frames []aubioFrame, rateHz float64, buf int, onsetS, fromS, toS float64) (float64, error) {
	hz := steadyPitches(frames, rateHz, buf, onsetS, fromS, toS)
	if len(hz) == 0 {
		return 0, errNoAubioFrames
	}
	slices.Sort(hz)
	return median(hz), nil
}

// steadyPitches returns the pitches of the frames whose whole analysis buffer lies in
// [onsetS+fromS, onsetS+toS], leaving out frames that aubio reports as 0 Hz (its
// "no pitch" value, e.g. below the silence gate). aubiopitch stamps a frame at the
// start of the hop it has just read, so frame t covers the buf samples ending at t + hop.
func steadyPitches(frames []aubioFrame, rateHz float64, buf int, onsetS, fromS, toS float64) []float64 {
	hopS, bufS := float64(aubioHop)/rateHz, float64(buf)/rateHz
	const slackS = 1e-6 // printed times are rounded to microseconds
	var hz []float64
	for _, f := range frames {
		end := f.TimeS + hopS
		if end-bufS < onsetS+fromS-slackS || end > onsetS+toS+slackS || f.Hz <= 0 {
			continue
		}
		hz = append(hz, f.Hz)
	}
	return hz
}

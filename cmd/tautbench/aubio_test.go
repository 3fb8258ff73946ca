package main

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// aubiopitch 0.4.9 output: "%f %f\n", time in seconds and pitch in Hz, one line per hop
// (captured from `aubiopitch -i t.wav -p yinfft -B 4096 -H 512 -u hertz` on a 48 kHz file).
const aubioSample = `0.000000 450.679230
0.010667 444.483856
0.021333 442.502167
1.056000 440.237457
`

func TestParseAubio(t *testing.T) {
	frames, err := parseAubio(strings.NewReader(aubioSample))
	if err != nil {
		t.Fatal(err)
	}
	if len(frames) != 4 {
		t.Fatalf("got %d frames, want 4", len(frames))
	}
	if f := frames[3]; f.TimeS != 1.056 || f.Hz != 440.237457 {
		t.Errorf("frame 3 = %+v, want {1.056 440.237457}", f)
	}
}

func TestParseAubio_Errors(t *testing.T) {
	tests := []struct{ name, in, want string }{
		{"one field", "0.0 1.0\n0.01\n", "line 2"},
		{"bad number", "0.0 abc\n", "pitch"},
		{"bad time", "x 440\n", "time"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := parseAubio(strings.NewReader(tt.in))
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("got %v, want an error mentioning %q", err, tt.want)
			}
		})
	}
}

func TestSteadyPitches(t *testing.T) {
	const rate, buf = 48000, 4096
	var frames []aubioFrame
	for i := range 300 {
		ts := math.Round(float64(i*aubioHop)/rate*1e6) / 1e6 // aubio prints microseconds
		frames = append(frames, aubioFrame{TimeS: ts, Hz: float64(i)})
	}
	frames[100].Hz = 0 // aubio's no-pitch value: left out
	// Onset 0.1 s, window 0.3..1.5 s after it: samples 19200..76800. Frame i covers
	// [(i+1)·512 - 4096, (i+1)·512), so frames 45..149 fit, less frame 100.
	got := steadyPitches(frames, rate, buf, 0.1, 0.3, 1.5)
	if len(got) != 104 || got[0] != 45 || got[len(got)-1] != 149 {
		t.Errorf("got %d frames %v..%v, want 104 frames 45..149", len(got), got[0], got[len(got)-1])
	}
}

func TestSteadyMedian(t *testing.T) {
	frames := []aubioFrame{{0.5, 100}, {0.51, 50}, {0.52, 101}, {0.53, 0}, {0.54, 102}}
	got, err := steadyMedian(frames, 48000, 4096, 0, 0.3, 1.5)
	if err != nil || got != 100.5 { // 0 Hz left out; median of 50, 100, 101, 102
		t.Errorf("got %g, %v; want 100.5", got, err)
	}
	if _, err := steadyMedian(frames[:1], 48000, 4096, 1, 0.3, 1.5); err == nil {
		t.Error("a frame before the window gave a pitch, want errNoAubioFrames")
	}
}

func TestRun_MissingAubio(t *testing.T) {
	var out, errs strings.Builder
	err := run(t.Context(), []string{"compare", "-aubio", "/nonexistent/aubiopitch"}, &out, &errs)
	if err == nil || !strings.Contains(err.Error(), "apt-get install aubio-tools") {
		t.Errorf("got %v, want an error saying how to install aubio-tools", err)
	}
}

func TestRun_BadArguments(t *testing.T) {
	tests := []struct {
		name string
		args []string
	}{
		{"no command", nil},
		{"unknown command", []string{"race"}},
		{"unknown flag", []string{"compare", "-bogus"}},
		{"negative lead", []string{"compare", "-lead", "-1"}},
		{"rate too low", []string{"compare", "-rate", "8000"}},
		{"stray argument", []string{"compare", "extra"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var out, errs strings.Builder
			err := run(t.Context(), tt.args, &out, &errs)
			var u usageError
			if !errors.As(err, &u) {
				t.Errorf("got %v, want a usage error (exit status 2)", err)
			}
		})
	}
}

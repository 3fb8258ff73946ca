package main

import (
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

func TestSteadyMedian(t *testing.T) {
	const rate, buf = 48000, 4096
	hop := float64(aubioHop) / rate
	var frames []aubioFrame
	for i := range 300 {
		ts := math.Round(float64(i)*hop*1e6) / 1e6 // aubio prints microseconds
		hz := 100.0
		if end := ts + hop; end < 0.1+0.3+float64(buf)/rate || end > 0.1+1.5 {
			hz = 9999 // outside the window: must be ignored
		}
		if i == 100 {
			hz = 0 // aubio's no-pitch value: left out
		}
		if i == 101 || i == 102 {
			hz = 50 // outliers inside the window: the median shrugs them off
		}
		frames = append(frames, aubioFrame{TimeS: ts, Hz: hz})
	}
	got, err := steadyMedian(frames, rate, buf, 0.1, 0.3, 1.5)
	if err != nil || got != 100 {
		t.Errorf("got %g, %v; want 100", got, err)
	}
	if _, err := steadyMedian(frames[:20], rate, buf, 0.1, 0.3, 1.5); err == nil {
		t.Error("frames before the window gave a pitch, want errNoAubioFrames")
	}
}

func TestRun_MissingAubio(t *testing.T) {
	var out, errs strings.Builder
	err := run(t.Context(), []string{"compare", "-aubio", "/nonexistent/aubiopitch"}, &out, &errs)
	if err == nil || !strings.Contains(err.Error(), "apt-get install aubio-tools") {
		t.Errorf("got %v, want an error saying how to install aubio-tools", err)
	}
}

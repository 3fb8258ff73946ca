//go:build portaudio && cgo

package paudio

import (
	"errors"
	"strings"
	"testing"

	"taut/capture"
)

// These run only in the portaudio build. On a machine without a sound card (CI)
// Devices lists nothing and opening the default input fails with a clear message;
// on a machine with one, Open must deliver frames.
func TestDevicesAndOpen(t *testing.T) {
	devs, err := Devices()
	if err != nil {
		t.Fatalf("Devices: %v", err)
	}
	t.Logf("%d inputs: %+v", len(devs), devs)
	s, err := Open("")
	if len(devs) == 0 {
		if err == nil {
			s.Close()
			t.Fatal("Open(\"\") with no inputs: want an error")
		}
		if errors.Is(err, capture.ErrUnavailable) || !strings.Contains(err.Error(), "paudio:") {
			t.Errorf("Open error = %v; want a paudio error naming the problem", err)
		}
		t.Logf("no inputs: %v", err)
		return
	}
	if err != nil {
		t.Skipf("inputs exist but the default cannot be opened here: %v", err)
	}
	defer s.Close()
	if err := s.Format().Validate(); err != nil {
		t.Errorf("Format: %v", err)
	}
}

func TestOpenNoMatch(t *testing.T) {
	_, err := Open("no device is called this 7f3a")
	if err == nil || !strings.Contains(err.Error(), "no device is called this 7f3a") {
		t.Errorf("Open(missing) error = %v; want one naming the substring", err)
	}
}

func TestDefaultFramesPerBuffer(t *testing.T) {
	for _, c := range []struct {
		rate float64
		want int
	}{{48000, 2048}, {44100, 2048}, {96000, 4096}, {8000, 256}, {192000, 8192}} {
		if got := defaultFramesPerBuffer(c.rate); got != c.want {
			t.Errorf("defaultFramesPerBuffer(%v) = %d; want %d", c.rate, got, c.want)
		}
	}
}

//go:build !(portaudio && cgo)

package paudio

import (
	"context"
	"errors"
	"testing"

	"taut/capture"
)

func TestStubExplains(t *testing.T) {
	if _, err := Open("usb"); !errors.Is(err, capture.ErrUnavailable) {
		t.Errorf("Open error = %v; want capture.ErrUnavailable", err)
	}
	if _, err := OpenWith(Options{}); !errors.Is(err, capture.ErrUnavailable) {
		t.Errorf("OpenWith error = %v; want capture.ErrUnavailable", err)
	}
	if _, err := Devices(); !errors.Is(err, capture.ErrUnavailable) {
		t.Errorf("Devices error = %v; want capture.ErrUnavailable", err)
	}
	var s Stream
	if _, err := s.Read(context.Background(), make([]float32, 8)); !errors.Is(err, capture.ErrUnavailable) {
		t.Errorf("Read error = %v; want capture.ErrUnavailable", err)
	}
	if Available {
		t.Error("Available = true in the stub build")
	}
}

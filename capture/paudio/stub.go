//go:build !(portaudio && cgo)

package paudio

import (
	"context"

	"taut/capture"
)

// Available reports whether this build can capture from devices.
const Available = false

// Stream is a live input stream. In this build none can be opened.
type Stream struct{}

// Open returns capture.ErrUnavailable: this build has no PortAudio.
func Open(deviceSubstring string) (*Stream, error) { return nil, capture.ErrUnavailable }

// OpenWith returns capture.ErrUnavailable: this build has no PortAudio.
func OpenWith(o Options) (*Stream, error) { return nil, capture.ErrUnavailable }

// Devices returns capture.ErrUnavailable: this build has no PortAudio.
func Devices() ([]Device, error) { return nil, capture.ErrUnavailable }

// Format returns the zero Format.
func (s *Stream) Format() capture.Format { return capture.Format{} }

// Read returns capture.ErrUnavailable.
func (s *Stream) Read(ctx context.Context, dst []float32) (int, error) {
	return 0, capture.ErrUnavailable
}

// Close does nothing.
func (s *Stream) Close() error { return nil }

// Stats returns zero counts.
func (s *Stream) Stats() Stats { return Stats{} }

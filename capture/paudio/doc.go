// Package paudio captures live audio from an input device through PortAudio.
//
// It is the project's only cgo code and builds only with `-tags portaudio` and
// CGO_ENABLED=1 (Debian: `apt-get install -y portaudio19-dev pkg-config`). Without the
// tag, Open and Devices return capture.ErrUnavailable, whose message says how to
// rebuild or to pipe raw PCM on stdin instead.
//
// # Threads
//
// PortAudio is not re-entrant, so one goroutine, locked to its OS thread, makes every
// PortAudio call of a stream: Initialize, open, start, the blocking reads, abort,
// close and Terminate. It copies each block into a bounded queue; Read takes blocks
// from the queue. When the reader falls behind and the queue is full, the capture
// goroutine drops the block (it never waits for the reader) and the next block
// delivered carries a *capture.Gap{Reason: "dropped"} with the frames lost. An input
// overflow reported by PortAudio (audio discarded before the block) is counted and
// marked the same way with Reason "overflow"; neither is fatal.
//
// # Devices
//
// A device is chosen by a case-insensitive substring of its name (indices change
// between boots and plug order); an exact name wins over substring matches, and a
// substring that matches several inputs is an error listing them. The stream runs at
// the device's default sample rate (PortAudio's high-latency parameters): hw: devices
// do not resample, and the analysis works at any rate.
//
// On a machine without a sound card, ALSA and JACK print many lines to stderr while
// PortAudio probes; they come from those libraries, not from taut.
package paudio

import "time"

// Device is one audio input.
type Device struct {
	Name          string
	HostAPI       string  // e.g. "ALSA"
	Channels      int     // maximum input channels
	DefaultRateHz float64 // the rate a stream on it runs at
	Default       bool    // the system's default input
}

// Options configure a stream. The zero value opens one channel of the default input.
type Options struct {
	Device          string        // name substring; "" = the default input
	Channels        int           // input channels to capture; 0 = 1
	FramesPerBuffer int           // frames per blocking read; 0 = about 43 ms (2048 at 48 kHz)
	QueueBlocks     int           // blocks buffered for the reader; 0 = 16
	OpenTimeout     time.Duration // give up opening after this; 0 = 10 s
	CloseTimeout    time.Duration // give up waiting for the capture thread after this; 0 = 2 s
}

// Stats counts what a stream has done.
type Stats struct {
	Frames        int64 // frames captured, including dropped ones
	Overflows     int64 // input overflows reported by PortAudio
	DroppedBlocks int64 // blocks discarded because the reader fell behind
	DroppedFrames int64
}

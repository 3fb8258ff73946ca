package capture_test

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"

	"taut/capture"
	"taut/capture/synth"
)

// A WAV file round trip: write two stereo frames as 24-bit PCM, read them back.
func ExampleNewWAVReader() {
	var file bytes.Buffer
	f := capture.Format{SampleRate: 48000, Channels: 2}
	if err := capture.EncodeWAV(&file, f, capture.EncS24, []float32{0.5, -0.5, 0.25, -0.25}); err != nil {
		panic(err)
	}
	r, err := capture.NewWAVReader(&file)
	if err != nil {
		panic(err)
	}
	buf := make([]float32, 8)
	n, _ := r.Read(buf)
	fmt.Println(r.Format(), r.Encoding(), r.Frames(), buf[:n])
	// Output: {48000 2} s24le 2 [0.5 -0.5 0.25 -0.25]
}

// Mixing a stereo block to mono, and picking the right channel.
func ExampleChannel() {
	stereo := []float32{0.25, 0.5, 0.75, 1}
	fmt.Println(capture.Channel(nil, stereo, 2, 0), capture.Channel(nil, stereo, 2, 2))
	// Output: [0.375 0.875] [0.5 1]
}

// A simulated session: a note, an hour of unrendered quiet, another note.
func ExampleSynthSource() {
	src := capture.NewSynthSource(capture.Format{SampleRate: 8000, Channels: 1})
	src.Queue(synth.Tone{F0Hz: 261.6256}, 0.5)
	src.Skip(3600 * 8000)
	src.Queue(synth.Tone{F0Hz: 261.2}, 0.5)
	src.Close()
	buf := make([]float32, 4000)
	for {
		n, err := src.Read(context.Background(), buf)
		var gap *capture.Gap
		if errors.As(err, &gap) {
			fmt.Printf("%d frames skipped (%s)\n", gap.Frames, gap.Reason)
		} else if err == io.EOF {
			break
		}
		fmt.Println(n, "samples")
	}
	// Output:
	// 4000 samples
	// 28800000 frames skipped (idle)
	// 4000 samples
}

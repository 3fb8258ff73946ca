// Package capture turns audio from files, raw PCM streams, synthesis and (with the
// portaudio build tag) live devices into blocks of float32 samples.
//
// Every source delivers interleaved samples in the range [-1, 1] and describes itself
// with a Format. Sources never analyse audio; they hand samples on and report gaps.
package capture

import (
	"errors"
	"fmt"
)

// Format describes the samples a source delivers.
type Format struct {
	SampleRate int // frames per second
	Channels   int // interleaved channels per frame
}

// Validate reports whether the format can be used by the rest of the pipeline.
func (f Format) Validate() error {
	switch {
	case f.SampleRate < 8000 || f.SampleRate > 192000:
		return fmt.Errorf("capture: sample rate %d Hz outside 8000..192000", f.SampleRate)
	case f.Channels < 1 || f.Channels > 32:
		return fmt.Errorf("capture: %d channels outside 1..32", f.Channels)
	}
	return nil
}

// Gap is returned by a source's Read together with valid samples when frames were
// lost before them (an input overflow, a dropped block, a reopened device). The
// samples returned with a Gap are good; the sample clock jumped by Frames before them.
type Gap struct {
	Frames int64  // frames lost, or -1 when unknown
	Reason string // "overflow", "reopen", "dropped", ...
}

func (g *Gap) Error() string {
	return fmt.Sprintf("capture: gap of %d frames (%s)", g.Frames, g.Reason)
}

// ErrUnavailable is returned when a live device is asked for in a build without
// PortAudio support.
var ErrUnavailable = errors.New("capture: built without PortAudio: rebuild with `-tags portaudio` " +
	"(CGO_ENABLED=1, Debian package portaudio19-dev) or pipe raw PCM on stdin with `--input -`")

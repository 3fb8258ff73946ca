package capture

import (
	"fmt"
	"slices"
)

// Channel extracts one channel of interleaved samples into dst, or the mix (mean) of
// all channels when pick is 0; pick counts channels from 1. It returns dst resized to
// the number of frames, growing it only when it is too short.
//
// Channel panics when channels < 1, when pick is outside 0..channels, or when
// interleaved does not hold whole frames: those are caller bugs, as sources always
// deliver whole frames and callers validate pick against Format.Channels first.
func Channel(dst, interleaved []float32, channels, pick int) []float32 {
	if channels < 1 || pick < 0 || pick > channels {
		panic(fmt.Sprintf("capture: Channel: pick %d outside 0..%d", pick, channels))
	}
	if len(interleaved)%channels != 0 {
		panic(fmt.Sprintf("capture: Channel: %d samples is not a whole number of %d-channel frames", len(interleaved), channels))
	}
	frames := len(interleaved) / channels
	dst = slices.Grow(dst[:0], frames)[:frames]
	switch {
	case channels == 1:
		copy(dst, interleaved)
	case pick > 0:
		for i := range dst {
			dst[i] = interleaved[i*channels+pick-1]
		}
	default:
		scale := 1 / float32(channels)
		for i := range dst {
			var sum float32
			for _, v := range interleaved[i*channels : (i+1)*channels] {
				sum += v
			}
			dst[i] = sum * scale
		}
	}
	return dst
}

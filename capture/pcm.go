package capture

import (
	"context"
	"fmt"
	"io"
)

// PCMSource reads headerless little-endian interleaved PCM, such as
// `arecord -t raw -f S16_LE -r 48000 -c 1` writes to a pipe. Its Read honours the
// context even while the input is silent: the blocking reads run in a goroutine of
// their own. A stream that ends inside a frame delivers every complete frame and then
// an *InputError wrapping ErrTruncated.
type PCMSource struct {
	format Format
	r      io.Reader
	p      *pump
}

// pcmBlockFrames is the most frames one read of the input asks for: about 21 ms at
// 48 kHz, short enough that a live pipe is passed on promptly.
const pcmBlockFrames = 1024

// NewPCMSource reads raw samples in the given encoding (s16le, s24le, s32le, f32le,
// f64le or u8) with format f from r. If r is an io.Closer, Close closes it.
func NewPCMSource(r io.Reader, encoding string, f Format) (*PCMSource, error) {
	c := codecByName(encoding)
	if c == nil {
		return nil, fmt.Errorf("capture: pcm encoding %q; want one of %s", encoding, encodingNames())
	}
	if err := f.Validate(); err != nil {
		return nil, fmt.Errorf("capture: pcm: %s", trimPrefix(err.Error()))
	}
	fr := newFrameReader("pcm", "", r, c, f.Channels, 0, -1)
	return &PCMSource{format: f, r: r, p: newPump(fr.read, f.Channels, pcmBlockFrames*f.Channels)}, nil
}

// Format returns the format given to NewPCMSource.
func (s *PCMSource) Format() Format { return s.format }

// Read copies whole frames into dst. It returns io.EOF at the end of the input and
// ctx.Err() when ctx ends first.
func (s *PCMSource) Read(ctx context.Context, dst []float32) (int, error) {
	if len(dst) < s.format.Channels {
		return 0, fmt.Errorf("capture: pcm: read buffer of %d samples holds no whole frame of %d channels", len(dst), s.format.Channels)
	}
	return s.p.Read(ctx, dst)
}

// Close stops reading and closes the input when it is an io.Closer.
func (s *PCMSource) Close() error {
	s.p.Close()
	if c, ok := s.r.(io.Closer); ok {
		return c.Close()
	}
	return nil
}

package capture

import (
	"errors"
	"fmt"
	"io"
)

// frameReader decodes whole frames from a byte stream. It never hands out part of a
// frame: bytes of an incomplete frame wait in buf until the rest arrives, and if the
// stream ends first, the complete frames are delivered and the next call reports
// ErrTruncated. Errors are sticky.
type frameReader struct {
	kind, name string
	r          io.Reader
	codec      *codec
	channels   int
	frameBytes int
	left       int64 // bytes the header promised and not yet read; -1 = read to EOF
	offset     int64 // byte offset of buf[0] in the input
	frames     int64 // frames delivered so far
	buf        []byte
	pending    int // bytes of an incomplete frame at the start of buf
	err        error
}

const frameReaderBufBytes = 64 << 10

func newFrameReader(kind, name string, r io.Reader, c *codec, channels int, offset, left int64) *frameReader {
	fb := c.bytes * channels
	return &frameReader{
		kind: kind, name: name, r: r, codec: c, channels: channels, frameBytes: fb,
		left: left, offset: offset,
		buf: make([]byte, max(fb, frameReaderBufBytes/fb*fb)),
	}
}

// read fills dst with whole frames and returns the number of samples written. It
// returns at least one frame unless it returns an error; it reads from the underlying
// reader at most once per call after the first frame, so a live pipe is not held up.
func (f *frameReader) read(dst []float32) (int, error) {
	if f.err != nil {
		return 0, f.err
	}
	frames := len(dst) / f.channels
	if frames == 0 {
		return 0, fmt.Errorf("capture: %s: read buffer of %d samples holds no whole frame of %d channels", f.kind, len(dst), f.channels)
	}
	want := min(frames*f.frameBytes, len(f.buf))
	if f.left >= 0 && int64(want-f.pending) > f.left {
		want = f.pending + int(f.left)
	}
	if f.left == 0 {
		f.err = f.endOrError(nil)
		return 0, f.err
	}
	n, err := io.ReadAtLeast(f.r, f.buf[f.pending:want], max(1, min(want, f.frameBytes)-f.pending))
	if f.left >= 0 {
		f.left -= int64(n)
	}
	have := f.pending + n
	complete := have / f.frameBytes
	got := complete * f.channels
	if bad := f.codec.decode(dst[:got], f.buf[:complete*f.frameBytes]); bad >= 0 {
		got = bad / f.channels * f.channels
		f.err = f.fail(int64(bad*f.codec.bytes), ErrMalformed,
			fmt.Sprintf("sample %d of frame %d is %v; want finite samples", bad%f.channels+1, f.frames+int64(bad/f.channels), dst[bad]))
	}
	f.frames += int64(got / f.channels)
	f.pending = copy(f.buf, f.buf[complete*f.frameBytes:have])
	f.offset += int64(complete * f.frameBytes)
	if f.err == nil {
		f.err = f.endOrError(err)
	}
	if got > 0 {
		return got, nil
	}
	return 0, f.err
}

// endOrError turns the error of the last read into the sticky error to report once the
// frames already decoded have been handed out.
func (f *frameReader) endOrError(err error) error {
	switch {
	case err != nil && !errors.Is(err, io.EOF) && !errors.Is(err, io.ErrUnexpectedEOF):
		return fmt.Errorf("capture: %s %s: read: %w", f.kind, f.name, err)
	case f.left == 0 && f.pending > 0:
		return f.fail(0, ErrMalformed, fmt.Sprintf(
			"audio data ends %d bytes into a frame after %d whole frames; want whole frames of %d bytes (%d channels × %s)",
			f.pending, f.frames, f.frameBytes, f.channels, f.codec.name))
	case f.left == 0:
		return io.EOF
	case err == nil:
		return nil
	case f.left > 0:
		return f.fail(int64(f.pending), ErrTruncated, fmt.Sprintf(
			"audio data ends after %d whole frames with %d of the declared bytes missing; the file was cut short",
			f.frames, f.left))
	case f.pending > 0:
		return f.fail(0, ErrTruncated, fmt.Sprintf(
			"input ends %d bytes into a frame after %d whole frames; want whole frames of %d bytes (%d channels × %s)",
			f.pending, f.frames, f.frameBytes, f.channels, f.codec.name))
	}
	return io.EOF
}

func (f *frameReader) fail(rel int64, kind error, what string) error {
	return &InputError{Kind: f.kind, Name: f.name, Offset: f.offset + rel, What: what, Err: kind}
}

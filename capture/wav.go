package capture

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"os"
)

// WAV format tags (the wFormatTag field of the "fmt " chunk).
const (
	wavPCM        = 0x0001
	wavFloat      = 0x0003
	wavExtensible = 0xFFFE
)

// maxFmtChunk bounds the "fmt " chunk we read into memory; real ones are 16, 18 or 40
// bytes, so anything near this is a damaged header, not a format we should decode.
const maxFmtChunk = 4096

// wavUnknownSize is the data size streaming writers put in the header when they do not
// know the length yet; such data runs to the end of the input.
const wavUnknownSize = 0xFFFFFFFF

// subformatTail is the GUID of WAVE_FORMAT_EXTENSIBLE sub-formats after the 2-byte tag:
// {xxxx0000-0000-0010-8000-00AA00389B71}.
var subformatTail = []byte{0x00, 0x00, 0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xAA, 0x00, 0x38, 0x9B, 0x71}

// compressedTags names common compressed WAV format tags so the error says what it met.
var compressedTags = map[uint16]string{
	0x0002: "Microsoft ADPCM", 0x0006: "A-law", 0x0007: "µ-law", 0x0011: "IMA ADPCM",
	0x0031: "GSM 6.10", 0x0050: "MPEG", 0x0055: "MPEG layer 3", 0x0160: "WMA", 0x0161: "WMA",
	0x1610: "AAC", 0xF1AC: "FLAC",
}

// WAVReader streams the samples of a RIFF/WAVE file: PCM 8/16/24/32-bit or IEEE float
// 32/64-bit, plain or WAVE_FORMAT_EXTENSIBLE, 1 to 32 channels, 8 to 192 kHz. Unknown
// chunks before the data are skipped (with their pad byte when odd-sized); anything
// after the data chunk is ignored.
type WAVReader struct {
	format   Format
	codec    *codec
	dataSize int64 // bytes in the data chunk, -1 when unknown (streamed to EOF)
	fr       *frameReader
}

// NewWAVReader reads the header of a WAV stream up to the start of its samples.
func NewWAVReader(r io.Reader) (*WAVReader, error) {
	return newWAVReader(r, "")
}

func newWAVReader(r io.Reader, name string) (*WAVReader, error) {
	h := wavHeader{r: r, name: name}
	w, err := h.parse()
	if err != nil {
		return nil, err
	}
	w.fr = newFrameReader("wav", name, r, w.codec, w.format.Channels, h.offset, w.dataSize)
	return w, nil
}

// Format returns the rate and channel count of the file.
func (w *WAVReader) Format() Format { return w.format }

// Encoding returns the sample encoding of the file, one of the Enc constants.
func (w *WAVReader) Encoding() string { return w.codec.name }

// Frames returns the number of frames the header declares, or -1 when the header
// leaves the length open (a file written by a streaming tool).
func (w *WAVReader) Frames() int64 {
	if w.dataSize < 0 {
		return -1
	}
	return w.dataSize / int64(w.codec.bytes*w.format.Channels)
}

// Read decodes interleaved samples into dst, whole frames only, and returns how many
// it wrote. It returns io.EOF after the last frame. If the data ends early or is
// damaged, all complete frames before the damage are returned first and the next call
// returns an *InputError wrapping ErrTruncated or ErrMalformed.
func (w *WAVReader) Read(dst []float32) (int, error) {
	return w.fr.read(dst)
}

// ReadWAVFile reads a whole WAV file. On a file that ends early it returns the complete
// frames it read together with an error wrapping ErrTruncated, so nothing recorded is
// lost; every error names the file.
func ReadWAVFile(path string) (Format, []float32, error) {
	f, err := os.Open(path)
	if err != nil {
		return Format{}, nil, fmt.Errorf("capture: %w", err)
	}
	defer f.Close()
	w, err := newWAVReader(bufio.NewReaderSize(f, 64<<10), path)
	if err != nil {
		return Format{}, nil, err
	}
	samples := make([]float32, 0, w.sizeHint(f))
	buf := make([]float32, 16384*w.format.Channels)
	for {
		n, err := w.Read(buf)
		samples = append(samples, buf[:n]...)
		if errors.Is(err, io.EOF) {
			return w.format, samples, nil
		}
		if err != nil {
			return w.format, samples, err
		}
	}
}

// sizeHint returns the number of samples to allocate for the whole file: the header's
// length, but never more than the file can hold, so a lying header cannot make us
// allocate gigabytes.
func (w *WAVReader) sizeHint(f *os.File) int {
	st, err := f.Stat()
	if err != nil {
		return 0
	}
	n := st.Size() / int64(w.codec.bytes)
	if w.dataSize >= 0 {
		n = min(n, w.dataSize/int64(w.codec.bytes))
	}
	return int(n)
}

// wavHeader parses the RIFF header and chunks up to the data chunk.
type wavHeader struct {
	r      io.Reader
	name   string
	offset int64
	buf    [12]byte
}

func (h *wavHeader) fail(kind error, format string, a ...any) error {
	return &InputError{Kind: "wav", Name: h.name, Offset: h.offset, What: fmt.Sprintf(format, a...), Err: kind}
}

// readFull reads exactly len(p) bytes; what says what was being read, for the error.
func (h *wavHeader) readFull(p []byte, what string) error {
	n, err := io.ReadFull(h.r, p)
	if err == nil {
		h.offset += int64(n)
		return nil
	}
	if errors.Is(err, io.EOF) || errors.Is(err, io.ErrUnexpectedEOF) {
		if h.offset+int64(n) == 0 {
			return h.fail(ErrTruncated, "empty input; want a RIFF/WAVE file")
		}
		h.offset += int64(n)
		return h.fail(ErrTruncated, "file ends inside %s; the file was cut short", what)
	}
	return fmt.Errorf("capture: wav %s: read: %w", h.name, err)
}

func (h *wavHeader) parse() (*WAVReader, error) {
	if err := h.readFull(h.buf[:12], "the RIFF header"); err != nil {
		return nil, err
	}
	switch id := string(h.buf[:4]); {
	case id == "RIFX":
		return nil, h.fail(ErrUnsupported, "big-endian RIFX files are not supported; want little-endian RIFF")
	case id == "RF64" || id == "BW64":
		return nil, h.fail(ErrUnsupported, "%s (64-bit WAV) is not supported; want RIFF", id)
	case id != "RIFF" || string(h.buf[8:12]) != "WAVE":
		return nil, h.fail(ErrMalformed, "not a WAV file: starts with %q; want \"RIFF\" then \"WAVE\"", printable(h.buf[:12]))
	}
	var w *WAVReader
	for {
		start := h.offset
		if err := h.readFull(h.buf[:8], "a chunk header"); err != nil {
			if w == nil && h.offset == start && errors.Is(err, ErrTruncated) {
				return nil, h.fail(ErrTruncated, "no \"fmt \" chunk before the end of the file; want \"fmt \" then \"data\"")
			}
			if h.offset == start && errors.Is(err, ErrTruncated) {
				return nil, h.fail(ErrTruncated, "no \"data\" chunk before the end of the file; want a \"data\" chunk after \"fmt \"")
			}
			return nil, err
		}
		id, size := string(h.buf[:4]), int64(binary.LittleEndian.Uint32(h.buf[4:8]))
		switch id {
		case "fmt ":
			if w != nil {
				return nil, h.fail(ErrMalformed, "second \"fmt \" chunk; want exactly one")
			}
			var err error
			if w, err = h.parseFmt(size); err != nil {
				return nil, err
			}
		case "data":
			if w == nil {
				return nil, h.fail(ErrMalformed, "\"data\" chunk before the \"fmt \" chunk; want \"fmt \" first")
			}
			w.dataSize = size
			if size == wavUnknownSize {
				w.dataSize = -1
			}
			return w, nil
		default:
			if err := h.skip(id, size+size&1); err != nil {
				return nil, err
			}
		}
	}
}

func (h *wavHeader) skip(id string, n int64) error {
	got, err := io.CopyN(io.Discard, h.r, n)
	h.offset += got
	if err != nil {
		if errors.Is(err, io.EOF) {
			return h.fail(ErrTruncated, "file ends inside chunk %q, %d of its %d bytes missing", printable([]byte(id)), n-got, n)
		}
		return fmt.Errorf("capture: wav %s: read: %w", h.name, err)
	}
	return nil
}

func (h *wavHeader) parseFmt(size int64) (*WAVReader, error) {
	if size < 16 || size > maxFmtChunk {
		return nil, h.fail(ErrMalformed, "\"fmt \" chunk of %d bytes; want 16 to %d (usually 16, 18 or 40)", size, maxFmtChunk)
	}
	b := make([]byte, size+size&1)
	if err := h.readFull(b, "the \"fmt \" chunk"); err != nil {
		return nil, err
	}
	tag := binary.LittleEndian.Uint16(b[0:])
	channels := int(binary.LittleEndian.Uint16(b[2:]))
	rate := int64(binary.LittleEndian.Uint32(b[4:]))
	blockAlign := int(binary.LittleEndian.Uint16(b[12:]))
	bits := int(binary.LittleEndian.Uint16(b[14:]))
	at := h.offset - int64(len(b))
	if tag == wavExtensible {
		var err error
		if tag, err = h.extensibleTag(b, bits, at); err != nil {
			return nil, err
		}
	}
	c, err := h.codecOf(tag, bits, at)
	if err != nil {
		return nil, err
	}
	f := Format{SampleRate: int(min(rate, 1<<31-1)), Channels: channels}
	if err := f.Validate(); err != nil {
		return nil, &InputError{Kind: "wav", Name: h.name, Offset: at, What: "header says " + trimPrefix(err.Error()), Err: ErrMalformed}
	}
	if blockAlign != channels*c.bytes {
		return nil, &InputError{Kind: "wav", Name: h.name, Offset: at + 12, Err: ErrMalformed, What: fmt.Sprintf(
			"block align %d bytes; want %d (%d channels × %d bytes per sample)", blockAlign, channels*c.bytes, channels, c.bytes)}
	}
	return &WAVReader{format: f, codec: c}, nil
}

// extensibleTag returns the format tag inside a WAVE_FORMAT_EXTENSIBLE sub-format GUID.
func (h *wavHeader) extensibleTag(b []byte, bits int, at int64) (uint16, error) {
	if len(b) < 40 || binary.LittleEndian.Uint16(b[16:]) < 22 {
		return 0, &InputError{Kind: "wav", Name: h.name, Offset: at, Err: ErrMalformed,
			What: fmt.Sprintf("WAVE_FORMAT_EXTENSIBLE header of %d bytes; want 40 with a 22-byte extension", len(b))}
	}
	if valid := int(binary.LittleEndian.Uint16(b[18:])); valid > bits {
		return 0, &InputError{Kind: "wav", Name: h.name, Offset: at + 18, Err: ErrMalformed,
			What: fmt.Sprintf("%d valid bits in a %d-bit container; want at most %d", valid, bits, bits)}
	}
	if !bytes.Equal(b[26:40], subformatTail) {
		return 0, &InputError{Kind: "wav", Name: h.name, Offset: at + 24, Err: ErrUnsupported,
			What: fmt.Sprintf("WAVE_FORMAT_EXTENSIBLE sub-format % x is not a standard one; want PCM or IEEE float", b[24:40])}
	}
	return binary.LittleEndian.Uint16(b[24:]), nil
}

func (h *wavHeader) codecOf(tag uint16, bits int, at int64) (*codec, error) {
	fail := func(kind error, format string, a ...any) error {
		return &InputError{Kind: "wav", Name: h.name, Offset: at, What: fmt.Sprintf(format, a...), Err: kind}
	}
	switch tag {
	case wavPCM:
		if c := codecFor(bits, false); c != nil {
			return c, nil
		}
		return nil, fail(ErrUnsupported, "PCM with %d bits per sample; want 8, 16, 24 or 32", bits)
	case wavFloat:
		if c := codecFor(bits, true); c != nil {
			return c, nil
		}
		return nil, fail(ErrUnsupported, "IEEE float with %d bits per sample; want 32 or 64", bits)
	}
	if name, ok := compressedTags[tag]; ok {
		return nil, fail(ErrUnsupported, "compressed format 0x%04x (%s); want uncompressed PCM (1) or IEEE float (3), "+
			"e.g. convert with `sox in.wav -e signed-integer -b 16 out.wav`", tag, name)
	}
	return nil, fail(ErrUnsupported, "unknown format 0x%04x; want uncompressed PCM (1) or IEEE float (3)", tag)
}

// printable quotes header bytes so binary garbage does not garble a message.
func printable(b []byte) string {
	out := make([]byte, len(b))
	for i, c := range b {
		if c < 0x20 || c > 0x7e {
			c = '.'
		}
		out[i] = c
	}
	return string(out)
}

// trimPrefix drops the "capture: " prefix of an error from this package so it can be
// embedded in another message of ours.
func trimPrefix(s string) string {
	const p = "capture: "
	if len(s) >= len(p) && s[:len(p)] == p {
		return s[len(p):]
	}
	return s
}

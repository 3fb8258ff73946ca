package capture

import (
	"bytes"
	"encoding/binary"
	"errors"
	"io"
	"math"
	"strings"
	"testing"
)

// Helpers that build WAV files byte by byte, so tests can damage any field.

func chunk(id string, body []byte) []byte {
	b := append([]byte(id), binary.LittleEndian.AppendUint32(nil, uint32(len(body)))...)
	b = append(b, body...)
	if len(body)%2 == 1 {
		b = append(b, 0)
	}
	return b
}

// chunkSized writes a chunk header declaring size but carrying body as is.
func chunkSized(id string, size uint32, body []byte) []byte {
	return append(append([]byte(id), binary.LittleEndian.AppendUint32(nil, size)...), body...)
}

func riff(chunks ...[]byte) []byte {
	var body []byte
	for _, c := range chunks {
		body = append(body, c...)
	}
	return append(append([]byte("RIFF"), binary.LittleEndian.AppendUint32(nil, uint32(4+len(body)))...), append([]byte("WAVE"), body...)...)
}

func fmtBody(tag, channels uint16, rate uint32, blockAlign, bits uint16) []byte {
	le := binary.LittleEndian
	b := le.AppendUint16(nil, tag)
	b = le.AppendUint16(b, channels)
	b = le.AppendUint32(b, rate)
	b = le.AppendUint32(b, rate*uint32(blockAlign))
	b = le.AppendUint16(b, blockAlign)
	return le.AppendUint16(b, bits)
}

func extBody(channels uint16, rate uint32, bits, valid, subTag uint16, tail []byte) []byte {
	le := binary.LittleEndian
	b := fmtBody(wavExtensible, channels, rate, channels*bits/8, bits)
	b = le.AppendUint16(b, 22)
	b = le.AppendUint16(b, valid)
	b = le.AppendUint32(b, 0)
	b = le.AppendUint16(b, subTag)
	return append(b, tail...)
}

var mono16 = fmtBody(wavPCM, 1, 48000, 2, 16)

func s16(v ...int16) []byte {
	var b []byte
	for _, x := range v {
		b = binary.LittleEndian.AppendUint16(b, uint16(x))
	}
	return b
}

func TestWAVHeaderErrors(t *testing.T) {
	data := chunk("data", s16(1, 2, 3, 4))
	badGUID := bytes.Clone(subformatTail)
	badGUID[5] = 0x42
	for _, c := range []struct {
		name string
		in   []byte
		kind error
		want string
	}{
		{"empty", nil, ErrTruncated, "empty input; want a RIFF/WAVE file"},
		{"cut in RIFF header", []byte("RIFF\x10\x00"), ErrTruncated, "inside the RIFF header"},
		{"not a WAV", []byte("OggS\x00\x02\x00\x00\x00\x00\x00\x00\x00\x00"), ErrMalformed, `not a WAV file: starts with "OggS`},
		{"RIFF but not WAVE", append([]byte("RIFF\x04\x00\x00\x00AVI "), 0), ErrMalformed, "not a WAV file"},
		{"big-endian RIFX", []byte("RIFX\x04\x00\x00\x00WAVE"), ErrUnsupported, "big-endian"},
		{"RF64", []byte("RF64\xff\xff\xff\xffWAVE"), ErrUnsupported, "64-bit WAV"},
		{"no fmt chunk", riff(), ErrTruncated, `no "fmt " chunk`},
		{"no data chunk", riff(chunk("fmt ", mono16)), ErrTruncated, `no "data" chunk`},
		{"data before fmt", riff(data, chunk("fmt ", mono16)), ErrMalformed, `"data" chunk before the "fmt " chunk`},
		{"two fmt chunks", riff(chunk("fmt ", mono16), chunk("fmt ", mono16), data), ErrMalformed, "second"},
		{"cut in chunk header", append(riff(chunk("fmt ", mono16)), 'd', 'a'), ErrTruncated, "inside a chunk header"},
		{"cut in fmt", riff(chunkSized("fmt ", 16, mono16[:9])), ErrTruncated, `inside the "fmt " chunk`},
		{"fmt too small", riff(chunk("fmt ", mono16[:14]), data), ErrMalformed, `"fmt " chunk of 14 bytes; want 16`},
		{"fmt absurdly large", riff(chunkSized("fmt ", 0xFFFFFF00, mono16)), ErrMalformed, `"fmt " chunk of 4294967040 bytes`},
		{"unknown chunk past EOF", riff(chunk("fmt ", mono16), chunkSized("LIST", 1<<30, []byte("INFO"))), ErrTruncated, `inside chunk "LIST"`},
		{"MP3", riff(chunk("fmt ", fmtBody(0x55, 1, 44100, 1, 0)), data), ErrUnsupported, "compressed format 0x0055 (MPEG layer 3); want uncompressed PCM (1) or IEEE float (3)"},
		{"ADPCM", riff(chunk("fmt ", fmtBody(0x02, 1, 44100, 256, 4)), data), ErrUnsupported, "Microsoft ADPCM"},
		{"unknown tag", riff(chunk("fmt ", fmtBody(0x1234, 1, 44100, 2, 16)), data), ErrUnsupported, "unknown format 0x1234"},
		{"12-bit PCM", riff(chunk("fmt ", fmtBody(wavPCM, 1, 44100, 2, 12)), data), ErrUnsupported, "PCM with 12 bits per sample; want 8, 16, 24 or 32"},
		{"16-bit float", riff(chunk("fmt ", fmtBody(wavFloat, 1, 44100, 2, 16)), data), ErrUnsupported, "IEEE float with 16 bits"},
		{"zero channels", riff(chunk("fmt ", fmtBody(wavPCM, 0, 48000, 0, 16)), data), ErrMalformed, "0 channels outside 1..32"},
		{"65535 channels", riff(chunk("fmt ", fmtBody(wavPCM, 65535, 48000, 65534, 16)), data), ErrMalformed, "65535 channels"},
		{"zero rate", riff(chunk("fmt ", fmtBody(wavPCM, 1, 0, 2, 16)), data), ErrMalformed, "sample rate 0 Hz outside 8000..192000"},
		{"absurd rate", riff(chunk("fmt ", fmtBody(wavPCM, 1, 4000000000, 2, 16)), data), ErrMalformed, "sample rate"},
		{"block align mismatch", riff(chunk("fmt ", fmtBody(wavPCM, 2, 48000, 2, 16)), data), ErrMalformed, "block align 2 bytes; want 4 (2 channels × 2 bytes per sample)"},
		{"extensible too short", riff(chunk("fmt ", append(fmtBody(wavExtensible, 1, 48000, 2, 16), 0, 0)), data), ErrMalformed, "WAVE_FORMAT_EXTENSIBLE header of 18 bytes"},
		{"extensible unknown GUID", riff(chunk("fmt ", extBody(1, 48000, 16, 16, 1, badGUID)), data), ErrUnsupported, "not a standard one"},
		{"extensible compressed", riff(chunk("fmt ", extBody(1, 48000, 16, 16, 0x55, subformatTail)), data), ErrUnsupported, "compressed format 0x0055"},
		{"extensible valid bits too many", riff(chunk("fmt ", extBody(1, 48000, 16, 20, 1, subformatTail)), data), ErrMalformed, "20 valid bits in a 16-bit container"},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := NewWAVReader(bytes.NewReader(c.in))
			var ie *InputError
			if !errors.Is(err, c.kind) || !errors.As(err, &ie) || !strings.Contains(err.Error(), c.want) {
				t.Errorf("error = %v; want an *InputError wrapping %v containing %q", err, c.kind, c.want)
			}
		})
	}
}

func TestWAVDataErrors(t *testing.T) {
	f32 := func(v ...float32) []byte {
		var b []byte
		for _, x := range v {
			b = binary.LittleEndian.AppendUint32(b, math.Float32bits(x))
		}
		return b
	}
	fmtF32 := chunk("fmt ", fmtBody(wavFloat, 1, 48000, 4, 32))
	stereo := chunk("fmt ", fmtBody(wavPCM, 2, 48000, 4, 16))
	for _, c := range []struct {
		name   string
		in     []byte
		frames int   // complete frames delivered before the error
		kind   error // nil = clean io.EOF
		want   string
	}{
		{"clean", riff(chunk("fmt ", mono16), chunk("data", s16(1, 2, 3))), 3, nil, ""},
		{"cut short", riff(chunk("fmt ", mono16), chunkSized("data", 200, s16(1, 2, 3))), 3, ErrTruncated, "194 of the declared bytes missing"},
		{"cut inside a frame", riff(stereo, chunkSized("data", 200, append(s16(1, 2, 3, 4), 9))), 2, ErrTruncated, "191 of the declared bytes missing"},
		{"data not whole frames", riff(stereo, chunk("data", append(s16(1, 2, 3, 4), 7, 7, 7))), 2, ErrMalformed, "ends 3 bytes into a frame after 2 whole frames"},
		{"unknown length runs to EOF", riff(chunk("fmt ", mono16), chunkSized("data", wavUnknownSize, s16(5, 6, 7, 8))), 4, nil, ""},
		{"unknown length, partial frame", riff(stereo, chunkSized("data", wavUnknownSize, append(s16(1, 2), 1))), 1, ErrTruncated, "input ends 1 bytes into a frame after 1 whole frames"},
		{"NaN sample", riff(fmtF32, chunk("data", f32(0.1, 0.2, float32(math.NaN()), 0.3))), 2, ErrMalformed, "sample 1 of frame 2 is NaN; want finite samples"},
		{"Inf sample", riff(fmtF32, chunk("data", f32(float32(math.Inf(1))))), 0, ErrMalformed, "+Inf"},
		{"empty data", riff(chunk("fmt ", mono16), chunk("data", nil)), 0, nil, ""},
	} {
		t.Run(c.name, func(t *testing.T) {
			r, err := NewWAVReader(bytes.NewReader(c.in))
			if err != nil {
				t.Fatal(err)
			}
			got, err := readWAVUntilErr(r, 3*r.Format().Channels)
			if len(got) != c.frames*r.Format().Channels {
				t.Errorf("delivered %d samples; want the %d complete frames", len(got), c.frames)
			}
			if c.kind == nil {
				if err != io.EOF {
					t.Errorf("error = %v; want io.EOF", err)
				}
				return
			}
			if !errors.Is(err, c.kind) || !strings.Contains(err.Error(), c.want) {
				t.Errorf("error = %v; want %v containing %q", err, c.kind, c.want)
			}
			if _, again := r.Read(make([]float32, 8)); again != err {
				t.Errorf("second read error = %v; want the same sticky error", again)
			}
		})
	}
}

func TestWAVSkipsUnknownAndOddChunks(t *testing.T) {
	want := s16(100, -200, 300)
	in := riff(
		chunk("JUNK", []byte{1, 2, 3}), // odd size: one pad byte follows
		chunk("fmt ", mono16),
		chunk("LIST", []byte("INFOISFT\x05\x00\x00\x00taut\x00")), // odd inner size
		chunk("fact", []byte{3, 0, 0, 0}),
		chunk("data", want),
		chunk("id3 ", []byte("trailing chunk is ignored")),
	)
	r, err := NewWAVReader(bytes.NewReader(in))
	if err != nil {
		t.Fatal(err)
	}
	got := readAllWAV(t, r, 16)
	if len(got) != 3 || got[0] != 100.0/32768 || got[1] != -200.0/32768 || got[2] != 300.0/32768 {
		t.Errorf("samples = %v; want 100, -200, 300 / 32768", got)
	}
}

func TestWAVExtensibleFloat(t *testing.T) {
	in := riff(chunk("fmt ", extBody(2, 48000, 32, 32, wavFloat, subformatTail)),
		chunk("data", binary.LittleEndian.AppendUint32(binary.LittleEndian.AppendUint32(nil, math.Float32bits(-0.75)), math.Float32bits(0.125))))
	r, err := NewWAVReader(bytes.NewReader(in))
	if err != nil {
		t.Fatal(err)
	}
	if got := readAllWAV(t, r, 4); r.Encoding() != EncF32 || len(got) != 2 || got[0] != -0.75 || got[1] != 0.125 {
		t.Errorf("encoding %s, samples %v; want f32le [-0.75 0.125]", r.Encoding(), got)
	}
}

func TestWAVExtensible24In32(t *testing.T) {
	// 24 valid bits in a 32-bit container are left-aligned, so they read as 32-bit.
	in := riff(chunk("fmt ", extBody(1, 96000, 32, 24, wavPCM, subformatTail)),
		chunk("data", binary.LittleEndian.AppendUint32(nil, 0x40000000)))
	r, err := NewWAVReader(bytes.NewReader(in))
	if err != nil {
		t.Fatal(err)
	}
	if got := readAllWAV(t, r, 4); len(got) != 1 || got[0] != 0.5 {
		t.Errorf("samples = %v; want [0.5]", got)
	}
}

// FuzzWAV feeds arbitrary bytes to the reader: it must never panic, never deliver a
// partial frame, never deliver more frames than the bytes hold, and always end.
func FuzzWAV(f *testing.F) {
	var good bytes.Buffer
	EncodeWAV(&good, Format{8000, 2}, EncS24, []float32{0.5, -0.5, 0.25, -0.25})
	f.Add(good.Bytes())
	f.Add(riff(chunk("fmt ", mono16), chunk("data", s16(1, 2, 3))))
	f.Add(riff(chunk("fmt ", fmtBody(wavFloat, 1, 48000, 4, 32)), chunkSized("data", wavUnknownSize, []byte{0, 0, 0xc0, 0x7f, 1})))
	f.Add(riff(chunk("JUNK", []byte{1}), chunk("fmt ", extBody(3, 44100, 24, 24, 1, subformatTail)), chunk("data", make([]byte, 19))))
	f.Add([]byte("RIFF\xff\xff\xff\xffWAVEfmt \xff\xff\xff\xff"))
	f.Fuzz(func(t *testing.T, in []byte) {
		r, err := NewWAVReader(bytes.NewReader(in))
		if err != nil {
			var ie *InputError
			if !errors.As(err, &ie) {
				t.Fatalf("header error %v is not an *InputError", err)
			}
			return
		}
		if err := r.Format().Validate(); err != nil {
			t.Fatalf("accepted an invalid format: %v", err)
		}
		ch := r.Format().Channels
		buf := make([]float32, 5*ch)
		total := 0
		for reads := 0; ; reads++ {
			if reads > len(in)+2 {
				t.Fatal("reader does not end")
			}
			n, err := r.Read(buf)
			if n%ch != 0 || n > len(buf) {
				t.Fatalf("Read returned %d samples for %d channels into %d", n, ch, len(buf))
			}
			total += n
			if err != nil {
				break
			}
		}
		if total*r.codec.bytes > len(in) {
			t.Fatalf("delivered %d samples from %d bytes", total, len(in))
		}
	})
}

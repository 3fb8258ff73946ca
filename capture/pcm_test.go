package capture

import (
	"bytes"
	"context"
	"errors"
	"io"
	"math/rand/v2"
	"strings"
	"testing"
	"time"
)

func encodeRaw(enc string, samples []float32) []byte {
	c := codecByName(enc)
	b := make([]byte, len(samples)*c.bytes)
	c.encode(b, samples)
	return b
}

// readAllSource reads a source to its end and returns the samples and the final error
// (nil at io.EOF).
func readAllSource(ctx context.Context, src interface {
	Read(context.Context, []float32) (int, error)
}, block int) ([]float32, error) {
	buf := make([]float32, block)
	var out []float32
	for {
		n, err := src.Read(ctx, buf)
		out = append(out, buf[:n]...)
		if errors.Is(err, io.EOF) {
			return out, nil
		}
		if err != nil {
			return out, err
		}
	}
}

func TestPCMRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	for _, enc := range []string{EncU8, EncS16, EncS24, EncS32, EncF32, EncF64} {
		for _, ch := range []int{1, 2, 6} {
			t.Run(enc+"/"+fmtString(Format{48000, ch}), func(t *testing.T) {
				want := exactSamples(rng, enc, 3001*ch)
				src, err := NewPCMSource(bytes.NewReader(encodeRaw(enc, want)), enc, Format{48000, ch})
				if err != nil {
					t.Fatal(err)
				}
				got, err := readAllSource(context.Background(), src, 500*ch+ch)
				if err != nil || !slicesEqualBits(got, want) {
					t.Errorf("read %d samples, err %v; want %d identical samples and io.EOF", len(got), err, len(want))
				}
			})
		}
	}
}

func TestPCMMalformedLength(t *testing.T) {
	for _, c := range []struct {
		name   string
		enc    string
		ch     int
		frames int
		extra  int // bytes of a partial frame at the end
		want   string
	}{
		{"s16le mono odd byte", EncS16, 1, 10, 1, "input ends 1 bytes into a frame after 10 whole frames; want whole frames of 2 bytes (1 channels × s16le)"},
		{"s16le stereo 3 bytes", EncS16, 2, 7, 3, "3 bytes into a frame after 7 whole frames"},
		{"f32le mono 2 bytes", EncF32, 1, 1025, 2, "after 1025 whole frames"},
		{"s32le stereo, only a partial frame", EncS32, 2, 0, 5, "5 bytes into a frame after 0 whole frames"},
	} {
		t.Run(c.name, func(t *testing.T) {
			raw := append(encodeRaw(c.enc, make([]float32, c.frames*c.ch)), make([]byte, c.extra)...)
			src, err := NewPCMSource(bytes.NewReader(raw), c.enc, Format{8000, c.ch})
			if err != nil {
				t.Fatal(err)
			}
			got, err := readAllSource(context.Background(), src, 64)
			if len(got) != c.frames*c.ch {
				t.Errorf("delivered %d samples; want all %d complete frames first", len(got), c.frames)
			}
			if !errors.Is(err, ErrTruncated) || !strings.Contains(err.Error(), c.want) {
				t.Errorf("error = %v; want ErrTruncated containing %q", err, c.want)
			}
		})
	}
}

func TestNewPCMSourceErrors(t *testing.T) {
	for _, c := range []struct {
		name string
		enc  string
		f    Format
		want string
	}{
		{"unknown encoding", "s16be", Format{48000, 1}, `pcm encoding "s16be"; want one of u8, s16le, s24le, s32le, f32le, f64le`},
		{"rate too low", EncS16, Format{100, 1}, "sample rate 100 Hz outside 8000..192000"},
		{"no channels", EncS16, Format{48000, 0}, "0 channels outside 1..32"},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := NewPCMSource(strings.NewReader(""), c.enc, c.f)
			if err == nil || !strings.Contains(err.Error(), c.want) {
				t.Errorf("error = %v; want one containing %q", err, c.want)
			}
		})
	}
}

func TestPCMHonoursContextOnSilentPipe(t *testing.T) {
	pr, pw := io.Pipe()
	src, err := NewPCMSource(pr, EncS16, Format{8000, 1})
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithTimeout(context.Background(), 20*time.Millisecond)
	defer cancel()
	if _, err := src.Read(ctx, make([]float32, 16)); !errors.Is(err, context.DeadlineExceeded) {
		t.Fatalf("Read on a silent pipe = %v; want context.DeadlineExceeded", err)
	}
	// The source still works after a cancelled Read: data written later arrives.
	go pw.Write(encodeRaw(EncS16, []float32{0.5, -0.5}))
	buf := make([]float32, 16)
	n, err := src.Read(context.Background(), buf)
	if err != nil || n != 2 || buf[0] != 0.5 || buf[1] != -0.5 {
		t.Errorf("Read after the pipe spoke = %d, %v, %v; want [0.5 -0.5]", n, buf[:n], err)
	}
	if err := src.Close(); err != nil {
		t.Errorf("Close: %v", err)
	}
	if _, err := pw.Write([]byte{1, 2}); !errors.Is(err, io.ErrClosedPipe) {
		t.Errorf("write after Close = %v; want io.ErrClosedPipe (Close closes the reader)", err)
	}
}

func TestPCMReadError(t *testing.T) {
	boom := errors.New("disk on fire")
	src, _ := NewPCMSource(io.MultiReader(bytes.NewReader(encodeRaw(EncS16, []float32{0.25})), iotestErr{boom}), EncS16, Format{8000, 1})
	got, err := readAllSource(context.Background(), src, 8)
	if len(got) != 1 || !errors.Is(err, boom) {
		t.Errorf("got %v, %v; want the one sample then an error wrapping %v", got, err, boom)
	}
}

type iotestErr struct{ err error }

func (e iotestErr) Read([]byte) (int, error) { return 0, e.err }

// FuzzPCM: any bytes in any encoding and channel count give whole frames, then
// io.EOF or ErrTruncated, and never a panic.
func FuzzPCM(f *testing.F) {
	f.Add([]byte{1, 2, 3, 4, 5}, uint8(1), uint8(2))
	f.Add(encodeRaw(EncF32, []float32{0.5, 1e30}), uint8(4), uint8(1))
	f.Add([]byte{0, 0, 0xc0, 0x7f}, uint8(4), uint8(1))
	f.Add([]byte{}, uint8(0), uint8(1))
	f.Fuzz(func(t *testing.T, in []byte, encIdx, channels uint8) {
		c := codecs[int(encIdx)%len(codecs)]
		ch := int(channels)%32 + 1
		src, err := NewPCMSource(bytes.NewReader(in), c.name, Format{48000, ch})
		if err != nil {
			t.Fatal(err)
		}
		got, err := readAllSource(context.Background(), src, 3*ch)
		if len(got)%ch != 0 || len(got)*c.bytes > len(in) {
			t.Fatalf("%d samples of %d channels from %d bytes", len(got), ch, len(in))
		}
		if err != nil && !errors.Is(err, ErrTruncated) && !errors.Is(err, ErrMalformed) {
			t.Fatalf("error %v; want nil, ErrTruncated or ErrMalformed", err)
		}
		if !errors.Is(err, ErrMalformed) && (len(in)%(c.bytes*ch) != 0) != errors.Is(err, ErrTruncated) {
			t.Fatalf("%d bytes in frames of %d: error %v", len(in), c.bytes*ch, err)
		}
	})
}

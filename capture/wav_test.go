package capture

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// exactSamples returns n samples that encoding represents exactly, so a round trip
// must reproduce them bit for bit.
func exactSamples(rng *rand.Rand, encoding string, n int) []float32 {
	bits := map[string]int{EncU8: 8, EncS16: 16, EncS24: 24, EncS32: 24, EncF32: 24, EncF64: 24}[encoding]
	full := int64(1) << (bits - 1)
	out := make([]float32, n)
	for i := range out {
		out[i] = float32(rng.Int64N(2*full)-full) / float32(full)
	}
	if encoding == EncF32 || encoding == EncF64 {
		out[0] = 1.5 // floats may exceed full scale; integers may not
	}
	return out
}

func TestWAVRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	for _, enc := range []string{EncU8, EncS16, EncS24, EncS32, EncF32, EncF64} {
		for _, f := range []Format{{8000, 1}, {44100, 2}, {192000, 3}} {
			t.Run(enc+"/"+fmtString(f), func(t *testing.T) {
				want := exactSamples(rng, enc, 999*f.Channels)
				var b bytes.Buffer
				if err := EncodeWAV(&b, f, enc, want); err != nil {
					t.Fatal(err)
				}
				tag := binary.LittleEndian.Uint16(b.Bytes()[20:])
				isFloat := enc == EncF32 || enc == EncF64
				wantExt := !isFloat && (f.Channels > 2 || (enc != EncU8 && enc != EncS16))
				if (tag == wavExtensible) != wantExt {
					t.Errorf("format tag 0x%04x; want extensible = %v", tag, wantExt)
				}
				r, err := NewWAVReader(&b)
				if err != nil {
					t.Fatal(err)
				}
				if r.Format() != f || r.Encoding() != enc || r.Frames() != 999 {
					t.Errorf("Format, Encoding, Frames = %v, %s, %d; want %v, %s, 999", r.Format(), r.Encoding(), r.Frames(), f, enc)
				}
				got := readAllWAV(t, r, 7*f.Channels)
				if !slicesEqualBits(got, want) {
					t.Errorf("round trip differs: first got %v, want %v", got[:4], want[:4])
				}
			})
		}
	}
}

func fmtString(f Format) string { return fmt.Sprintf("%dHz-%dch", f.SampleRate, f.Channels) }

func slicesEqualBits(a, b []float32) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Float32bits(a[i]) != math.Float32bits(b[i]) {
			return false
		}
	}
	return true
}

// readAllWAV reads r to io.EOF with reads of block samples, failing on any other error.
func readAllWAV(t *testing.T, r *WAVReader, block int) []float32 {
	t.Helper()
	got, err := readWAVUntilErr(r, block)
	if !errors.Is(err, io.EOF) {
		t.Fatalf("read: %v", err)
	}
	return got
}

func readWAVUntilErr(r *WAVReader, block int) ([]float32, error) {
	buf := make([]float32, block)
	var got []float32
	for {
		n, err := r.Read(buf)
		if n%r.Format().Channels != 0 {
			return got, errors.New("partial frame delivered")
		}
		got = append(got, buf[:n]...)
		if err != nil {
			return got, err
		}
	}
}

func TestEncodeQuantizes(t *testing.T) {
	in := []float32{1, -1, 2, -2, 0.5, float32(math.NaN())}
	var b bytes.Buffer
	if err := EncodeWAV(&b, Format{8000, 1}, EncS16, in); err != nil {
		t.Fatal(err)
	}
	r, _ := NewWAVReader(&b)
	got := readAllWAV(t, r, 16)
	want := []float32{32767.0 / 32768, -1, 32767.0 / 32768, -1, 0.5, 0}
	if !slicesEqualBits(got, want) {
		t.Errorf("got %v; want %v (clipped to the 16-bit range, NaN as 0)", got, want)
	}
}

func TestEncodeWAVErrors(t *testing.T) {
	for _, c := range []struct {
		name    string
		f       Format
		enc     string
		samples int
		want    string
	}{
		{"unknown encoding", Format{8000, 1}, "mp3", 4, `encoding "mp3"`},
		{"bad rate", Format{4000, 1}, EncS16, 4, "sample rate 4000"},
		{"partial frame", Format{8000, 2}, EncS16, 3, "not a whole number"},
	} {
		t.Run(c.name, func(t *testing.T) {
			err := EncodeWAV(io.Discard, c.f, c.enc, make([]float32, c.samples))
			if err == nil || !strings.Contains(err.Error(), c.want) {
				t.Errorf("EncodeWAV error = %v; want one containing %q", err, c.want)
			}
		})
	}
}

func TestReadWAVFile(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "two.wav")
	want := []float32{0.25, -0.25, 0.5, -0.5}
	if err := WriteWAVFile(path, Format{48000, 2}, EncS24, want); err != nil {
		t.Fatal(err)
	}
	f, got, err := ReadWAVFile(path)
	if err != nil || f != (Format{48000, 2}) || !slicesEqualBits(got, want) {
		t.Fatalf("ReadWAVFile = %v, %v, %v; want %v, %v, nil", f, got, err, Format{48000, 2}, want)
	}

	t.Run("missing file names it", func(t *testing.T) {
		missing := filepath.Join(dir, "nope.wav")
		if _, _, err := ReadWAVFile(missing); err == nil || !strings.Contains(err.Error(), missing) {
			t.Errorf("error = %v; want one naming %s", err, missing)
		}
	})
	t.Run("truncated keeps the frames read", func(t *testing.T) {
		var b bytes.Buffer
		EncodeWAV(&b, Format{8000, 1}, EncS16, make([]float32, 1000))
		cut := filepath.Join(dir, "cut.wav")
		os.WriteFile(cut, b.Bytes()[:44+2*600+1], 0o644)
		_, got, err := ReadWAVFile(cut)
		if !errors.Is(err, ErrTruncated) || !strings.Contains(err.Error(), cut) {
			t.Errorf("error = %v; want ErrTruncated naming %s", err, cut)
		}
		if len(got) != 600 {
			t.Errorf("got %d samples with the error; want the 600 complete frames", len(got))
		}
	})
	t.Run("empty file", func(t *testing.T) {
		empty := filepath.Join(dir, "empty.wav")
		os.WriteFile(empty, nil, 0o644)
		_, _, err := ReadWAVFile(empty)
		if !errors.Is(err, ErrTruncated) || !strings.Contains(err.Error(), empty) || !strings.Contains(err.Error(), "empty") {
			t.Errorf("error = %v; want an 'empty' ErrTruncated naming %s", err, empty)
		}
	})
}

func TestWAVReaderShortDst(t *testing.T) {
	var b bytes.Buffer
	EncodeWAV(&b, Format{8000, 2}, EncS16, make([]float32, 8))
	r, _ := NewWAVReader(&b)
	if _, err := r.Read(make([]float32, 1)); err == nil || !strings.Contains(err.Error(), "no whole frame") {
		t.Errorf("Read into 1 sample of a stereo file: error = %v; want 'no whole frame'", err)
	}
}

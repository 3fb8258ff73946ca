package capture

import (
	"encoding/binary"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

// needSox skips loudly when sox is missing. CI installs it (`apt-get install -y sox`),
// so there these outside checks always run.
func needSox(t *testing.T) string {
	t.Helper()
	p, err := exec.LookPath("sox")
	if err != nil {
		t.Skip("SKIPPED: sox is not installed, so the WAV reader is not checked against an outside tool; install it with `apt-get install -y sox`")
	}
	return p
}

// TestWAVReaderAgreesWithSox: files written by sox in every encoding we read decode to
// the same samples that sox itself converts them to (raw 32-bit float).
func TestWAVReaderAgreesWithSox(t *testing.T) {
	sox := needSox(t)
	dir := t.TempDir()
	for _, c := range []struct {
		name     string
		args     string // sox output options
		channels int
		tol      float64
	}{
		{"u8 mono", "-e unsigned-integer -b 8", 1, 0},
		{"s16 mono", "-e signed-integer -b 16", 1, 0},
		{"s16 three channels (extensible)", "-e signed-integer -b 16", 3, 0},
		{"s24 stereo", "-e signed-integer -b 24", 2, 0},
		{"s32 mono", "-e signed-integer -b 32", 1, 1e-7}, // float32 holds 24 of the 32 bits
		{"f32 stereo", "-e floating-point -b 32", 2, 0},
		{"f64 mono", "-e floating-point -b 64", 1, 1e-7}, // sox converts through 32-bit integers
	} {
		t.Run(c.name, func(t *testing.T) {
			wav := filepath.Join(dir, strings.ReplaceAll(c.name, " ", "_")+".wav")
			raw := wav + ".f32"
			gen := fmt.Sprintf("-n -r 44100 -c %d %s %s synth 0.05 sine 440 sine 661 sine 1003 vol 0.7", c.channels, c.args, wav)
			if out, err := exec.Command(sox, strings.Fields(gen)...).CombinedOutput(); err != nil {
				t.Fatalf("sox %s: %v\n%s", gen, err, out)
			}
			conv := fmt.Sprintf("%s -t raw -e floating-point -b 32 -L %s", wav, raw)
			if out, err := exec.Command(sox, strings.Fields(conv)...).CombinedOutput(); err != nil {
				t.Fatalf("sox %s: %v\n%s", conv, err, out)
			}
			f, got, err := ReadWAVFile(wav)
			if err != nil {
				t.Fatal(err)
			}
			b, _ := os.ReadFile(raw)
			if f != (Format{44100, c.channels}) || len(got) != len(b)/4 {
				t.Fatalf("format %v, %d samples; sox says 44100 Hz × %d, %d samples", f, len(got), c.channels, len(b)/4)
			}
			for i := range got {
				want := math.Float32frombits(binary.LittleEndian.Uint32(b[4*i:]))
				if math.Abs(float64(got[i]-want)) > c.tol {
					t.Fatalf("sample %d = %v; sox reads %v", i, got[i], want)
				}
			}
		})
	}
}

// TestSoxReadsOurWAVs: sox accepts every file EncodeWAV writes and finds the same
// length, rate and channels (an outside check of the writer).
func TestSoxReadsOurWAVs(t *testing.T) {
	needSox(t)
	dir := t.TempDir()
	for _, enc := range []string{EncU8, EncS16, EncS24, EncS32, EncF32, EncF64} {
		for _, ch := range []int{1, 2, 4} {
			t.Run(fmt.Sprintf("%s/%dch", enc, ch), func(t *testing.T) {
				p := filepath.Join(dir, fmt.Sprintf("%s-%d.wav", enc, ch))
				if err := WriteWAVFile(p, Format{22050, ch}, enc, make([]float32, 1001*ch)); err != nil {
					t.Fatal(err)
				}
				out, err := exec.Command("soxi", p).CombinedOutput()
				if err != nil || strings.Contains(string(out), "WARN") {
					t.Fatalf("soxi: %v\n%s", err, out)
				}
				for _, w := range []string{fmt.Sprintf("Channels       : %d", ch), "Sample Rate    : 22050", "1001 samples"} {
					if !strings.Contains(string(out), w) {
						t.Errorf("soxi output lacks %q:\n%s", w, out)
					}
				}
			})
		}
	}
}

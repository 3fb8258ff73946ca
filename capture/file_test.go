package capture

import (
	"context"
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

var _ interface {
	Format() Format
	Read(context.Context, []float32) (int, error)
	Close() error
} = (*FileSource)(nil)

// constWAV writes a file whose every sample is v.
func constWAV(t *testing.T, dir, name string, f Format, frames int, v float32) string {
	t.Helper()
	s := make([]float32, frames*f.Channels)
	for i := range s {
		s[i] = v
	}
	p := filepath.Join(dir, name)
	if err := WriteWAVFile(p, f, EncS16, s); err != nil {
		t.Fatal(err)
	}
	return p
}

func TestFileSourcePlaysListInOrder(t *testing.T) {
	dir := t.TempDir()
	f := Format{8000, 2}
	paths := []string{
		constWAV(t, dir, "c.wav", f, 300, 0.25),
		constWAV(t, dir, "a.wav", f, 1001, -0.5),
		constWAV(t, dir, "b.wav", f, 7, 0.75),
	}
	src, err := OpenFiles(paths, 0)
	if err != nil {
		t.Fatal(err)
	}
	defer src.Close()
	if src.Format() != f || src.Current() != paths[0] {
		t.Errorf("Format, Current = %v, %q; want %v, %q", src.Format(), src.Current(), f, paths[0])
	}
	got, err := readAllSource(context.Background(), src, 128)
	if err != nil {
		t.Fatal(err)
	}
	want := map[int]float32{0: 0.25, 599: 0.25, 600: -0.5, 2601: -0.5, 2602: 0.75, 2615: 0.75}
	if len(got) != 2*(300+1001+7) {
		t.Fatalf("got %d samples; want %d", len(got), 2*(300+1001+7))
	}
	for i, v := range want {
		if got[i] != v {
			t.Errorf("sample %d = %v; want %v (files in the order given)", i, got[i], v)
		}
	}
	if src.Current() != "" {
		t.Errorf("Current after the end = %q; want \"\"", src.Current())
	}
}

func TestOpenFilesErrors(t *testing.T) {
	dir := t.TempDir()
	a := constWAV(t, dir, "a.wav", Format{48000, 1}, 10, 0)
	b44 := constWAV(t, dir, "b44.wav", Format{44100, 1}, 10, 0)
	st := constWAV(t, dir, "stereo.wav", Format{48000, 2}, 10, 0)
	junk := filepath.Join(dir, "junk.wav")
	os.WriteFile(junk, []byte("this is not audio at all"), 0o644)
	for _, c := range []struct {
		name  string
		paths []string
		speed float64
		want  []string
	}{
		{"rate mismatch names both files", []string{a, b44}, 0, []string{b44, "44100 Hz × 1 channels", a, "48000 Hz", "want one format"}},
		{"channel mismatch", []string{a, a, st}, 0, []string{st, "2 channels"}},
		{"missing file", []string{a, filepath.Join(dir, "gone.wav")}, 0, []string{"gone.wav", "no such file"}},
		{"not a WAV", []string{junk}, 0, []string{junk, "not a WAV file"}},
		{"no files", nil, 0, []string{"no WAV files"}},
		{"negative speed", []string{a}, -1, []string{"replay speed -1"}},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := OpenFiles(c.paths, c.speed)
			if err == nil {
				t.Fatal("OpenFiles succeeded; want an error")
			}
			for _, w := range c.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error %q does not contain %q", err, w)
				}
			}
		})
	}
}

func TestFileSourceGoesOnAfterDamagedFile(t *testing.T) {
	dir := t.TempDir()
	f := Format{8000, 1}
	first := constWAV(t, dir, "1.wav", f, 100, 0.5)
	third := constWAV(t, dir, "3.wav", f, 50, -0.5)
	cut := constWAV(t, dir, "2.wav", f, 100, 0.25)
	raw, _ := os.ReadFile(cut)
	os.WriteFile(cut, raw[:44+2*40], 0o644) // 40 of 100 frames survive

	src, err := OpenFiles([]string{first, cut, third}, 0)
	if err != nil {
		t.Fatal(err)
	}
	got, err := readAllSource(context.Background(), src, 64)
	if !errors.Is(err, ErrTruncated) || !strings.Contains(err.Error(), cut) {
		t.Fatalf("error = %v; want ErrTruncated naming %s", err, cut)
	}
	if len(got) != 140 {
		t.Errorf("before the error: %d samples; want 100 + the 40 that survive", len(got))
	}
	rest, err := readAllSource(context.Background(), src, 64)
	if err != nil || len(rest) != 50 || rest[0] != -0.5 {
		t.Errorf("after the error: %d samples, %v; want the 50 of the next file", len(rest), err)
	}
}

func TestFileSourceRealTime(t *testing.T) {
	dir := t.TempDir()
	f := Format{8000, 1}

	t.Run("paces delivery", func(t *testing.T) {
		src, err := OpenFiles([]string{constWAV(t, dir, "short.wav", f, 2400, 0.1)}, 1) // 0.3 s
		if err != nil {
			t.Fatal(err)
		}
		start := time.Now()
		got, err := readAllSource(context.Background(), src, 8000)
		// The last 50 ms step is handed out when due, 0.25 s after the first.
		if err != nil || len(got) != 2400 || time.Since(start) < 240*time.Millisecond {
			t.Errorf("read %d samples in %v, err %v; want 2400 in at least 0.25 s", len(got), time.Since(start), err)
		}
	})
	t.Run("cancel interrupts the wait", func(t *testing.T) {
		src, err := OpenFiles([]string{constWAV(t, dir, "long.wav", f, 8000*30, 0.1)}, 1) // 30 s
		if err != nil {
			t.Fatal(err)
		}
		ctx, cancel := context.WithCancel(context.Background())
		time.AfterFunc(100*time.Millisecond, cancel)
		start := time.Now()
		got, err := readAllSource(ctx, src, 8000)
		if !errors.Is(err, context.Canceled) || time.Since(start) > 5*time.Second || len(got) >= 8000*30 {
			t.Errorf("after cancel: %d samples in %v, err %v; want context.Canceled promptly", len(got), time.Since(start), err)
		}
	})
	t.Run("speed 60 plays a minute a second", func(t *testing.T) {
		src, _ := OpenFiles([]string{constWAV(t, dir, "minute.wav", f, 8000*3, 0.1)}, 60) // 3 s at 60× = 50 ms
		start := time.Now()
		got, err := readAllSource(context.Background(), src, 8000)
		if err != nil || len(got) != 24000 || time.Since(start) < 40*time.Millisecond {
			t.Errorf("read %d in %v, %v; want 24000 samples taking about 50 ms", len(got), time.Since(start), err)
		}
	})
}

func TestFileSourceClose(t *testing.T) {
	dir := t.TempDir()
	src, _ := OpenFiles([]string{constWAV(t, dir, "x.wav", Format{8000, 1}, 10, 0)}, 0)
	if err := src.Close(); err != nil {
		t.Fatal(err)
	}
	if _, err := src.Read(context.Background(), make([]float32, 4)); err != io.EOF {
		t.Errorf("Read after Close = %v; want io.EOF", err)
	}
}

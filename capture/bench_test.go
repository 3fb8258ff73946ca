package capture

import (
	"bytes"
	"testing"
)

// BenchmarkWAVRead reports how fast 16-bit mono and 24-bit stereo files decode;
// SetBytes makes the reported MB/s the file's bytes, and "audio-s/s" says how many
// seconds of 48 kHz audio decode per CPU second.
func BenchmarkWAVRead(b *testing.B) {
	for _, c := range []struct {
		name string
		f    Format
		enc  string
	}{
		{"s16-mono", Format{48000, 1}, EncS16},
		{"s24-stereo", Format{48000, 2}, EncS24},
		{"f32-mono", Format{48000, 1}, EncF32},
	} {
		b.Run(c.name, func(b *testing.B) {
			var file bytes.Buffer
			EncodeWAV(&file, c.f, c.enc, make([]float32, 10*48000*c.f.Channels)) // 10 s
			raw := file.Bytes()
			buf := make([]float32, 4096*c.f.Channels)
			b.SetBytes(int64(len(raw)))
			b.ReportAllocs()
			for b.Loop() {
				r, err := NewWAVReader(bytes.NewReader(raw))
				if err != nil {
					b.Fatal(err)
				}
				for {
					if _, err := r.Read(buf); err != nil {
						break
					}
				}
			}
			b.ReportMetric(10*float64(b.N)/b.Elapsed().Seconds(), "audio-s/s")
		})
	}
}

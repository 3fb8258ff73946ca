package main

import (
	"math"
	"path/filepath"
	"testing"

	"taut/capture"
)

// TestFixturesUpToDate checks that testdata/audio holds what this program renders, so
// testdata/README.md (which describes this program's table) stays true. Samples are
// compared after decoding with a tolerance of about one 16-bit step: math functions
// and fused multiply-adds may differ in the last bits between CPU architectures.
// Run `go generate ./capture` after changing a fixture.
func TestFixturesUpToDate(t *testing.T) {
	const tol = 1.5 / 32768
	for _, fx := range fixtures() {
		t.Run(fx.name, func(t *testing.T) {
			f, got, err := capture.ReadWAVFile(filepath.Join("..", "..", "..", "testdata", "audio", fx.name))
			if err != nil {
				t.Fatalf("%v (run `go generate ./capture`)", err)
			}
			want := fx.render(fx.format)
			if f != fx.format || len(got) != len(want) {
				t.Fatalf("format %v, %d samples; want %v, %d (run `go generate ./capture`)", f, len(got), fx.format, len(want))
			}
			for i := range want {
				if math.Abs(float64(got[i]-want[i])) > tol {
					t.Fatalf("sample %d = %v; want %v (run `go generate ./capture`)", i, got[i], want[i])
				}
			}
		})
	}
}

func TestPlayedF0(t *testing.T) {
	// The first partial f1 = f0·sqrt(1+B) (Fletcher 1964) lands on the note plus cents.
	p := played{name: "A4", cents: 0, b: 4e-4}
	if f1 := p.f0() * math.Sqrt(1+p.b); math.Abs(f1-440) > 1e-9 { // ISO 16: A4 = 440 Hz
		t.Errorf("f1 = %v; want 440", f1)
	}
	p = played{name: "E4", cents: 4, b: 0}
	if got, want := p.f0(), 329.6276*math.Exp2(4.0/1200); math.Abs(got-want) > 1e-3 { // E4 = 329.6276 Hz in 12-TET from A4 = 440
		t.Errorf("f0 = %v; want %v", got, want)
	}
}

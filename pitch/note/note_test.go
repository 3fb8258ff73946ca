package note

import (
	"fmt"
	"math"
	"testing"
)

func TestHz_ISO16(t *testing.T) {
	// Check values: ISO 16 reference A4 = 440 Hz, 12-TET values derived in
	// reference-values §5 (A0 27.5000, C4 261.6256, C8 4186.0090 Hz).
	tests := []struct {
		name string
		want float64
	}{
		{"A0", 27.5000},
		{"C4", 261.6256},
		{"A4", 440.0000},
		{"C8", 4186.0090},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got, err := NameHz(tc.name, A4)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(got-tc.want) > 5e-5 {
				t.Errorf("NameHz(%s) = %.6f, want %.4f", tc.name, got, tc.want)
			}
		})
	}
}

func TestCents(t *testing.T) {
	// Cent definition 1200·log2(f2/f1) (Ellis 1885, from memory); check values
	// derived in reference-values §5.
	tests := []struct {
		f, ref, want float64
	}{
		{442, 440, 7.851},
		{435, 440, -19.786},
		{415, 440, -101.271},
		{432, 440, -31.767},
	}
	for _, tc := range tests {
		t.Run(fmt.Sprint(tc.f), func(t *testing.T) {
			if got := Cents(tc.f, tc.ref); math.Abs(got-tc.want) > 5e-4 {
				t.Errorf("Cents(%v, %v) = %.4f, want %.3f", tc.f, tc.ref, got, tc.want)
			}
		})
	}
}

func TestParse(t *testing.T) {
	// MIDI 1.0 note numbering (A4 = 69, middle C = C4 = 60), from memory; the
	// spellings follow scientific pitch notation.
	tests := []struct {
		in   string
		want int
	}{
		{"A4", 69}, {"C4", 60}, {"c4", 60}, {"F#3", 54}, {"Gb3", 54}, {"Bb0", 22},
		{"A0", 21}, {"C8", 108}, {"C-1", 0}, {"B#3", 60}, {"Cbb4", 58}, {" E5 ", 76},
	}
	for _, tc := range tests {
		t.Run(tc.in, func(t *testing.T) {
			got, err := Parse(tc.in)
			if err != nil || got != tc.want {
				t.Errorf("Parse(%q) = %d, %v; want %d", tc.in, got, err, tc.want)
			}
		})
	}
}

func TestParse_Errors(t *testing.T) {
	for _, in := range []string{"", "H4", "C", "C10", "C#", "4C", "C4.5", "C###4"} {
		t.Run(in, func(t *testing.T) {
			if _, err := Parse(in); err == nil {
				t.Errorf("Parse(%q) succeeded, want an error", in)
			}
		})
	}
}

func TestNearest_RoundTrip(t *testing.T) {
	for m := 21; m <= 108; m++ {
		for _, c := range []float64{-49.9, -12.3, 0, 0.04, 31.7, 49.9} {
			f := Hz(m, A4) * math.Exp2(c/1200)
			gm, gc := Nearest(f, A4)
			if gm != m || math.Abs(gc-c) > 1e-9 {
				t.Fatalf("Nearest(%s %+.2f cents) = %s %+.6f", Name(m), c, Name(gm), gc)
			}
			if Name(m) != Name(gm) {
				t.Fatalf("Name mismatch")
			}
		}
	}
}

func ExampleNearest() {
	m, c := Nearest(442, A4)
	fmt.Printf("%s %+.2f cents\n", Name(m), c)
	// Output: A4 +7.85 cents
}

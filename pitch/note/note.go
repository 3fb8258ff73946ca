// Package note converts between note names, MIDI numbers, frequencies and cents in
// twelve-tone equal temperament (12-TET):
//
//	f(m) = ref · 2^((m − 69)/12)   for MIDI note m, ref = A4 (ISO 16: 440 Hz)
//	cents(f, fRef) = 1200 · log2(f / fRef)
//
// Names use scientific pitch notation: a letter A–G, optional accidentals '#' or 'b'
// (one or two), and an octave number, so middle C is "C4" and the lowest piano key "A0".
package note

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// A4 is the standard reference pitch of ISO 16.
const A4 = 440.0

var letterClass = map[byte]int{'C': 0, 'D': 2, 'E': 4, 'F': 5, 'G': 7, 'A': 9, 'B': 11}

var sharpNames = [12]string{"C", "C#", "D", "D#", "E", "F", "F#", "G", "G#", "A", "A#", "B"}

// Parse returns the MIDI number of a note name such as "A4", "F#3", "Bb0" or "C-1".
func Parse(name string) (int, error) {
	s := strings.TrimSpace(name)
	if s == "" {
		return 0, fmt.Errorf("note: empty note name")
	}
	pc, ok := letterClass[upper(s[0])]
	if !ok {
		return 0, fmt.Errorf("note: %q: want a letter A-G, then optional # or b, then an octave number (e.g. F#3)", name)
	}
	i := 1
	for ; i < len(s) && (s[i] == '#' || s[i] == 'b') && i < 3; i++ {
		if s[i] == '#' {
			pc++
		} else {
			pc--
		}
	}
	oct, err := strconv.Atoi(s[i:])
	if err != nil || oct < -1 || oct > 9 {
		return 0, fmt.Errorf("note: %q: octave must be a whole number from -1 to 9 (e.g. C4 is middle C)", name)
	}
	return (oct+1)*12 + pc, nil
}

func upper(c byte) byte {
	if c >= 'a' && c <= 'z' {
		return c - 'a' + 'A'
	}
	return c
}

// Name returns the name of a MIDI note, spelled with sharps ("C#4").
func Name(midi int) string {
	pc := ((midi % 12) + 12) % 12
	oct := (midi - pc) / 12
	return sharpNames[pc] + strconv.Itoa(oct-1)
}

// Hz returns the 12-TET frequency of a MIDI note for the given A4 reference.
func Hz(midi int, refA4 float64) float64 {
	return refA4 * math.Exp2(float64(midi-69)/12)
}

// NameHz returns the 12-TET frequency of a named note.
func NameHz(name string, refA4 float64) (float64, error) {
	m, err := Parse(name)
	if err != nil {
		return 0, err
	}
	return Hz(m, refA4), nil
}

// Cents returns 1200·log2(f/ref), the interval from ref to f.
func Cents(f, ref float64) float64 {
	return 1200 * math.Log2(f/ref)
}

// Nearest returns the 12-TET note nearest to f and f's offset from it in cents
// (in [-50, 50)).
func Nearest(f, refA4 float64) (midi int, cents float64) {
	x := 69 + 12*math.Log2(f/refA4)
	midi = int(math.Floor(x + 0.5))
	return midi, 100 * (x - float64(midi))
}

package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"periph.io/x/conn/v3/gpio/gpioreg"
	"periph.io/x/conn/v3/gpio/gpiotest"

	"taut/pitch/note"
)

// The soak piano is an invented grand-piano scale of 230 strings, A0 to C8 (MIDI 21 to
// 108): eight single wound strings (A0–E1), eighteen wound bichords (F1–A#2) and
// sixty-two plain music-wire trichords (B2–C8). The numbers are invented but
// physically plausible, not any maker's scale:
//
//   - plain strings: speaking length 0.62 m at C4 scaled by 1.9 per octave (capped at
//     1.2 m; C8 ≈ 48 mm), gauge 0.80 mm at C8 rising linearly to 1.10 mm at B2, which
//     gives 600–700 N and 30–50 % of the breaking load;
//   - wound strings: length 1.45 m at A0 falling to 1.23 m at A#2, a 1.5 mm to 1.1 mm
//     core, copper windings (two layers on the singles), and a mass per length chosen
//     for 1100 N at A0 falling to 900 N at A#2 (about 170 g/m at A0).
const (
	pianoLowMIDI  = 21
	pianoHighMIDI = 108
)

// pianoKey is one key of the soak piano.
type pianoKey struct {
	midi    int
	strings int // 1, 2 or 3
}

func pianoKeys(lowMIDI, highMIDI int) []pianoKey {
	var keys []pianoKey
	for midi := lowMIDI; midi <= highMIDI; midi++ {
		n := 3
		switch k := midi - pianoLowMIDI; {
		case k < 8:
			n = 1
		case k < 26:
			n = 2
		}
		keys = append(keys, pianoKey{midi, n})
	}
	return keys
}

// pianoCSV writes the string table of the keys lowMIDI..highMIDI and returns the
// number of strings.
func pianoCSV(lowMIDI, highMIDI int) (string, int) {
	var b strings.Builder
	b.WriteString("# Soak piano: invented scale, see soak_piano_test.go.\n")
	b.WriteString("id,note,section,length_mm,core,core_mm,wrap1,wrap1_mm,wrap2,wrap2_mm,mass_g_per_m\n")
	n := 0
	for _, k := range pianoKeys(lowMIDI, highMIDI) {
		name := note.Name(k.midi)
		for u := range k.strings {
			id := name
			if k.strings > 1 {
				id += string(rune('a' + u))
			}
			b.WriteString(pianoRow(id, name, k))
			n++
		}
	}
	return b.String(), n
}

func pianoRow(id, name string, k pianoKey) string {
	if k.strings == 3 { // plain
		lengthMM := math.Min(1200, 620*math.Pow(1.9, float64(60-k.midi)/12))
		coreMM := 0.80 + 0.30*float64(pianoHighMIDI-k.midi)/float64(pianoHighMIDI-47)
		return fmt.Sprintf("%s,%s,treble,%.1f,music_wire,%.3f,,,,,\n", id, name, lengthMM, coreMM)
	}
	share := float64(k.midi-pianoLowMIDI) / 25 // 0 at A0, 1 at A#2
	lengthM := 1.45 - 0.22*share
	coreMM := 1.5 - 0.4*share
	tensionN := 1100 - 200*share
	f := note.Hz(k.midi, note.A4)
	massGPerM := 1000 * tensionN / (4 * lengthM * lengthM * f * f) // T = 4·L²·μ·f²
	wrap2 := ",,"
	if k.strings == 1 {
		wrap2 = ",copper,0.9"
	}
	return fmt.Sprintf("%s,%s,bass,%.1f,music_wire,%.2f,copper,%.2f%s,%.2f\n", id, name, 1000*lengthM, coreMM,
		0.8+0.6*(1-share), wrap2, massGPerM)
}

// soakLampPins are registered with periph once per process: plain gpiotest pins that
// keep only their level (a recording pin would grow all night with the blinking).
var soakLampPins = []string{"SOAK_ALARM", "SOAK_SETTLING", "SOAK_STEADY", "SOAK_FAULT", "SOAK_ALIVE"}

func registerSoakPins(t *testing.T) {
	t.Helper()
	for i, name := range soakLampPins {
		if gpioreg.ByName(name) != nil {
			continue
		}
		if err := gpioreg.Register(&gpiotest.Pin{N: name, Num: 950 + i}); err != nil {
			t.Fatalf("register %s: %v", name, err)
		}
	}
}

// writePianoConfig writes the soak piano's config (keys lowMIDI..highMIDI) and string
// table into dir and returns the config path and the number of strings.
func writePianoConfig(t *testing.T, dir string, lowMIDI, highMIDI int) (string, int) {
	t.Helper()
	csv, n := pianoCSV(lowMIDI, highMIDI)
	toml := `# Soak test: an invented grand piano (see soak_piano_test.go).
name = "Soak piano"
reference_hz = 440
string_table = "piano.csv"

[journal]
fsync_interval = "5s"

[lamps]
required = true

[[lamps.lamp]]
name = "alarm"
pin = "SOAK_ALARM"
shows = "alarm"
blink = true

[[lamps.lamp]]
name = "settling"
pin = "SOAK_SETTLING"
shows = "settling"

[[lamps.lamp]]
name = "steady"
pin = "SOAK_STEADY"
shows = "steady"

[[lamps.lamp]]
name = "fault"
pin = "SOAK_FAULT"
shows = "fault"

[[lamps.lamp]]
name = "alive"
pin = "SOAK_ALIVE"
shows = "alive"

[exciter]
enabled = false
`
	if err := os.WriteFile(filepath.Join(dir, "piano.csv"), []byte(csv), 0o644); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, "piano.toml")
	if err := os.WriteFile(path, []byte(toml), 0o644); err != nil {
		t.Fatal(err)
	}
	return path, n
}

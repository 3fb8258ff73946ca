package main

import (
	"math"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"taut/pitch/note"
)

// TestMeasureSoxTones: tones made by an outside tool, sox, read within 0.01 cent.
// CI installs sox (`apt-get install -y sox`); without it the test skips with a loud
// message rather than pass silently.
func TestMeasureSoxTones(t *testing.T) {
	sox, err := exec.LookPath("sox")
	if err != nil {
		t.Skip("SKIPPED: sox is not installed, so taut measure is not checked against tones made by an outside tool; install it with `apt-get install -y sox`")
	}
	const tolCents = 0.01
	dir := t.TempDir()
	for _, c := range []struct {
		name string
		hz   float64
	}{
		{"A0", 27.5},        // ISO 16 / reference-values §5: A0 = 27.5000 Hz, lowest piano key
		{"C4", 261.6256},    // ISO 16 / reference-values §5: C4 = 261.6256 Hz
		{"A4", 440},         // ISO 16: A4 = 440 Hz
		{"1 kHz", 1000},     // a round test frequency, not a note
		{"C8", 4186.009},    // ISO 16 / reference-values §5: C8 = 4186.0090 Hz, highest piano key
		{"A2 at 44.1", 110}, // ISO 16: A2 = 110 Hz; another rate below
	} {
		t.Run(c.name, func(t *testing.T) {
			wav := filepath.Join(dir, strings.ReplaceAll(c.name, " ", "_")+".wav")
			rate := "48000"
			if strings.HasSuffix(c.name, "44.1") {
				rate = "44100"
			}
			// The command of the acceptance check: sox -n -r 48000 -b 16 t.wav synth 2 sine 440
			args := []string{"-n", "-r", rate, "-b", "16", wav, "synth", "2", "sine", strconv.FormatFloat(c.hz, 'f', -1, 64)}
			if out, err := exec.Command(sox, args...).CombinedOutput(); err != nil {
				t.Fatalf("sox %v: %v\n%s", args, err, out)
			}
			got, stderr, err := measureJSON(t, wav)
			if err != nil {
				t.Fatalf("measure: %v\n%s", err, stderr)
			}
			if len(got) != 1 || got[0].Error != "" {
				t.Fatalf("notes: %s; want one with a pitch", summary(got))
			}
			errCents := note.Cents(got[0].FundamentalHz, c.hz)
			t.Logf("%s: %.6f Hz, error %+.5f cent, %d partials, clarity %.3f", c.name, got[0].FundamentalHz, errCents, len(got[0].Partials), got[0].Clarity)
			if math.Abs(errCents) > tolCents {
				t.Errorf("first partial %.6f Hz is %+.4f cent from sox's %v Hz; want within %v", got[0].FundamentalHz, errCents, c.hz, tolCents)
			}
		})
	}
}

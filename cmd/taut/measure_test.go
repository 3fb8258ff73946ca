package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/binary"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"taut/pitch/note"
)

// fixture returns the path of a file in testdata/audio (see testdata/README.md).
func fixture(name string) string { return filepath.Join("..", "..", "testdata", "audio", name) }

// measureJSON runs `taut measure --json args...` in-process and decodes its lines.
// measuredJSON is a line of either kind: a note, or a note without pitch (Error set).
type measuredJSON struct {
	noteJSON
	Error string `json:"error"`
}

func measureJSON(t *testing.T, args ...string) ([]measuredJSON, string, error) {
	t.Helper()
	var out, errb bytes.Buffer
	err := cmdMeasure(context.Background(), append([]string{"--json"}, args...), &out, &errb)
	var notes []measuredJSON
	sc := bufio.NewScanner(&out)
	for sc.Scan() {
		var n measuredJSON
		if err := json.Unmarshal(sc.Bytes(), &n); err != nil {
			t.Fatalf("bad JSON line %q: %v", sc.Text(), err)
		}
		notes = append(notes, n)
	}
	return notes, errb.String(), err
}

type wantNote struct {
	name   string
	cents  float64 // mistuning of the first partial the generator rendered
	onsetS float64
	b      float64 // rendered B, checked when nonzero
}

func TestMeasureFixtures(t *testing.T) {
	// Expected values are the generator's parameters (testdata/README.md); note
	// frequencies are 12-TET from A4 = 440 Hz (ISO 16). The accuracy asked of the
	// pitch engine on clean tones is 0.1 cent for the first partial and 5 % for B.
	const centsTol, onsetTol, bTol = 0.1, 0.03, 0.05
	for _, c := range []struct {
		name string
		args []string
		want []wantNote
	}{
		{"harp phrase", []string{fixture("harp-phrase.wav")}, []wantNote{
			{"C4", 0, 0.10, 0}, {"E4", 4, 0.85, 0}, {"G4", 0, 1.60, 0},
			{"C5", -7, 2.35, 0}, {"A3", 0, 3.10, 0}, {"F3", 2, 3.85, 0},
		}},
		{"three notes", []string{fixture("harp-three-notes.wav")}, []wantNote{{"G3", 0, 0.1, 0}, {"B3", 0, 0.8, 0}, {"D4", 0, 1.5, 0}}},
		{"harp C4", []string{fixture("harp-c4-pluck.wav")}, []wantNote{{"C4", 0, 0.1, 0}}},
		{"piano A2, weak first partial", []string{fixture("piano-a2-weak-first.wav")}, []wantNote{{"A2", 0, 0.1, 1.5e-4}}},
		{"float A4", []string{fixture("float-a4.wav")}, []wantNote{{"A4", 0, 0.1, 4e-4}}},
		{"24-bit left channel", []string{"--channel", "1", fixture("stereo-24bit.wav")}, []wantNote{{"E3", 0, 0.1, 0}}},
		{"24-bit right channel", []string{fixture("stereo-24bit.wav"), "--channel=2"}, []wantNote{{"B3", 0, 0.1, 0}}},
		// testdata/README.md: E3 left (B 4e-5), B3 right (B 3e-5); each channel on its own by default.
		{"24-bit both channels", []string{fixture("stereo-24bit.wav")}, []wantNote{{"E3", 0, 0.1, 4e-5}, {"B3", 0, 0.1, 3e-5}}},
		{"narrowed search", []string{"--min-hz", "90", "--max-hz", "130", fixture("piano-a2-weak-first.wav")}, []wantNote{{"A2", 0, 0.1, 0}}},
	} {
		t.Run(c.name, func(t *testing.T) {
			got, stderr, err := measureJSON(t, c.args...)
			if err != nil {
				t.Fatalf("measure: %v\n%s", err, stderr)
			}
			if len(got) != len(c.want) {
				t.Fatalf("%d notes: %s; want %d: %v", len(got), summary(got), len(c.want), c.want)
			}
			for i, w := range c.want {
				g := got[i]
				if g.Error != "" {
					t.Errorf("note %d at %.3f s: no pitch (%s); want %s", i, g.OnsetS, g.Error, w.name)
					continue
				}
				midi, _ := note.Parse(w.name)
				wantHz := note.Hz(midi, note.A4) * math.Exp2(w.cents/1200)
				if g.Note != w.name || math.Abs(note.Cents(g.FundamentalHz, wantHz)) > centsTol || math.Abs(g.Cents-w.cents) > centsTol {
					t.Errorf("note %d: %s %+.3f cents, first partial %.4f Hz; want %s %+.1f cents (%.4f Hz) within %.2f cent",
						i, g.Note, g.Cents, g.FundamentalHz, w.name, w.cents, wantHz, centsTol)
				}
				if math.Abs(g.OnsetS-w.onsetS) > onsetTol {
					t.Errorf("note %d: onset %.3f s; want %.3f ± %.2f", i, g.OnsetS, w.onsetS, onsetTol)
				}
				if w.b != 0 && math.Abs(g.Inharmonicity/w.b-1) > bTol {
					t.Errorf("note %d: B = %.3g; want %.3g within %.0f %%", i, g.Inharmonicity, w.b, 100*bTol)
				}
				// Fletcher 1964: f1 = f0·sqrt(1+B).
				if f1 := g.F0Hz * math.Sqrt(1+g.Inharmonicity); math.Abs(note.Cents(f1, g.FundamentalHz)) > 1e-6 {
					t.Errorf("note %d: f0 %.6f and B %.3g give f1 %.6f, not the reported %.6f", i, g.F0Hz, g.Inharmonicity, f1, g.FundamentalHz)
				}
				if len(g.Partials) == 0 || g.Partials[0].N < 1 || g.Clarity <= 0 || g.Clarity > 1 || g.RefHz != 440 {
					t.Errorf("note %d: partials %v, clarity %v, ref %v; want partials, clarity in (0, 1], ref 440", i, g.Partials, g.Clarity, g.RefHz)
				}
			}
		})
	}
}

func TestMeasureJSONFields(t *testing.T) {
	var out, errb bytes.Buffer
	if err := cmdMeasure(context.Background(), []string{"--json", fixture("harp-c4-pluck.wav")}, &out, &errb); err != nil {
		t.Fatal(err, errb.String())
	}
	var m map[string]any
	if err := json.Unmarshal(bytes.TrimSpace(out.Bytes()), &m); err != nil {
		t.Fatalf("%v: %s", err, out.String())
	}
	for _, k := range []string{"file", "onset_s", "note", "cents", "fundamental_hz", "f0_hz", "inharmonicity", "clarity", "partials"} {
		if _, ok := m[k]; !ok {
			t.Errorf("JSON lacks the stable field %q: %s", k, out.String())
		}
	}
	p, _ := m["partials"].([]any)
	if len(p) == 0 {
		t.Fatalf("no partials: %s", out.String())
	}
	first, _ := p[0].(map[string]any)
	for _, k := range []string{"n", "hz", "db"} {
		if _, ok := first[k]; !ok {
			t.Errorf("partial lacks %q: %v", k, first)
		}
	}
}

func TestMeasureTable(t *testing.T) {
	var out, errb bytes.Buffer
	if err := cmdMeasure(context.Background(), []string{"--ref", "442", fixture("harp-three-notes.wav")}, &out, &errb); err != nil {
		t.Fatal(err, errb.String())
	}
	lines := strings.Split(strings.TrimSpace(out.String()), "\n")
	if len(lines) != 4 {
		t.Fatalf("got %d lines; want a header and 3 notes:\n%s", len(lines), out.String())
	}
	for _, h := range []string{"file", "ch", "onset_s", "note", "cents", "f1_hz", "f0_hz", "B", "partials", "clarity"} {
		if !strings.Contains(lines[0], h) {
			t.Errorf("header lacks %q: %s", h, lines[0])
		}
	}
	// Against A4 = 442 Hz every in-tune (440-based) note reads 1200·log2(440/442) = −7.85 cents
	// (reference-values §5: 440 → 442 is +7.851 cents).
	for i, name := range []string{"G3", "B3", "D4"} {
		f := strings.Fields(lines[i+1])
		if len(f) != 10 || f[1] != "1" || f[3] != name || f[4] != "-7.85" {
			t.Errorf("row %d = %q; want %s at -7.85 cents", i, lines[i+1], name)
		}
	}
}

func TestMeasureBadFilesAreReportedAndOthersMeasured(t *testing.T) {
	dir := t.TempDir()
	good := fixture("harp-c4-pluck.wav")
	missing := filepath.Join(dir, "missing.wav")
	junk := filepath.Join(dir, "junk.wav")
	os.WriteFile(junk, []byte("ID3\x04 not a wave file at all"), 0o644)
	cut := filepath.Join(dir, "cut.wav")
	raw, err := os.ReadFile(fixture("harp-three-notes.wav"))
	if err != nil {
		t.Fatal(err)
	}
	os.WriteFile(cut, raw[:len(raw)/2+1], 0o644) // the first note and a half survive

	notes, stderr, err := measureJSON(t, good, missing, junk, cut, good)
	if err == nil || exitCode(err, new(bytes.Buffer)) != 1 || !strings.Contains(err.Error(), "3 of 5 files") {
		t.Errorf("error = %v; want exit status 1 saying 3 of 5 files failed", err)
	}
	for _, want := range []string{missing, junk, "not a WAV file", cut, "cut short"} {
		if !strings.Contains(stderr, want) {
			t.Errorf("stderr lacks %q:\n%s", want, stderr)
		}
	}
	var files []string
	for _, n := range notes {
		files = append(files, n.File)
	}
	if len(notes) < 3 || notes[0].File != good || notes[1].File != cut || notes[len(notes)-1].File != good || notes[1].Note != "G3" {
		t.Errorf("notes from %v; want the good file, the complete part of the cut file (G3 first), the good file", files)
	}
}

// TestMeasureChannels: a multichannel file is analysed channel by channel unless asked
// otherwise; the mix of two strings is only analysed on request (testdata/README.md:
// stereo-24bit.wav holds E3 left and B3 right; their mix reads as a common subharmonic).
func TestMeasureChannels(t *testing.T) {
	f := fixture("stereo-24bit.wav")
	for _, c := range []struct {
		name      string
		args      []string
		wantChans []int
		wantNotes []string // "" = not checked (the mix)
	}{
		{"EachByDefault", []string{f}, []int{1, 2}, []string{"E3", "B3"}},
		{"OneChannel", []string{"--channel", "2", f}, []int{2}, []string{"B3"}},
		{"ExplicitMix", []string{"--mix", f}, []int{0}, []string{""}},
		{"MonoIsChannelOne", []string{fixture("harp-c4-pluck.wav")}, []int{1}, []string{"C4"}},
	} {
		t.Run(c.name, func(t *testing.T) {
			got, stderr, err := measureJSON(t, c.args...)
			if err != nil {
				t.Fatalf("measure: %v\n%s", err, stderr)
			}
			if len(got) != len(c.wantChans) {
				t.Fatalf("%d notes %s; want %d", len(got), summary(got), len(c.wantChans))
			}
			for i, n := range got {
				if n.Channel != c.wantChans[i] || (c.wantNotes[i] != "" && n.Note != c.wantNotes[i]) {
					t.Errorf("note %d: channel %d %s; want channel %d %s", i, n.Channel, n.Note, c.wantChans[i], c.wantNotes[i])
				}
			}
		})
	}
	var out, errb bytes.Buffer
	if err := cmdMeasure(context.Background(), []string{"--mix", f}, &out, &errb); err != nil || !strings.Contains(out.String(), " mix ") {
		t.Errorf("table with --mix: %v; want the channel column to say mix:\n%s", err, out.String())
	}
}

// TestMeasureNoPitchedNote: a readable file in which no note has a pitch fails the
// command (exit status 1) with a message naming the file; other files still print.
func TestMeasureNoPitchedNote(t *testing.T) {
	silent := filepath.Join(t.TempDir(), "silent.wav")
	if err := os.WriteFile(silent, pcm16WAV(48000, 1, make([]int16, 48000)), 0o644); err != nil {
		t.Fatal(err)
	}
	good := fixture("harp-c4-pluck.wav")
	notes, stderr, err := measureJSON(t, good, silent)
	if err == nil || exitCode(err, new(bytes.Buffer)) != 1 || !strings.Contains(err.Error(), "1 of 2 files") {
		t.Errorf("error = %v; want exit status 1 saying 1 of 2 files failed", err)
	}
	if want := silent + ": no pitched note found"; !strings.Contains(stderr, want) {
		t.Errorf("stderr lacks %q:\n%s", want, stderr)
	}
	if len(notes) < 2 || notes[0].File != good || notes[0].Error != "" || notes[len(notes)-1].File != silent || notes[len(notes)-1].Error == "" {
		t.Errorf("notes %s; want the good file's note, then the silent file's no-pitch line", summary(notes))
	}
	// One silent channel beside a pitched one is not a failure of the file.
	_, _, err = measureJSON(t, fixture("stereo-24bit.wav"))
	if err != nil {
		t.Errorf("stereo file: %v", err)
	}
}

// pcm16WAV builds a 16-bit PCM WAV file in memory.
func pcm16WAV(rateHz, channels int, samples []int16) []byte {
	var b bytes.Buffer
	le := func(v any) { _ = binary.Write(&b, binary.LittleEndian, v) }
	data := 2 * len(samples)
	b.WriteString("RIFF")
	le(uint32(36 + data))
	b.WriteString("WAVEfmt ")
	le(uint32(16))
	le(uint16(1)) // PCM
	le(uint16(channels))
	le(uint32(rateHz))
	le(uint32(rateHz * channels * 2))
	le(uint16(channels * 2))
	le(uint16(16))
	b.WriteString("data")
	le(uint32(data))
	le(samples)
	return b.Bytes()
}

func TestMeasureMissingChannel(t *testing.T) {
	f := fixture("harp-c4-pluck.wav")
	_, stderr, err := measureJSON(t, "--channel", "2", f)
	if err == nil || !strings.Contains(stderr, f+" has 1 channel(s); --channel 2") {
		t.Errorf("error %v, stderr %q; want a message naming the mono file and the channel", err, stderr)
	}
}

func TestMeasureFlags(t *testing.T) {
	f := fixture("harp-c4-pluck.wav")
	for _, c := range []struct {
		name string
		args []string
		want string
	}{
		{"no files", nil, "no files given"},
		{"unknown flag", []string{"--bogus", f}, "bogus"},
		{"ref zero", []string{"--ref", "0", f}, "--ref 0"},
		{"ref not a number", []string{"--ref", "A4", f}, "invalid value"},
		{"negative channel", []string{"--channel", "-1", f}, "--channel -1"},
		{"channel and mix", []string{"--channel", "2", "--mix", f}, "give --channel 2 or --mix, not both"},
		{"min-hz too low", []string{"--min-hz", "5", f}, "--min-hz 5"},
		{"min above max", []string{"--min-hz", "500", "--max-hz", "100", f}, "is not below --max-hz"},
	} {
		t.Run(c.name, func(t *testing.T) {
			var out, errb bytes.Buffer
			err := cmdMeasure(context.Background(), c.args, &out, &errb)
			var u usageError
			if !errors.As(err, &u) || !strings.Contains(err.Error(), c.want) {
				t.Errorf("error = %v; want a usage error (exit 2) containing %q", err, c.want)
			}
		})
	}
	var out, errb bytes.Buffer
	if err := cmdMeasure(context.Background(), []string{"-h"}, &out, &errb); err != nil || !strings.Contains(errb.String(), "usage: taut measure") {
		t.Errorf("-h: %v, %q; want the usage on stderr and no error", err, errb.String())
	}
}

func TestParseInterspersed(t *testing.T) {
	opts, files, err := parseMeasureFlags([]string{"a.wav", "--json", "b.wav", "--ref=441", "--", "--c.wav"}, new(bytes.Buffer))
	if err != nil || !opts.json || opts.refHz != 441 || strings.Join(files, " ") != "a.wav b.wav --c.wav" {
		t.Errorf("got %+v %v %v; want json, ref 441 and files a.wav b.wav --c.wav", opts, files, err)
	}
}

// summary lists notes briefly for failure messages.
func summary(notes []measuredJSON) string {
	var b strings.Builder
	for _, n := range notes {
		if n.Error != "" {
			fmt.Fprintf(&b, "[%.3f s: %s] ", n.OnsetS, n.Error)
		} else {
			fmt.Fprintf(&b, "[%.3f s: %s %+.2f] ", n.OnsetS, n.Note, n.Cents)
		}
	}
	return b.String()
}

func TestProgressLine(t *testing.T) {
	var b bytes.Buffer
	p := &progress{w: &b, of: 3}
	p.step()
	p.clear()
	p.clear() // nothing shown: nothing to clear
	p.step()
	if got, want := b.String(), "\rmeasure: 1/3 files\r\033[K\rmeasure: 2/3 files"; got != want {
		t.Errorf("progress wrote %q; want %q", got, want)
	}
	var quiet bytes.Buffer
	q := newProgress(&quiet, 100) // not a terminal
	q.step()
	q.clear()
	if quiet.Len() != 0 {
		t.Errorf("progress on a non-terminal wrote %q; want nothing", quiet.String())
	}
}

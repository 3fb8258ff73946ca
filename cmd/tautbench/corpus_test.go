package main

import (
	"math"
	"testing"

	"taut/pitch/note"
)

func TestBuildCorpus_Deterministic(t *testing.T) {
	a, b := buildCorpus(12, 7, defaultLeadS), buildCorpus(12, 7, defaultLeadS)
	if len(a) != len(b) {
		t.Fatalf("lengths %d and %d", len(a), len(b))
	}
	for i := range a {
		if a[i] != b[i] {
			t.Fatalf("case %d differs: %+v vs %+v", i, a[i], b[i])
		}
	}
	const rate = 8000 // small: only sameness is checked
	x, y := a[4].render(rate), b[4].render(rate)
	for i := range x {
		if x[i] != y[i] {
			t.Fatalf("%s: sample %d differs: %g vs %g", a[4].Name, i, x[i], y[i])
		}
	}
	if c := buildCorpus(12, 8, defaultLeadS); c[0].Detune == a[0].Detune {
		t.Errorf("seed 8 gave the same detune as seed 7 (%g)", c[0].Detune)
	}
}

func TestBuildCorpus_Coverage(t *testing.T) {
	cases := buildCorpus(3, 1, defaultLeadS)
	if got, want := len(cases), 30*2*3; got != want { // A0..C8 every 3rd key is 30 keys
		t.Fatalf("got %d cases, want %d", got, want)
	}
	seen := map[string]int{}
	for _, c := range cases {
		seen[c.register()]++
		if math.Abs(c.Detune) > maxDetuneC {
			t.Errorf("%s: detune %g beyond ±%d", c.Name, c.Detune, maxDetuneC)
		}
		// nothing may sit on the 12-TET grid: the first partial is at least minOffGridC from every key
		if _, off := note.Nearest(c.TruthHz, note.A4); math.Abs(off) < minOffGridC {
			t.Errorf("%s: first partial %.3f Hz is %.2f cents from a key", c.Name, c.TruthHz, off)
		}
		if want := c.Tone.F0Hz * math.Sqrt(1+c.Tone.B); math.Abs(c.TruthHz-want) > 1e-9*want {
			t.Errorf("%s: truth %g, want f0·sqrt(1+B) = %g", c.Name, c.TruthHz, want)
		}
		checkB(t, c)
	}
	for _, r := range registers {
		if seen[r] < 30 {
			t.Errorf("register %s has %d tones, want at least 30", r, seen[r])
		}
	}
	if first, last := cases[0].MIDI, cases[len(cases)-1].MIDI; first != 21 || last != 108 {
		t.Errorf("keys run %d..%d, want 21 (A0)..108 (C8)", first, last)
	}
}

func checkB(t *testing.T, c testCase) {
	t.Helper()
	b := c.Tone.B
	switch {
	case c.Family == harp && (b < 1e-5 || b > 1e-4):
		t.Errorf("%s: harp B %g outside 1e-5..1e-4", c.Name, b)
	case c.Family == piano && (b < 1e-4/1.25 || b > 1e-2*1.25):
		t.Errorf("%s: piano B %g outside 1e-4..1e-2 (±25 %%)", c.Name, b)
	case c.Family == piano && c.Tone.F0Hz < bassBelowHz && c.Tone.FirstDB != -20:
		t.Errorf("%s: piano bass first partial at %g dB, want -20", c.Name, c.Tone.FirstDB)
	}
}

func TestRender_SNR(t *testing.T) {
	const rate = 8000
	c := buildCorpus(12, 1, defaultLeadS)[2] // piano A0 at 20 dB
	if c.SNRdB != 20 {
		t.Fatalf("case %s is not the 20 dB one", c.Name)
	}
	noisy := c.render(rate)
	c.SNRdB = snrClean
	clean := c.render(rate)
	var ps, pn float64
	for i := range clean {
		d := float64(noisy[i] - clean[i])
		ps += float64(clean[i]) * float64(clean[i])
		pn += d * d
	}
	if got := 10 * math.Log10(ps/pn); math.Abs(got-20) > 0.5 {
		t.Errorf("measured SNR %.2f dB, want 20", got)
	}
	lead := int(c.LeadS * rate)
	for i := range lead {
		if clean[i] != 0 {
			t.Fatalf("clean lead-in sample %d is %g, want silence", i, clean[i])
		}
	}
}

package pitch

import (
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"taut/capture/synth"
	"taut/pitch/note"
)

var onsetSeeds = flag.Int("onset.seeds", 4, "random phase sets per case in the ringing-note onset tests")

// harpTone is a plucked nylon string like the fixtures' (testdata/README.md): 14
// partials, roll-off 1/n^1.1, 1.4 s decay getting faster with n, and with thump a
// 4 ms finger noise.
func harpTone(name string, seed uint64, thump bool) synth.Tone {
	f, err := note.NameHz(name, note.A4)
	if err != nil {
		panic(err)
	}
	t := synth.Tone{F0Hz: f, B: 3e-5, Partials: 14, Level: 0.25, Rolloff: 1.1, DecayS: 1.4, DecayGrowS: 0.35, Seed: seed}
	if thump {
		t.ThumpS, t.ThumpLevel = 0.004, 0.05
	}
	return t
}

// ringingPair renders prev from 0.2 s and next from 1.0 s, prev ringing on under next,
// over a -80 dBFS noise floor. For different notes, next is scaled so that prev rings
// stepDB below next; for a re-strike of the same note (stepUp), so that the sum rises
// by stepDB over prev alone. Levels are RMS over the 50 ms after next's onset.
func ringingPair(prev, next synth.Tone, stepDB float64, stepUp bool, seed uint64) (x []float32, at0, at1 int) {
	n := int(2.5 * rate)
	x = make([]float32, n)
	at0, at1 = int(0.2*rate), int(1.0*rate)
	p := make([]float32, n-at0)
	prev.Render(p, rate)
	q := make([]float32, n-at1)
	next.Render(q, rate)
	w := int(0.05 * rate)
	ps, qs := p[at1-at0:at1-at0+w], q[:w]
	var pp, pq, qq float64
	for i := range ps {
		pp += float64(ps[i]) * float64(ps[i])
		pq += float64(ps[i]) * float64(qs[i])
		qq += float64(qs[i]) * float64(qs[i])
	}
	g := math.Sqrt(pp/qq) * math.Pow(10, stepDB/20)
	if stepUp { // |p + g·q|² = pp·10^(stepDB/10), the positive root
		target := pp * math.Pow(10, stepDB/10)
		g = (-pq + math.Sqrt(pq*pq-qq*(pp-target))) / qq
	}
	for i, v := range p {
		x[at0+i] += v
	}
	for i, v := range q {
		x[at1+i] += float32(g) * v
	}
	rng := rand.New(rand.NewPCG(seed, 9))
	for i := range x {
		x[i] += float32(1e-4 * rng.NormFloat64())
	}
	return x, at0, at1
}

// TestOnsetDetector_RingingNotes: a note struck while the previous one still rings
// 3 to 10 dB below it is found, low after high, high after low, and a re-strike of
// the same string that raises the level by 3 dB. Each onset is placed at or after
// the true one and less than 10 ms late.
func TestOnsetDetector_RingingNotes(t *testing.T) {
	tests := []struct {
		name       string
		prev, next string
		stepsDB    []float64
		restrike   bool
	}{
		{"LowAfterHigh", "C5", "A3", []float64{3, 5, 8, 10}, false},
		{"LowAfterHigh/Wide", "G4", "E2", []float64{3, 5, 8, 10}, false},
		{"HighAfterLow", "A3", "C5", []float64{3, 5, 8, 10}, false},
		{"HighAfterLow/Wide", "E2", "G4", []float64{3, 5, 8, 10}, false},
		{"Bass", "A0", "A1", []float64{3, 5, 8, 10}, false},
		{"Restrike/A0", "A0", "A0", []float64{3}, true},
		{"Restrike/A2", "A2", "A2", []float64{3}, true},
		{"Restrike/C4", "C4", "C4", []float64{3}, true},
		{"Restrike/C7", "C7", "C7", []float64{3}, true},
	}
	for _, tc := range tests {
		for _, thump := range []bool{true, false} {
			for _, db := range tc.stepsDB {
				t.Run(fmt.Sprintf("%s/%gdB/thump=%v", tc.name, db, thump), func(t *testing.T) {
					for seed := uint64(1); seed <= uint64(*onsetSeeds); seed++ {
						x, at0, at1 := ringingPair(harpTone(tc.prev, seed, thump), harpTone(tc.next, seed+100, thump), db, tc.restrike, seed)
						segs := Segments(nil, x, rate, 25)
						if len(segs) != 2 {
							t.Errorf("seed %d: onsets %v, want 2 at %d and %d", seed, onsetsOf(segs), at0, at1)
							continue
						}
						for i, at := range []int{at0, at1} {
							if late := segs[i].Onset - at; late < 0 || late > int(0.01*rate) {
								t.Errorf("seed %d: onset %d placed at %d (%+.1f ms), want at %d to 10 ms later", seed, i, segs[i].Onset, 1000*float64(late)/rate, at)
							}
						}
						if segs[0].End > segs[1].Onset-int(guardS*rate) {
							t.Errorf("seed %d: first window ends at %d, within %v s of the next onset %d", seed, segs[0].End, guardS, segs[1].Onset)
						}
					}
				})
			}
		}
	}
}

func onsetsOf(segs []Segment) []int {
	var o []int
	for _, s := range segs {
		o = append(o, s.Onset)
	}
	return o
}

// countOnsets pushes x in 10 ms blocks and returns the onsets found.
func countOnsets(x []float32) []int64 {
	d := NewOnsetDetector(rate)
	var got []int64
	for i := 0; i < len(x); i += 480 {
		if d.Push(x[i:min(i+480, len(x))]) >= 0 {
			got = append(got, d.Last())
		}
	}
	return got
}

// TestOnsetDetector_OnlyRisesCount: a sound that stops, abruptly or while another
// rings on, a click, a step of the offset and steady or swelling noise start no note,
// and a stop does not hide a strike right after it. Each case lists the onsets it must
// give: a sound that begins from silence has one.
func TestOnsetDetector_OnlyRisesCount(t *testing.T) {
	n := 3 * int(rate)
	at := func(s float64) int { return int(s * rate) }
	floor := func(x []float32, seed uint64) {
		rng := rand.New(rand.NewPCG(seed, 3))
		for i := range x {
			x[i] += float32(1e-4 * rng.NormFloat64()) // −80 dBFS
		}
	}
	tests := []struct {
		name   string
		render func(x []float32)
		want   []int // onsets, to within 2 ms after
	}{
		{"StopToSilence/A2", func(x []float32) {
			synth.Tone{F0Hz: 110, B: 1.5e-4, Partials: 16, DecayS: 3, ThumpS: 0.008, Seed: 1}.Render(x[at(0.5):at(1.5)], rate)
		}, []int{at(0.5)}},
		{"StopToSilence/C7", func(x []float32) {
			synth.Tone{F0Hz: 2093, B: 7.8e-3, Partials: 8, DecayS: 0.4, Seed: 2}.Render(x[at(0.5):at(1.2)], rate)
		}, []int{at(0.5)}},
		{"StopToFloor/Sine", func(x []float32) {
			synth.Sine(x[at(0.5):at(1.5)], 440, rate, 0.5, 0)
			floor(x, 3)
		}, []int{at(0.5)}},
		{"OneOfTwoStops", func(x []float32) {
			harpTone("C4", 4, true).Add(x[at(0.2):], rate)
			harpTone("G4", 5, true).Add(x[at(0.6):at(1.4)], rate)
			floor(x, 4)
		}, []int{at(0.2), at(0.6)}},
		{"StopThenStrike", func(x []float32) { // a hand damps one string, 20 ms later plucks another
			harpTone("D4", 9, true).Render(x[at(0.3):at(1.0)], rate)
			harpTone("B3", 10, true).Render(x[at(1.02):], rate)
			floor(x, 9)
		}, []int{at(0.3), at(1.02)}},
		{"FadeIntoStrike", func(x []float32) { // the fixtures' 30 ms fade ending at the next pluck
			harpTone("C5", 11, true).Render(x[at(0.3):at(1.0)], rate)
			for i := at(0.97); i < at(1.0); i++ {
				x[i] *= float32(at(1.0)-i) / float32(at(0.03))
			}
			harpTone("A3", 12, true).Render(x[at(1.0):], rate)
			floor(x, 10)
		}, []int{at(0.3), at(1.0)}},
		{"Click", func(x []float32) {
			x[at(1)] = 0.8
			floor(x, 5)
		}, nil},
		{"ClickOnATone", func(x []float32) {
			harpTone("A3", 6, false).Render(x[at(0.3):], rate)
			x[at(1.2)] += 0.5
		}, []int{at(0.3)}},
		{"ClicksOnABassTone", func(x []float32) {
			synth.Tone{F0Hz: 27.5, B: 3e-4, Partials: 16, FirstDB: -20, DecayS: 3, ThumpS: 0.01, Seed: 8}.Render(x[at(0.3):], rate)
			for k := 0; k < 8; k++ {
				x[at(0.8+0.25*float64(k))+37*k] += 0.4
			}
		}, []int{at(0.3)}},
		{"OffsetStep", func(x []float32) {
			for i := at(1); i < n; i++ {
				x[i] = 0.5
			}
			floor(x, 6)
		}, nil},
		{"OffsetStepOnATone", func(x []float32) {
			harpTone("E3", 7, false).Render(x[at(0.3):], rate)
			for i := at(1.2); i < n; i++ {
				x[i] += 0.3
			}
		}, []int{at(0.3)}},
		{"QuietNoise", func(x []float32) { // −70 dBFS: below the −60 dBFS a note needs
			rng := rand.New(rand.NewPCG(7, 7))
			for i := range x {
				x[i] = float32(3e-4 * rng.NormFloat64())
			}
		}, nil},
		{"SwellingNoise", func(x []float32) { // −80 to −26 dBFS over 2 s
			rng := rand.New(rand.NewPCG(8, 8))
			for i := range x {
				x[i] = float32(1e-4 * math.Pow(500, math.Min(1, float64(i)/(2*rate))) * rng.NormFloat64())
			}
		}, nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			x := make([]float32, n)
			tc.render(x)
			got := countOnsets(x)
			ok := len(got) == len(tc.want)
			for i := 0; ok && i < len(got); i++ {
				ok = got[i] >= int64(tc.want[i]) && got[i] <= int64(tc.want[i])+int64(0.002*rate)
			}
			if !ok {
				t.Errorf("onsets %v, want %v", got, tc.want)
			}
		})
	}
}

// TestOnsetDetector_DecayingNotes: one struck or plucked note, from A0 to C8, decaying,
// clean, over a quiet floor (−70 dBFS, below what starts a note) or in noise (−40
// dBFS, present from the first sample, which is then a sound beginning too), has
// exactly one onset, at its start.
func TestOnsetDetector_DecayingNotes(t *testing.T) {
	for _, name := range []string{"A0", "E1", "A2", "C4", "A4", "E6", "C7", "C8"} {
		f, _ := note.NameHz(name, note.A4)
		for _, noiseDB := range []float64{math.Inf(-1), -70, -40} {
			t.Run(fmt.Sprintf("%s/noise%gdB", name, noiseDB), func(t *testing.T) {
				x := make([]float32, 3*int(rate))
				synth.Tone{F0Hz: f, B: 1e-4 * math.Max(1, f/440), Partials: 16, FirstDB: -10 * math.Max(0, 1-f/110),
					DecayS: 3 * math.Min(1, 220/f+0.1), DecayGrowS: 0.2, ThumpS: 0.008, Seed: 9}.Render(x[int(0.1*rate):], rate)
				at := []int64{int64(0.1 * rate)}
				if !math.IsInf(noiseDB, -1) {
					rng := rand.New(rand.NewPCG(10, 10))
					for i := range x {
						x[i] += float32(math.Pow(10, noiseDB/20) * rng.NormFloat64())
					}
				}
				if noiseDB > -60 {
					at = append([]int64{0}, at...)
				}
				got := countOnsets(x)
				ok := len(got) == len(at)
				for i := 0; ok && i < len(got); i++ {
					ok = got[i] >= at[i] && got[i] <= at[i]+int64(0.002*rate)
				}
				if !ok {
					t.Errorf("onsets %v, want %v", got, at)
				}
			})
		}
	}
}

func TestOnsetDetector_PushDoesNotAllocate(t *testing.T) {
	x, _, _ := ringingPair(harpTone("C5", 1, true), harpTone("A3", 2, true), 5, false, 1)
	d := NewOnsetDetector(rate)
	i := 0
	allocs := testing.AllocsPerRun(200, func() {
		d.Push(x[i : i+480])
		i = (i + 480) % (len(x) - 480)
	})
	if allocs != 0 {
		t.Errorf("Push allocates %v times per call, want 0", allocs)
	}
}

// TestOnsetDetector_Rates: the detector adapts its frame to the rate (a 1024-sample
// frame at 20 kHz, 512 at 44.1 to 192 kHz, 256 at 8 kHz) and finds a note struck over a
// ringing one at each.
func TestOnsetDetector_Rates(t *testing.T) {
	for _, r := range []float64{8000, 20000, 44100, 96000, 192000} {
		t.Run(fmt.Sprintf("%gHz", r), func(t *testing.T) {
			x := make([]float32, int(2*r))
			at0, at1 := int(0.2*r), int(1.1*r)
			harpTone("E4", 1, true).Add(x[at0:], r)
			harpTone("A3", 2, true).Add(x[at1:], r)
			segs := Segments(nil, x, r, 25)
			if len(segs) != 2 || segs[0].Onset < at0 || segs[0].Onset > at0+int(0.01*r) ||
				segs[1].Onset < at1 || segs[1].Onset > at1+int(0.01*r) {
				t.Errorf("onsets %v, want %d and %d (to 10 ms after)", onsetsOf(segs), at0, at1)
			}
		})
	}
}

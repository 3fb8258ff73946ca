package pitch

import (
	"fmt"
	"math"
	"testing"

	"taut/capture/synth"
	"taut/pitch/note"
)

func rmsOf(x []float32) float64 {
	var s float64
	for _, v := range x {
		s += float64(v) * float64(v)
	}
	return math.Sqrt(s / float64(len(x)))
}

// overlapPair renders prev at 0.2 s and next at 1.0 s, next scaled so that prev rings
// ringDB below next (RMS over the 50 ms after next's onset).
func overlapPair(prev, next synth.Tone, ringDB float64) ([]float32, int) {
	n := int(2.5 * rate)
	x := make([]float32, n)
	at0, at1 := int(0.2*rate), int(1.0*rate)
	p := make([]float32, n-at0)
	prev.Render(p, rate)
	q := make([]float32, n-at1)
	next.Render(q, rate)
	w := int(0.05 * rate)
	lp := rmsOf(p[at1-at0 : at1-at0+w])
	lq := rmsOf(q[:w])
	g := lp / lq * math.Pow(10, -ringDB/20)
	for i, v := range p {
		x[at0+i] += v
	}
	for i, v := range q {
		x[at1+i] += float32(g) * v
	}
	return x, at1
}

func harpTone(name string, seed uint64, thump bool) synth.Tone {
	f, _ := note.NameHz(name, note.A4)
	t := synth.Tone{F0Hz: f, B: 3e-5, Partials: 14, Level: 0.25, Rolloff: 1.1, DecayS: 1.4, DecayGrowS: 0.35, Seed: seed}
	if thump {
		t.ThumpS, t.ThumpLevel = 0.004, 0.05
	}
	return t
}

func TestOnsetDiag(t *testing.T) {
	if testing.Short() {
		t.Skip()
	}
	pairs := [][2]string{{"C5", "A3"}, {"A3", "C5"}, {"A0", "A1"}, {"C4", "C4"}, {"A2", "A2"}, {"C7", "C7"}, {"E2", "G4"}, {"G4", "E2"}}
	for _, thump := range []bool{true, false} {
		for _, pr := range pairs {
			for _, db := range []float64{3, 5, 8, 10} {
				ok, errs := 0, ""
				for seed := uint64(1); seed <= 20; seed++ {
					x, at := overlapPair(harpTone(pr[0], seed, thump), harpTone(pr[1], seed+100, thump), -db)
					segs := Segments(nil, x, rate, 25)
					if len(segs) == 2 && math.Abs(float64(segs[1].Onset-at)) < 0.005*rate {
						ok++
					} else {
						s := ""
						for _, g := range segs {
							s += fmt.Sprintf(" %.4f", float64(g.Onset)/rate)
						}
						errs += fmt.Sprintf(" [%d:%s]", seed, s)
					}
				}
				t.Logf("thump %v %s→%s ring −%g dB: %d/20%s", thump, pr[0], pr[1], db, ok, errs)
			}
		}
	}
}

func TestOnsetTrace(t *testing.T) {
	if testing.Short() {
		t.Skip()
	}
	for _, seed := range []uint64{6, 8, 9} {
		x, at := overlapPair(harpTone("C7", seed, true), harpTone("C7", seed+100, true), -3)
		var d OnsetDetector
		d.init(rate)
		step := d.hop * d.dec
		for i := 0; i+step <= len(x); i += step {
			med := d.median()
			d.Push(x[i : i+step])
			fl := d.flux[(d.frames-1)%onsetMedianLen]
			if i > at-3*step && i < at+8*step {
				j, ok := int64(-1), false
				if fl >= d.fluxMin+onsetFluxRel*med {
					d2 := d
					d2.pending = false
					j, ok = d2.locate()
				}
				t.Logf("seed %d t=%.4f flux %.1f thr %.1f locate %d %v last %d", seed, float64(i+step)/rate, fl, d.fluxMin+onsetFluxRel*med, j, ok, d.last)
			}
		}
	}
}

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

// overlapPair renders prev at 0.2 s and next at 1.0 s. With sum false, next is scaled so
// that prev rings ringDB below next alone; with sum true, so that the sum steps up by
// -ringDB over prev alone (RMS over the 50 ms after next's onset).
func overlapPair(prev, next synth.Tone, ringDB float64, sum bool) ([]float32, int) {
	n := int(2.5 * rate)
	x := make([]float32, n)
	at0, at1 := int(0.2*rate), int(1.0*rate)
	p := make([]float32, n-at0)
	prev.Render(p, rate)
	q := make([]float32, n-at1)
	next.Render(q, rate)
	w := int(0.05 * rate)
	ps, qs := p[at1-at0:at1-at0+w], q[:w]
	var g float64
	if !sum {
		g = rmsOf(ps) / rmsOf(qs) * math.Pow(10, -ringDB/20)
	} else {
		var pp, pq, qq float64
		for i := range ps {
			pp += float64(ps[i]) * float64(ps[i])
			pq += float64(ps[i]) * float64(qs[i])
			qq += float64(qs[i]) * float64(qs[i])
		}
		target := pp * math.Pow(10, -ringDB/10)
		g = (-pq + math.Sqrt(pq*pq-qq*(pp-target))) / qq
	}
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
	pairs := [][2]string{{"C5", "A3"}, {"A3", "C5"}, {"A0", "A1"}, {"C4", "C4"}, {"A2", "A2"}, {"C7", "C7"}, {"A0", "A0"}, {"E2", "G4"}, {"G4", "E2"}}
	var worst, early float64
	for _, thump := range []bool{true, false} {
		for _, pr := range pairs {
			dbs := []float64{3, 5, 8, 10}
			if pr[0] == pr[1] {
				dbs = []float64{3}
			}
			for _, db := range dbs {
				ok, errs := 0, ""
				for seed := uint64(1); seed <= 20; seed++ {
					x, at := overlapPair(harpTone(pr[0], seed, thump), harpTone(pr[1], seed+100, thump), -db, pr[0] == pr[1])
					segs := Segments(nil, x, rate, 25)
					if len(segs) == 2 {
						worst = max(worst, math.Abs(float64(segs[1].Onset-at)))
						early = min(early, float64(segs[1].Onset-at), float64(segs[0].Onset-int(0.2*rate)))
					}
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
	t.Logf("worst onset error %.2f ms, earliest %.2f ms", worst/rate*1000, early/rate*1000)
}

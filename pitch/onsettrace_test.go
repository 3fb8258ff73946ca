package pitch

import "testing"

func TestOnsetTrace(t *testing.T) {
	if testing.Short() {
		t.Skip()
	}
	x, at := overlapPair(harpTone("G4", 14, true), harpTone("E2", 114, true), -3, false)
	var d OnsetDetector
	d.init(rate)
	d.Push(x[:at+int(0.1*rate)])
	on := int64(at) / int64(d.sub*d.dec)
	for j := on - 20; j < on+10; j++ {
		r1 := max(ratio(d.mean(&d.subHP, j, j+int64(d.after)), d.mean(&d.subHP, j-int64(d.before), j)),
			ratio(d.mean(&d.subDif, j, j+int64(d.after)), d.mean(&d.subDif, j-int64(d.before), j)))
		t.Logf("j %d (%+d) E_hp %.3g E_dif %.3g R1 %.2f jump %.2f", j, j-on,
			d.subHP[j%subRing], d.subDif[j%subRing], r1, d.jump(j))
	}
	t.Logf("last %d (%+.1f ms)", d.last, float64(d.last-int64(at))/rate*1000)
}

package monitortest

import (
	"math"
	"testing"

	"taut/monitor"
	"taut/monitor/instrument"
)

// BenchResult summarises a checked bench run.
type BenchResult struct {
	Readings        int
	MaxTensionErr   float64 // largest |measured/physics − 1| of tension over all readings
	MaxCentsErr     float64 // largest |measured − scripted| cents
	StateChanges    int
	UnmatchedStrays int
}

// CheckBench checks the entries of a bench night run (sample-clock time, so each
// entry's sample time is its Time less the first entry's; time scale scale) against the story: every scripted note is read as the string that sounded
// and nothing else is, tension within 0.5 % of the physics at the true f0, cents
// within 1 cent, the state changes of BenchExpect at their times, the stray note
// unmatched, a start first and a stop last, and seq numbers without gaps.
func CheckBench(t testing.TB, cfg *instrument.Config, sc *Scenario, scale float64, entries []monitor.Entry) BenchResult {
	t.Helper()
	var res BenchResult
	checkFrame(t, entries)
	strs := map[string]*instrument.String{}
	for i := range cfg.Instrument.Strings {
		strs[cfg.Instrument.Strings[i].ID] = &cfg.Instrument.Strings[i]
	}
	if len(entries) == 0 {
		return res
	}
	t0 := entries[0].Time
	at := func(e *monitor.Entry) float64 { return e.Time.Sub(t0).Seconds() }
	heard := make([]bool, len(sc.Soundings))
	for _, e := range entries {
		if e.Kind != monitor.KindReading && e.Kind != monitor.KindUnmatched {
			continue
		}
		i := soundingAt(sc, at(&e))
		if i < 0 {
			t.Errorf("%s at %.2f s (%.2f Hz): no scripted note there", e.Kind, at(&e), e.F0Hz)
			continue
		}
		heard[i] = true
		so := sc.Soundings[i]
		if e.Kind == monitor.KindUnmatched {
			if so.String != "" {
				t.Errorf("note of %s at %.2f s (%.2f Hz) unmatched: %s", so.String, so.AtS, so.F0Hz, e.Detail)
			} else if e.Reason == "too-far" {
				res.UnmatchedStrays++
			}
			continue
		}
		res.Readings++
		if e.String != so.String {
			t.Errorf("note of %q at %.2f s (%.2f Hz) read as %s", so.String, so.AtS, so.F0Hz, e.String)
			continue
		}
		s := strs[so.String]
		tensionErr := math.Abs(e.TensionN/s.Phys.Tension(so.F0Hz) - 1)
		centsErr := math.Abs(e.Cents - 1200*math.Log2(so.F0Hz/s.TargetHz))
		res.MaxTensionErr = math.Max(res.MaxTensionErr, tensionErr)
		res.MaxCentsErr = math.Max(res.MaxCentsErr, centsErr)
		if tensionErr > 0.005 || centsErr > 1 {
			t.Errorf("%s at %.2f s: tension %.1f N (physics %.1f N, error %.3f %%), cents %.2f (scripted %.2f)",
				e.String, at(&e), e.TensionN, s.Phys.Tension(so.F0Hz), 100*tensionErr, e.Cents,
				1200*math.Log2(so.F0Hz/s.TargetHz))
		}
	}
	for i, h := range heard {
		if !h {
			so := sc.Soundings[i]
			t.Errorf("note of %q at %.2f s (%.2f Hz) produced no reading", so.String, so.AtS, so.F0Hz)
		}
	}
	if res.UnmatchedStrays != 1 {
		t.Errorf("%d stray notes journaled as unmatched (too-far), want 1", res.UnmatchedStrays)
	}
	res.StateChanges = checkStates(t, scale, entries, at)
	return res
}

// soundingAt returns the sounding whose onset is within 50 ms of tS, or -1.
func soundingAt(sc *Scenario, tS float64) int {
	for i, so := range sc.Soundings {
		if math.Abs(so.AtS-tS) < 0.05 {
			return i
		}
	}
	return -1
}

// checkFrame checks what frames a run: start first, stop last, seq without gaps.
func checkFrame(t testing.TB, entries []monitor.Entry) {
	t.Helper()
	if len(entries) < 2 || entries[0].Kind != monitor.KindStart || entries[len(entries)-1].Kind != monitor.KindStop {
		t.Errorf("run not framed by start and stop entries (%d entries)", len(entries))
	}
	for i := 1; i < len(entries); i++ {
		if entries[i].Seq != 0 && entries[i].Seq != entries[i-1].Seq+1 {
			t.Errorf("seq %d follows %d", entries[i].Seq, entries[i-1].Seq)
		}
	}
}

// checkStates compares every string's state changes with BenchExpect.
func checkStates(t testing.TB, scale float64, entries []monitor.Entry, at func(*monitor.Entry) float64) int {
	t.Helper()
	got := map[string][]monitor.Entry{}
	n := 0
	for _, e := range entries {
		if e.Kind == monitor.KindState {
			got[e.String] = append(got[e.String], e)
			n++
		}
	}
	for id, want := range BenchExpect {
		g := got[id]
		if len(g) != len(want) {
			t.Errorf("%s: %d state changes %v, want %d %v", id, len(g), statesOf(g), len(want), want)
			continue
		}
		prev := monitor.Quiet
		for k, w := range want {
			if g[k].Prev == nil || *g[k].Prev != prev {
				t.Errorf("%s change %d: prev_state %v, want %v", id, k, g[k].Prev, prev)
			}
			prev = g[k].State
			lo, hi := BenchTimeS(id, w.AtH, scale)-0.5, BenchTimeS(id, w.UpToH, scale)+0.5
			if ts := at(&g[k]); g[k].State != w.State || g[k].Reason != w.Reason || ts < lo || ts > hi {
				t.Errorf("%s change %d: %v (%s) at %.1f s, want %v (%s) between %.1f and %.1f s",
					id, k, g[k].State, g[k].Reason, ts, w.State, w.Reason, lo, hi)
			}
		}
	}
	return n
}

func statesOf(es []monitor.Entry) []string {
	var s []string
	for _, e := range es {
		s = append(s, e.State.String()+"("+e.Reason+")")
	}
	return s
}

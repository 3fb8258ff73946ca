package sim

import (
	"context"
	"math"
	"slices"
	"testing"
	"time"

	"taut/capture/synth"
	"taut/configs"
	"taut/monitor/instrument"
)

func harp(t *testing.T) *instrument.Config {
	t.Helper()
	cfg, err := instrument.Parse(configs.FS, "harp36.toml")
	if err != nil {
		t.Fatal(err)
	}
	return cfg
}

func TestNewNight_Faults(t *testing.T) {
	cfg := harp(t)
	n, err := NewNight(cfg, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(n.Faults) != 3 {
		t.Fatalf("faults %+v", n.Faults)
	}
	kinds := map[FaultKind]Fault{}
	for _, f := range n.Faults {
		kinds[f.Kind] = f
	}
	// margin: the light-core string runs 5 points over the config's alarm share.
	m := kinds[FaultMargin]
	s := stringOf(n.Config, m.String)
	f0, _ := atPitch(s) // tension from the ideal f0 under a first partial on target
	if got := s.Phys.Margin(s.Phys.Tension(f0)); math.Abs(got-(cfg.Listen.MarginAlarm+0.05)) > 1e-6 {
		t.Errorf("%s margin %.4f, want %.2f", m.String, got, cfg.Listen.MarginAlarm+0.05)
	}
	if orig := stringOf(cfg, m.String); orig.Phys.Core.DiameterM <= s.Phys.Core.DiameterM {
		t.Errorf("core not lighter, or the caller's config was changed: %g → %g", orig.Phys.Core.DiameterM, s.Phys.Core.DiameterM)
	}
	// winding: B doubles an hour after it starts; slip: 35 cents down at once.
	w := n.plan(kinds[FaultWinding].String)
	if got := w.bAt(w.bShiftH+1.5) / w.B0; math.Abs(got-2) > 1e-9 {
		t.Errorf("winding B ratio %.3f, want 2", got)
	}
	sl := n.plan(kinds[FaultSlip].String)
	if d := sl.cents(sl.slipAtH) - sl.cents(sl.slipAtH-1e-9); math.Abs(d+35) > 1e-3 {
		t.Errorf("slip drop %.3f, want -35", d)
	}
	if sl.slipAtH <= n.PullUpH {
		t.Errorf("slip at %.2f h before the pull-up at %.2f h", sl.slipAtH, n.PullUpH)
	}
	names := []string{m.String, kinds[FaultWinding].String, kinds[FaultSlip].String}
	if names[0] == names[1] || names[1] == names[2] || names[0] == names[2] {
		t.Errorf("faults share a string: %v", names)
	}
}

func stringOf(cfg *instrument.Config, id string) *instrument.String {
	for i := range cfg.Instrument.Strings {
		if cfg.Instrument.Strings[i].ID == id {
			return &cfg.Instrument.Strings[i]
		}
	}
	return nil
}

func (n *Night) plan(id string) *Plan {
	for i := range n.Strings {
		if n.Strings[i].ID == id {
			return &n.Strings[i]
		}
	}
	return nil
}

func TestNewNight_NylonCreepsMoreThanWound(t *testing.T) {
	n, err := NewNight(harp(t), Options{})
	if err != nil {
		t.Fatal(err)
	}
	var nylon, wound []float64
	for i := range n.Strings {
		p := &n.Strings[i]
		sag := p.C0 - p.CreepB*math.Log1p(4/p.CreepT0) // creep alone at 4 h
		switch {
		case p.Material == "nylon":
			nylon = append(nylon, sag)
		case p.Wound:
			wound = append(wound, sag)
		}
	}
	// Every nylon string sags more than every wound string, by creep alone.
	if slices.Max(nylon) > -10 || slices.Max(nylon) >= slices.Min(wound) || slices.Min(wound) < -5.5 {
		t.Errorf("sag at 4 h: nylon %v, wound %v", nylon, wound)
	}
}

func TestNewNight_Schedule(t *testing.T) {
	n, err := NewNight(harp(t), Options{Hours: 9, Interval: 30 * time.Minute, ToneS: 1, DampS: 0.25, RateHz: 48000})
	if err != nil {
		t.Fatal(err)
	}
	if len(n.Rounds) != 19 || n.Strikes() != 19*36 {
		t.Errorf("%d rounds, %d strikes; want 19 and 684", len(n.Rounds), n.Strikes())
	}
	if n.PullUpH != 4.5 || len(n.PulledUp) == 0 {
		t.Errorf("pull-up at %.1f h of %v", n.PullUpH, n.PulledUp)
	}
	r := n.Rounds[2]
	if r.Frame != 2*1800*48000 || r.Strikes[1].Frame-r.Strikes[0].Frame != 60000 {
		t.Errorf("round 2 at frame %d, slot %d", r.Frame, r.Strikes[1].Frame-r.Strikes[0].Frame)
	}
	// Every string that was pulled up reads higher just after the pull-up.
	pr := int(n.PullUpH / 0.5)
	for _, id := range n.PulledUp {
		i := n.plan(id).Index
		if before, after := n.Rounds[pr-1].Strikes[i].Cents, n.Rounds[pr].Strikes[i].Cents; after < before+3 {
			t.Errorf("%s: %.1f → %.1f cents at the pull-up", id, before, after)
		}
	}
}

func TestNewNight_Seeded(t *testing.T) {
	cfg := harp(t)
	a, _ := NewNight(cfg, Options{Seed: 7})
	b, _ := NewNight(cfg, Options{Seed: 7})
	c, _ := NewNight(cfg, Options{Seed: 8})
	sa, sb, sc := a.Rounds[5].Strikes[3], b.Rounds[5].Strikes[3], c.Rounds[5].Strikes[3]
	if sa != sb {
		t.Errorf("same seed, different strikes: %+v vs %+v", sa, sb)
	}
	if sa.Cents == sc.Cents {
		t.Error("different seeds gave the same pitch")
	}
}

// TestStrike_FirstPartialOnPitch: the target rule — a string's pitch is its first
// partial (what a tuner hears) — so every strike is rendered with its first partial
// at the simulated pitch and the tone's ideal f0 √(1+B) below it (stiff string,
// f_n = n·f0·√(1+B·n²), Fletcher 1964).
func TestStrike_FirstPartialOnPitch(t *testing.T) {
	n, err := NewNight(harp(t), Options{Hours: 1})
	if err != nil {
		t.Fatal(err)
	}
	biggest := 0.0
	for _, r := range n.Rounds {
		for _, s := range r.Strikes {
			p := n.plan(s.String)
			want := p.TargetHz * math.Exp2(s.Cents/1200)
			if got := s.Tone.PartialHz(1); math.Abs(got/want-1) > 1e-12 || math.Abs(s.FirstHz/want-1) > 1e-12 {
				t.Fatalf("%s: first partial %.6f Hz (FirstHz %.6f), want %.6f", s.String, got, s.FirstHz, want)
			}
			if s.Tone.F0Hz != s.F0Hz || math.Abs(s.F0Hz*math.Sqrt(1+s.B)/want-1) > 1e-12 || s.Tone.B != s.B {
				t.Fatalf("%s: tone f0 %.6f B %g, strike f0 %.6f B %g", s.String, s.Tone.F0Hz, s.Tone.B, s.F0Hz, s.B)
			}
			biggest = math.Max(biggest, 1200*math.Log2(s.FirstHz/s.F0Hz))
		}
	}
	// The treble's nylon strings are stiff enough that f0 and the first partial differ
	// by more than a cent: rendering f0 on pitch would read flat by that much.
	if biggest < 1 {
		t.Errorf("largest f1/f0 gap %.2f cents; the harp's top strings should exceed 1 cent", biggest)
	}
}

type fakePlayer struct {
	items  []string
	frames int64
	closed bool
}

func (p *fakePlayer) Queue(tone synth.Tone, durS float64) {
	p.items = append(p.items, "tone")
	p.frames += int64(durS * 48000)
}
func (p *fakePlayer) QueueSilence(durS float64) { p.frames += int64(math.Round(durS * 48000)) }
func (p *fakePlayer) Skip(frames int64) {
	p.items = append(p.items, "skip")
	p.frames += frames
}
func (p *fakePlayer) Close() error { p.closed = true; return nil }

// fakeExciter lets capture keep up with everything queued.
type fakeExciter struct {
	p      *fakePlayer
	excite []int64
}

func (e *fakeExciter) Excite(id string, frame int64) {
	if e.p.frames != frame {
		panic("strike registered at a frame other than the queue's position")
	}
	e.excite = append(e.excite, frame)
}
func (e *fakeExciter) Frame() int64 { return e.p.frames }

func TestFeed(t *testing.T) {
	n, err := NewNight(harp(t), Options{Hours: 1})
	if err != nil {
		t.Fatal(err)
	}
	p := &fakePlayer{}
	ex := &fakeExciter{p: p}
	if err := Feed(context.Background(), n, p, ex, 8); err != nil {
		t.Fatal(err)
	}
	if !p.closed || len(ex.excite) != n.Strikes() || len(ex.excite) != 3*36 {
		t.Errorf("closed %v, %d excites for %d strikes", p.closed, len(ex.excite), n.Strikes())
	}
	if got := slices.Index(p.items, "skip"); got != 36 {
		t.Errorf("first skip after item %d, want after the 36 tones of round 0", got)
	}
}

func TestFeed_Cancelled(t *testing.T) {
	n, _ := NewNight(harp(t), Options{Hours: 1})
	p := &fakePlayer{}
	stuck := &stuckExciter{}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if err := Feed(ctx, n, p, stuck, 4); err == nil || !p.closed {
		t.Errorf("err %v closed %v: want context.Canceled and the player closed", err, p.closed)
	}
}

type stuckExciter struct{}

func (stuckExciter) Excite(string, int64) {}
func (stuckExciter) Frame() int64         { return 0 }

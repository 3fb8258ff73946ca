package sim

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"time"

	"taut/capture/synth"
	"taut/monitor/instrument"
)

// Options shape the simulated night. The zero value gives the defaults.
type Options struct {
	Seed     uint64        // every random choice; 0 → 1
	Hours    float64       // length of the night; 0 → 9
	Interval time.Duration // between the starts of two exciter rounds; 0 → 30 min
	ToneS    float64       // how long each strike rings before it is damped; 0 → 1.0 s
	DampS    float64       // damped (silent) pause after each strike; 0 → 0.25 s
	RateHz   int           // sample rate; 0 → 48000
}

func (o Options) withDefaults() Options {
	if o.Seed == 0 {
		o.Seed = 1
	}
	if o.Hours <= 0 {
		o.Hours = 9
	}
	if o.Interval <= 0 {
		o.Interval = 30 * time.Minute
	}
	if o.ToneS <= 0 {
		o.ToneS = 1.0
	}
	if o.DampS <= 0 {
		o.DampS = 0.25
	}
	if o.RateHz <= 0 {
		o.RateHz = 48000
	}
	return o
}

// FaultKind names an injected problem.
type FaultKind string

// The injected problems.
const (
	FaultMargin  FaultKind = "margin"  // a string fitted with a lighter core than the scale: over the alarm share at pitch
	FaultWinding FaultKind = "winding" // a winding loosens: the partials shift, the pitch barely moves
	FaultSlip    FaultKind = "slip"    // a string slips at its pin: a sudden drop
)

// Fault is one injected problem.
type Fault struct {
	Kind   FaultKind
	String string
	AtH    float64 // hours from the start when it shows
	Detail string
}

// Night is the plan of a simulated night: what every string does and what the
// exciter plays, round by round.
type Night struct {
	Config   *instrument.Config // the config as fitted (the margin fault's string data changed)
	Options  Options
	Strings  []Plan
	Rounds   []Round
	Faults   []Fault
	PullUpH  float64  // time of the pull-up pass
	PulledUp []string // strings raised in it
}

// Round is one pass of the exciter over every string.
type Round struct {
	Index   int
	AtH     float64
	Frame   int64 // sample frame of the round's first strike
	Strikes []Strike
}

// Strike is one string sounded: its true pitch and the tone that is rendered.
type Strike struct {
	String  string
	Frame   int64   // sample frame of the onset
	Cents   float64 // true pitch from target: the first partial's, what a tuner hears
	FirstHz float64 // first partial, TargetHz·2^(Cents/1200)
	F0Hz    float64 // ideal fundamental FirstHz/√(1+B), the tone's F0Hz (and what tension uses)
	B       float64
	Tone    synth.Tone
}

// ToneFrames is the frames each strike rings.
func (n *Night) ToneFrames() int64 {
	return int64(math.Round(n.Options.ToneS * float64(n.Options.RateHz)))
}

// SlotFrames is the frames one strike occupies: it rings, then is damped.
func (n *Night) SlotFrames() int64 {
	return n.ToneFrames() + int64(math.Round(n.Options.DampS*float64(n.Options.RateHz)))
}

// Strikes counts every strike of the night.
func (n *Night) Strikes() int {
	c := 0
	for _, r := range n.Rounds {
		c += len(r.Strikes)
	}
	return c
}

// NewNight plans the night for cfg: every string's settling, the faults, the pull-up pass
// and the strikes of every round. cfg is not modified.
func NewNight(cfg *instrument.Config, opts Options) (*Night, error) {
	o := opts.withDefaults()
	if cfg == nil || len(cfg.Instrument.Strings) < 4 {
		return nil, errors.New("sim: need a config with at least four strings")
	}
	n := &Night{Config: cloneConfig(cfg), Options: o}
	strs := n.Config.Instrument.Strings
	for i := range strs {
		n.Strings = append(n.Strings, newPlan(&strs[i], i, o.Seed))
	}
	if err := n.injectFaults(); err != nil {
		return nil, err
	}
	n.schedule()
	return n, nil
}

func cloneConfig(cfg *instrument.Config) *instrument.Config {
	c := *cfg
	c.Instrument.Strings = append([]instrument.String(nil), cfg.Instrument.Strings...)
	for i := range c.Instrument.Strings {
		s := &c.Instrument.Strings[i]
		s.Phys.Wraps = append(s.Phys.Wraps[:0:0], s.Phys.Wraps...)
	}
	return &c
}

// schedule lays out the rounds from 0 to Hours and applies the pull-up pass at the
// round nearest the middle of the night.
func (n *Night) schedule() {
	o := n.Options
	every := o.Interval.Hours()
	rounds := int(math.Floor(o.Hours/every+1e-9)) + 1
	pullRound := int(math.Round(float64(rounds-1) / 2))
	slot := n.SlotFrames()
	for r := range rounds {
		at := float64(r) * every
		rd := Round{Index: r, AtH: at, Frame: int64(math.Round(at * 3600 * float64(o.RateHz)))}
		if r == pullRound {
			n.pullUp(at)
		}
		for i := range n.Strings {
			frame := rd.Frame + int64(i)*slot
			h := at + float64(frame-rd.Frame)/float64(o.RateHz)/3600
			rd.Strikes = append(rd.Strikes, n.strike(i, r, h, frame))
		}
		n.Rounds = append(n.Rounds, rd)
	}
}

// pullUp raises every string flatter than 3 cents at time h. The restorer overshoots
// by the trade share (a raise falls back ~30 % in the treble and ~10 % in the bass,
// reference-values §4.3, common practice); the string's own share decides how much it
// really gives back.
func (n *Night) pullUp(h float64) {
	n.PullUpH = h
	for i := range n.Strings {
		p := &n.Strings[i]
		c := p.cents(h)
		if c >= -3 {
			continue
		}
		assumed := 0.30
		if p.Wound || p.Steel {
			assumed = 0.10
		}
		p.raise(h, -c/(1-assumed))
		n.PulledUp = append(n.PulledUp, p.ID)
	}
}

// strike is string i sounded in round r at hour h.
func (n *Night) strike(i, r int, h float64, frame int64) Strike {
	p := &n.Strings[i]
	rng := rand.New(rand.NewPCG(n.Options.Seed, uint64(i)<<20|uint64(r)))
	c := p.cents(h) + 0.12*rng.NormFloat64() // a little genuine wander between rounds
	// The pitch is the first partial's (the target rule: what a tuner hears); the
	// stiff string's ideal f0 lies √(1+B) below it.
	f1 := p.TargetHz * math.Exp2(c/1200)
	b := p.bAt(h)
	f0 := f1 / math.Sqrt(1+b)
	tone := p.tone(f0, b, rng)
	return Strike{String: p.ID, Frame: frame, Cents: c, FirstHz: f1, F0Hz: f0, B: b, Tone: tone}
}

// Describe says what was injected, for people.
func (f Fault) Describe() string {
	return fmt.Sprintf("%s on %s at %.1f h: %s", f.Kind, f.String, f.AtH, f.Detail)
}

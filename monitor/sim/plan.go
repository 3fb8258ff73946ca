package sim

import (
	"math"
	"math/rand/v2"

	"taut/capture/synth"
	"taut/monitor/instrument"
)

// Plan is what one string does through the night.
type Plan struct {
	ID       string
	Index    int
	TargetHz float64
	Material string // core material name
	Wound    bool
	Steel    bool // plain steel (music wire or stainless)
	B0       float64
	C0       float64 // pitch just after stringing, cents
	CreepB   float64 // log-creep magnitude, cents per unit of ln(1 + t/t0)
	CreepT0  float64 // hours
	Share    float64 // share of a raise this string gives back within about 12 h
	raises   []raise
	slipAtH  float64
	slipC    float64
	bShiftH  float64 // winding: B starts to change here
	bShift   float64 // final B multiplier
	pitchMod float64 // winding: cents lost as it loosens
	decayS   float64
	levelDB  float64
}

type raise struct{ atH, cents, creepB float64 }

// creepOf gives the invented but physically motivated creep of each construction:
// polymer strings creep far more than gut, and gut more than steel or wound strings
// (viscoelastic creep, reference-values §4.3). New plain piano wire also sags as it
// seats at its bearing points (a trade report speaks of a quarter tone or more over
// the first passes, reference-values §4.3), so plain steel gets more than wound
// strings. The numbers are ours: magnitude range in cents per ln-unit, t0 range in
// hours, and the share of a raise given back.
func creepOf(material string, wound bool) (bLo, bHi, t0Lo, t0Hi, share float64) {
	switch {
	case wound:
		return 0.8, 1.6, 0.3, 0.8, 0.10
	case material == "nylon":
		return 6, 9, 0.3, 0.8, 0.35
	case material == "fluorocarbon":
		return 4, 6, 0.3, 0.8, 0.30
	case material == "gut":
		return 2.5, 4, 0.3, 0.8, 0.25
	default: // plain steel and other metals
		return 1.5, 3, 0.2, 0.6, 0.12
	}
}

func newPlan(s *instrument.String, i int, seed uint64) Plan {
	rng := rand.New(rand.NewPCG(seed, 0x5171<<32|uint64(i)))
	mat := s.Phys.Core.Material.Name
	wound := s.Phys.Wound()
	bLo, bHi, tLo, tHi, share := creepOf(mat, wound)
	p := Plan{
		ID: s.ID, Index: i, TargetHz: s.TargetHz, Material: mat, Wound: wound,
		Steel:   !wound && (mat == "music_wire" || mat == "stainless"),
		C0:      rng.Float64()*2 - 1,
		CreepB:  bLo + (bHi-bLo)*rng.Float64(),
		CreepT0: tLo + (tHi-tLo)*rng.Float64(),
		Share:   share * (0.85 + 0.3*rng.Float64()),
		slipAtH: math.Inf(1), bShiftH: math.Inf(1), bShift: 1,
		levelDB: -2 * rng.Float64(),
	}
	_, p.B0 = atPitch(s)
	p.decayS = decayOf(s.TargetHz, wound, mat)
	return p
}

// atPitch returns the ideal fundamental and the inharmonicity of string s when its
// first partial sits on its target (the target is the first partial's pitch):
// f0 = f1/√(1+B), with B = B(T(f0)) itself depending on f0, so the pair is found by
// fixed-point iteration (B changes by a fraction of a per mille per step: a few
// steps are exact to machine precision).
func atPitch(s *instrument.String) (f0Hz, b float64) {
	f0Hz = s.TargetHz
	for range 8 {
		b = s.Phys.Inharmonicity(s.Phys.Tension(f0Hz))
		f0Hz = s.TargetHz / math.Sqrt(1+b)
	}
	return f0Hz, b
}

// decayOf is an invented but plausible decay time of the first partial: long for
// wound bass, shorter up the scale, shortest for nylon treble.
func decayOf(f0Hz float64, wound bool, material string) float64 {
	d := 3.0 * math.Sqrt(220/f0Hz)
	if wound {
		d *= 1.5
	}
	if material == "nylon" {
		d *= 0.7
	}
	return math.Min(math.Max(d, 0.6), 8)
}

// cents is the string's true pitch from target at hour h: its creep since stringing,
// each raise and the creep it started, a slip, and a loosening winding.
func (p *Plan) cents(h float64) float64 {
	c := p.C0 - p.CreepB*math.Log1p(h/p.CreepT0)
	for _, r := range p.raises {
		if h >= r.atH {
			c += r.cents - r.creepB*math.Log1p((h-r.atH)/p.CreepT0)
		}
	}
	if h >= p.slipAtH {
		c += p.slipC
	}
	return c - p.pitchMod*p.windingProgress(h)
}

// raise pulls the string up by cents at hour h; the new stretch then creeps back by
// Share of the raise over about 12 hours.
func (p *Plan) raise(h, cents float64) {
	p.raises = append(p.raises, raise{atH: h, cents: cents,
		creepB: p.Share * cents / math.Log1p(12/p.CreepT0)})
}

// windingProgress goes from 0 to 1 over the hour after the winding starts to loosen.
func (p *Plan) windingProgress(h float64) float64 {
	if h < p.bShiftH {
		return 0
	}
	return math.Min((h-p.bShiftH)/1.0, 1)
}

// bAt is the string's inharmonicity at hour h.
func (p *Plan) bAt(h float64) float64 {
	return p.B0 * (1 + (p.bShift-1)*p.windingProgress(h))
}

// tone is the strike as rendered: stiff-string partials of the string's B, each
// decaying (higher partials faster), a short noise thump, a little level variation.
func (p *Plan) tone(f0, b float64, rng *rand.Rand) synth.Tone {
	partials := 12
	if f0 < 150 {
		partials = 16
	}
	return synth.Tone{
		F0Hz: f0, B: b, Partials: partials,
		Level:      0.25 * math.Pow(10, (p.levelDB-rng.Float64())/20),
		Rolloff:    1,
		DecayS:     p.decayS,
		DecayGrowS: 0.15,
		ThumpS:     0.004,
		ThumpLevel: 0.05,
		Seed:       rng.Uint64(),
	}
}

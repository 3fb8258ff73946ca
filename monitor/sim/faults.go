package sim

import (
	"errors"
	"fmt"
	"math"
)

// Sizes of the injected faults (invented for the demo).
const (
	marginOver   = 0.05  // the light-core string runs this far over the alarm share
	windingShift = 2.0   // B multiplier once the winding has loosened
	windingCents = 1.5   // pitch lost as it loosens
	slipCents    = -35.0 // a slip well past the listener's jump threshold (25 cents)
)

// injectFaults picks the strings and times of the three faults: a wound string with a
// lighter core than the scale calls for (the highest-margin wound string), a wound
// string whose winding loosens late in the night, and a plain string near the middle
// of the scale that slips after the pull-up.
func (n *Night) injectFaults() error {
	var wound, plain []int
	for i, p := range n.Strings {
		if p.Wound {
			wound = append(wound, i)
		} else {
			plain = append(plain, i)
		}
	}
	if len(wound) < 2 || len(plain) < 1 {
		return errors.New("sim: the demo needs at least two wound strings and one plain string")
	}
	mi := n.highestMargin(wound)
	if err := n.lightCore(mi); err != nil {
		return err
	}
	wi := wound[len(wound)/3]
	if wi == mi {
		wi = wound[(len(wound)/3+1)%len(wound)]
	}
	n.loosenWinding(wi)
	n.slip(plain[len(plain)*11/20])
	return nil
}

func (n *Night) highestMargin(idx []int) int {
	best, bestM := idx[0], -1.0
	for _, i := range idx {
		s := &n.Config.Instrument.Strings[i]
		f0, _ := atPitch(s)
		if m := s.Phys.Margin(s.Phys.Tension(f0)); m > bestM {
			best, bestM = i, m
		}
	}
	return best
}

// lightCore thins string i's core until, at its target pitch, it runs marginOver past
// the alarm share. The config records what was fitted, so the listener sees it too.
func (n *Night) lightCore(i int) error {
	s := &n.Config.Instrument.Strings[i]
	alarm := n.Config.Listen.MarginAlarm
	if alarm <= 0 {
		alarm = 0.85
	}
	want := alarm + marginOver
	orig := s.Phys.Core.DiameterM
	margin := func(d float64) float64 {
		s.Phys.Core.DiameterM = d
		f0, _ := atPitch(s)
		return s.Phys.Margin(s.Phys.Tension(f0))
	}
	lo, hi := 0.3*orig, orig
	if margin(lo) < want {
		s.Phys.Core.DiameterM = orig
		return fmt.Errorf("sim: string %s cannot be brought over the alarm share by a lighter core", s.ID)
	}
	for range 60 {
		mid := (lo + hi) / 2
		if margin(mid) > want {
			lo = mid
		} else {
			hi = mid
		}
	}
	m := margin(lo)
	p := &n.Strings[i]
	_, p.B0 = atPitch(s)
	n.Faults = append(n.Faults, Fault{Kind: FaultMargin, String: s.ID, AtH: 0, Detail: fmt.Sprintf(
		"fitted with a %.2f mm core where the scale calls for %.2f mm: %.0f %% of its breaking load at pitch",
		1000*lo, 1000*orig, 100*m)})
	return nil
}

func (n *Night) loosenWinding(i int) {
	p := &n.Strings[i]
	p.bShiftH = n.betweenRounds(0.55)
	p.bShift, p.pitchMod = windingShift, windingCents
	n.Faults = append(n.Faults, Fault{Kind: FaultWinding, String: p.ID, AtH: p.bShiftH, Detail: fmt.Sprintf(
		"the winding loosens: B rises ×%.1f over an hour while the pitch falls %.1f cents", windingShift, windingCents)})
}

func (n *Night) slip(i int) {
	p := &n.Strings[i]
	p.slipAtH, p.slipC = n.betweenRounds(0.72), slipCents
	n.Faults = append(n.Faults, Fault{Kind: FaultSlip, String: p.ID, AtH: p.slipAtH, Detail: fmt.Sprintf(
		"slips at its pin: a sudden drop of %.0f cents", -slipCents)})
}

// betweenRounds returns a time halfway between two rounds, near share of the night.
func (n *Night) betweenRounds(share float64) float64 {
	every := n.Options.Interval.Hours()
	k := math.Floor(share * n.Options.Hours / every)
	return (k + 0.5) * every
}

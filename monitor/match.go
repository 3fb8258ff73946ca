package monitor

import (
	"fmt"
	"math"

	"taut/monitor/instrument"
	"taut/pitch/note"
)

// hintRoomCents widens the pitch search beyond the candidates' predictions, so a note
// somewhat beyond MatchCents is still measured and journaled as unmatched rather than
// lost as "no pitch".
const hintRoomCents = 200

// How a note was attributed to a string.
const (
	byChannel    = "channel"
	byExciter    = "exciter"
	byPrediction = "prediction"
)

// match is the outcome of attributing one note.
type match struct {
	idx    int     // string index, -1 when unmatched
	by     string  // byChannel, byExciter or byPrediction
	cents  float64 // f0 from the chosen string's target
	reason string  // unmatched: "no-string", "too-far", "ambiguous"
	detail string
}

// matcher attributes notes to strings by predicted current pitch.
type matcher struct {
	strings  []instrument.String
	trackers []*tracker
	lim      *limits
}

// direct attributes a note to the only candidate (a pickup channel or the string the
// exciter just drove); the pitch search was restricted to that string's range.
func (mt *matcher) direct(idx int, firstHz float64, by string) match {
	return match{idx: idx, by: by, cents: note.Cents(firstHz, mt.strings[idx].TargetHz)}
}

// nearest attributes a note to the candidate whose predicted current pitch is nearest
// its measured first partial. It refuses when the nearest is further than MatchCents, or when the
// runner-up is within AmbiguousCents of the nearest (too close to call: unisons always
// are, unless a channel or the exciter tells them apart).
func (mt *matcher) nearest(cands []int, firstHz, t float64) match {
	best, second := -1, -1
	bestD, secondD := math.Inf(1), math.Inf(1)
	for _, i := range cands {
		d := math.Abs(note.Cents(firstHz, mt.strings[i].TargetHz) - mt.trackers[i].predict(t, mt.lim))
		switch {
		case d < bestD:
			second, secondD = best, bestD
			best, bestD = i, d
		case d < secondD:
			second, secondD = i, d
		}
	}
	switch {
	case best < 0:
		return match{idx: -1, reason: "no-string", detail: "no string is heard on this input"}
	case bestD > mt.lim.matchCents:
		return match{idx: -1, reason: "too-far", detail: fmt.Sprintf(
			"%.1f Hz is %.0f cents from the nearest prediction (%s); limit %.0f",
			firstHz, bestD, mt.strings[best].ID, mt.lim.matchCents)}
	case second >= 0 && secondD <= mt.lim.matchCents && secondD-bestD < mt.lim.ambiguousCents:
		return match{idx: -1, reason: "ambiguous", detail: fmt.Sprintf(
			"%.1f Hz fits %s (%.1f cents) and %s (%.1f cents) alike; "+
				"unisons and strings this close need a pickup channel or the exciter",
			firstHz, mt.strings[best].ID, bestD, mt.strings[second].ID, secondD)}
	}
	return match{idx: best, by: byPrediction, cents: note.Cents(firstHz, mt.strings[best].TargetHz)}
}

// hintRange returns the fundamental search range for a note from one of cands: the
// span of their predictions widened by hintRoomCents, so the analyser neither wastes
// time on nor is fooled by pitches no candidate could have.
func (mt *matcher) hintRange(cands []int, t float64) (minHz, maxHz float64) {
	minHz, maxHz = math.Inf(1), 0
	for _, i := range cands {
		s := &mt.strings[i]
		p := mt.trackers[i].predict(t, mt.lim)
		minHz = math.Min(minHz, s.TargetHz*math.Exp2((math.Min(p, 0)-hintRoomCents)/1200))
		maxHz = math.Max(maxHz, s.TargetHz*math.Exp2((math.Max(p, 0)+hintRoomCents)/1200))
	}
	return minHz, maxHz
}

// staticRange is hintRange for strings at their targets with the widest sag the
// prediction may reach (its change is capped at JumpCents): the bounds for sizing
// the analyser and its window.
func staticRange(strs []instrument.String, lim *limits) (minHz, maxHz float64) {
	minHz, maxHz = math.Inf(1), 0
	for i := range strs {
		room := hintRoomCents + lim.jumpCents + lim.matchCents
		minHz = math.Min(minHz, strs[i].TargetHz*math.Exp2(-room/1200))
		maxHz = math.Max(maxHz, strs[i].TargetHz*math.Exp2(room/1200))
	}
	return minHz, maxHz
}

package report

import (
	"cmp"
	"math"
	"slices"
)

// rankAttention numbers the strings that need a look, most urgent first: alarms
// (more flags first, then the higher margin), then strings off target (the furthest
// first), then strings still settling (the longest to steady first). Fine strings
// keep Rank 0.
func rankAttention(strs []*String) {
	order := slices.Clone(strs)
	slices.SortStableFunc(order, func(a, b *String) int {
		if c := cmp.Compare(a.Class, b.Class); c != 0 {
			return c
		}
		switch a.Class {
		case ClassAlarm:
			if c := cmp.Compare(len(b.Flags), len(a.Flags)); c != 0 {
				return c
			}
			return cmp.Compare(b.MaxMargin, a.MaxMargin)
		case ClassPitch:
			return cmp.Compare(math.Abs(b.Analysis.CentsNow), math.Abs(a.Analysis.CentsNow))
		case ClassSettling:
			return cmp.Compare(orZero(b.Analysis.HoursToSteady), orZero(a.Analysis.HoursToSteady))
		}
		return 0
	})
	rank := 0
	for _, s := range order {
		if s.Class == ClassFine || s.Class == 0 {
			continue
		}
		rank++
		s.Rank = rank
	}
}

// Attention returns the strings that need a look, in rank order.
func (r *Report) Attention() []*String {
	var out []*String
	for _, s := range r.Strings {
		if s.Rank > 0 {
			out = append(out, s)
		}
	}
	slices.SortFunc(out, func(a, b *String) int { return cmp.Compare(a.Rank, b.Rank) })
	return out
}

// Flagged returns the strings with at least one problem flag, in scale order.
func (r *Report) Flagged() []*String {
	var out []*String
	for _, s := range r.Strings {
		if len(s.Flags) > 0 {
			out = append(out, s)
		}
	}
	return out
}

// HighMargin reports whether any string went over Limits.CautionMargin, the lower of
// the config's warning share and tension.CautionFloor: the report then leads with the
// safety caution (tension.Caution). A config may warn earlier, never later.
func (r *Report) HighMargin() bool {
	for _, s := range r.Strings {
		if s.MaxMargin > r.Limits.CautionMargin {
			return true
		}
	}
	return false
}

func orZero(x float64) float64 {
	if math.IsNaN(x) {
		return 0
	}
	if math.IsInf(x, 1) {
		return math.MaxFloat64
	}
	return x
}

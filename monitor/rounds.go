package monitor

import (
	"context"
	"fmt"
	"time"
)

// defaultRoundInterval stands in for a zero Exciter.Interval.
const defaultRoundInterval = 10 * time.Minute

// rounds drives the strings that have an exciter, in scale order, every Interval
// outside the quiet hours. Each string (or group of strings sharing one exciter pin)
// is recorded with Excite before its strike, then the scheduler waits Exciter.Listen
// for its note to be captured.
func (m *Monitor) rounds(ctx context.Context) {
	groups := m.exciterGroups()
	if len(groups) == 0 {
		m.log.Warn().Msg("exciter enabled but no string has an exciter pin; no rounds")
		return
	}
	interval := m.cfg.Exciter.Interval
	if interval <= 0 {
		interval = defaultRoundInterval
	}
	for {
		start := m.clock.Now()
		if m.quietHr.contains(start) {
			m.log.Debug().Msg("quiet hours: round skipped")
		} else if !m.round(ctx, groups) {
			return
		}
		select {
		case <-ctx.Done():
			return
		case <-m.clock.After(max(interval-m.clock.Since(start), 0)):
		}
	}
}

// exciterGroups lists the strings with an exciter pin in scale order, those sharing a
// pin together.
func (m *Monitor) exciterGroups() [][]int {
	var groups [][]int
	byPin := map[string]int{}
	for i, s := range m.cfg.Instrument.Strings {
		if s.ExciterPin == "" {
			continue
		}
		if g, ok := byPin[s.ExciterPin]; ok {
			groups[g] = append(groups[g], i)
			continue
		}
		byPin[s.ExciterPin] = len(groups)
		groups = append(groups, []int{i})
	}
	return groups
}

// round strikes each group once; false when ctx ended.
func (m *Monitor) round(ctx context.Context, groups [][]int) bool {
	listen := time.Duration(m.lim.exciteListenS * float64(time.Second))
	failed, first := 0, error(nil)
	for _, g := range groups {
		frame := m.Frame()
		for _, idx := range g {
			m.excites.add(idx, frame, frame+int64(m.lim.exciteListenS*m.rateHz))
		}
		if err := m.exciter.Strike(ctx, m.cfg.Instrument.Strings[g[0]].ID); err != nil {
			if ctx.Err() != nil {
				return false
			}
			failed++
			first = cmpErr(first, err)
			continue
		}
		select {
		case <-ctx.Done():
			return false
		case <-m.clock.After(listen):
		}
	}
	if failed > 0 {
		d := fmt.Sprintf("exciter failed on %d of %d strikes this round: %v", failed, len(groups), first)
		m.log.Error().Msg(d)
		m.sendEvent(Entry{Kind: KindFault, Reason: "exciter", Detail: d})
	}
	return true
}

func cmpErr(first, err error) error {
	if first != nil {
		return first
	}
	return err
}

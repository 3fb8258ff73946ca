package monitor

import (
	"fmt"
	"math"
	"time"
)

// clockJumpS is how far the wall clock may move against the monotonic clock before
// the move is journaled as a jump (boards without a real-time clock jump when NTP
// syncs; engineering default).
const clockJumpS = 2.0

// liveClock holds the anchors of the LiveClock time base.
type liveClock struct {
	monoStart time.Time // clock.Now() at start; carries the monotonic reading on a real clock
	jumpS     float64   // wall-clock jumps already journaled
	checkedS  float64   // sample time of the last jump check
}

// seconds returns the sample time of frame on the run timeline.
func (m *Monitor) seconds(frame int64) float64 { return float64(frame) / m.rateHz }

// stamp sets e's Time and MonoS for an event at sample time tS. With LiveClock the
// wall and monotonic clocks are read now and moved back by how far tS lies behind the
// analysis position (the analysis window delays a note by about a second).
func (m *Monitor) stamp(e *Entry, tS float64) {
	if !m.opts.LiveClock {
		e.Time = m.opts.StartTime.Add(durationS(tS))
		e.MonoS = tS
		return
	}
	lag := math.Max(m.seconds(m.frame)-tS, 0)
	e.Time = m.clock.Now().Round(0).Add(-durationS(lag))
	e.MonoS = math.Max(m.clock.Since(m.clk.monoStart).Seconds()-lag, 0)
}

// checkClock compares the wall clock with the monotonic clock about once a second of
// audio and journals a jump.
func (m *Monitor) checkClock() {
	now := m.seconds(m.frame)
	if !m.opts.LiveClock || now-m.clk.checkedS < 1 {
		return
	}
	m.clk.checkedS = now
	mono := m.clock.Since(m.clk.monoStart).Seconds()
	wall := m.clock.Now().Round(0).Sub(m.opts.StartTime).Seconds()
	jump := wall - mono - m.clk.jumpS
	if math.Abs(jump) < clockJumpS {
		return
	}
	m.clk.jumpS += jump
	e := m.newEntry(KindClock, now)
	e.ClockJumpS = jump
	e.Detail = fmt.Sprintf("wall clock moved %+.1f s against the monotonic clock; drift rates use the sample clock", jump)
	m.log.Warn().Float64("clock_jump_s", jump).Msg("wall clock jumped")
	m.emit(e)
}

func durationS(s float64) time.Duration { return time.Duration(math.Round(s * 1e9)) }

// quietHours is a daily span of local time without exciter rounds.
type quietHours struct {
	set        bool
	from, till int // minutes after midnight; till < from wraps past midnight
}

// parseQuietHours reads "HH:MM-HH:MM"; "" means none.
func parseQuietHours(s string) (quietHours, error) {
	if s == "" {
		return quietHours{}, nil
	}
	var h1, m1, h2, m2 int
	n, err := fmt.Sscanf(s, "%d:%d-%d:%d", &h1, &m1, &h2, &m2)
	if err != nil || n != 4 || h1 > 23 || h2 > 23 || m1 > 59 || m2 > 59 || h1 < 0 || h2 < 0 || m1 < 0 || m2 < 0 {
		return quietHours{}, fmt.Errorf("monitor: exciter quiet hours %q: want HH:MM-HH:MM in local time, e.g. 22:00-06:30", s)
	}
	return quietHours{set: true, from: h1*60 + m1, till: h2*60 + m2}, nil
}

// contains reports whether local time t falls in the quiet hours.
func (q quietHours) contains(t time.Time) bool {
	if !q.set {
		return false
	}
	min := t.Hour()*60 + t.Minute()
	if q.from <= q.till {
		return min >= q.from && min < q.till
	}
	return min >= q.from || min < q.till
}

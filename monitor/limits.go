package monitor

import (
	"time"

	"taut/monitor/instrument"
)

// limits are the Listen thresholds in the units the tracker works in, with the
// documented defaults standing in for zero fields (a Config built in code rather than
// loaded has none filled in).
type limits struct {
	steadyCentsPerHour float64
	toleranceCents     float64
	marginWarn         float64
	marginAlarm        float64
	jumpCents          float64
	partialShift       float64
	rateWindowS        float64
	quietAfterS        float64
	matchCents         float64
	ambiguousCents     float64
	exciteListenS      float64
}

func limitsFrom(cfg *instrument.Config) limits {
	l := cfg.Listen
	return limits{
		steadyCentsPerHour: orDefault(l.SteadyCentsPerHour, 1),
		toleranceCents:     orDefault(l.ToleranceCents, 3),
		marginWarn:         orDefault(l.MarginWarn, 0.70),
		marginAlarm:        orDefault(l.MarginAlarm, 0.85),
		jumpCents:          orDefault(l.JumpCents, 25),
		partialShift:       orDefault(l.PartialShift, 0.25),
		rateWindowS:        seconds(l.RateWindow, 2*time.Hour),
		quietAfterS:        seconds(l.QuietAfter, 45*time.Minute),
		matchCents:         orDefault(l.MatchCents, 60),
		ambiguousCents:     orDefault(l.AmbiguousCents, 10),
		exciteListenS:      seconds(cfg.Exciter.Listen, 3*time.Second),
	}
}

func orDefault(v, def float64) float64 {
	if v <= 0 {
		return def
	}
	return v
}

func seconds(d, def time.Duration) float64 {
	if d <= 0 {
		d = def
	}
	return d.Seconds()
}

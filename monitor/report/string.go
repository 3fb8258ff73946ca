package report

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strings"

	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/settle"
)

// Problem flags: the injected-fault kinds the report must surface. Anything else a
// string shows is a warning, not a flag.
const (
	FlagMargin   = "margin"   // tension over the alarm share of breaking load
	FlagSlip     = "slip"     // a sudden drop that is not creep (slipped pin, bearing point)
	FlagPartials = "partials" // partials shifted against the string's history
)

// Warnings: worth a look, not a fault.
const (
	WarnMargin    = "margin-warn" // over the warning share of breaking load
	WarnOffTarget = "off-target"  // further from target than the tolerance
	WarnSettling  = "settling"    // drifting faster than the steady threshold
	WarnOutlier   = "outlier"     // single readings off the trend were left out
	WarnNotHeard  = "not-heard"   // in the config, never heard
	WarnUnknown   = "not-in-config"
)

// Attention classes, most urgent first.
const (
	ClassAlarm = iota + 1
	ClassPitch
	ClassSettling
	ClassFine
)

// String is one string's part of the report.
type String struct {
	ID, Note, Section string
	TargetHz          float64
	Wound, Bass       bool
	InConfig          bool
	BreakingN         float64 // from the config; 0 without one
	Basis             string  // strength basis of the margin

	Readings    int
	State       monitor.State // the listener's, after the last entry about this string ("at dawn")
	StateReason string
	// LastCents and ListenerRate are the listener's last reading and its drift rate
	// then: a robust slope over its rate window, not the fit's rate (NaN before the
	// listener had one).
	LastCents    float64
	ListenerRate float64
	// PullUpNote says why the next pull-up is not the fit's plain suggestion (the
	// listener's verdict differs from the fit's), or "".
	PullUpNote string
	Points     []settle.Point
	Analysis   settle.Analysis
	Analysed   bool
	TensionN   float64 // latest reading
	Margin     float64 // latest reading
	MaxMargin  float64 // highest over the night
	BEarly     float64 // median fitted B of the first quarter of readings
	BLate      float64 // median fitted B of the last quarter

	Flags    []string
	Warnings []string
	Reasons  []string // sentences for people, most important first
	Class    int      // attention class
	Rank     int      // 1 = look at first

	states    []stateSeen
	alarms    map[string]alarmSeen
	firstSeen int
	hz        []float64
	bs        []float64
	lastSeq   uint64
}

type alarmSeen struct {
	hours float64
	entry monitor.Entry
}

// stateSeen is a state change entry with its place on the report's time axis.
type stateSeen struct {
	entry monitor.Entry
	hours float64
}

// at formats a time on the report's axis for people ("hour 6.5 (01:30)").
type at func(hours float64) string

func (s *String) setConfig(cs *instrument.String) {
	s.InConfig = true
	s.Note, s.Section, s.TargetHz = cs.Note, cs.Section, cs.TargetHz
	s.Wound = cs.Phys.Wound()
	s.Bass = s.Wound || isBassSection(cs.Section)
	if cs.Phys.Core.Material != nil && cs.Phys.Core.DiameterM > 0 {
		s.BreakingN = cs.Phys.BreakingLoad()
		s.Basis = cs.Phys.Core.Material.Basis
	}
}

func (s *String) add(e monitor.Entry, hours float64) {
	s.Readings++
	s.Points = append(s.Points, settle.Point{Hours: hours, Cents: e.Cents})
	// The string's pitch is its first partial's (what a tuner hears); older journals
	// without it fall back to the fitted f0.
	if hz := cmp.Or(e.FundamentalHz, e.F0Hz); hz > 0 {
		s.hz = append(s.hz, hz)
	}
	s.bs = append(s.bs, e.Inharmonicity)
	s.TensionN, s.Margin = e.TensionN, e.Margin
	s.MaxMargin = math.Max(s.MaxMargin, e.Margin)
	s.noteState(e, hours)
}

// noteState keeps the state of the latest entry and remembers every alarm cause seen.
func (s *String) noteState(e monitor.Entry, hours float64) {
	if e.Seq >= s.lastSeq {
		s.lastSeq, s.State, s.StateReason = e.Seq, e.State, e.Reason
		if e.Kind == monitor.KindReading {
			s.LastCents, s.ListenerRate = e.Cents, e.RateCentsHour
			if e.Reason == "few-readings" {
				s.ListenerRate = math.NaN()
			}
		}
	}
	if e.State != monitor.Alarm {
		return
	}
	if s.alarms == nil {
		s.alarms = map[string]alarmSeen{}
	}
	for _, why := range strings.Split(e.Reason, ",") {
		if _, ok := s.alarms[why]; !ok && why != "" {
			s.alarms[why] = alarmSeen{hours: hours, entry: e}
		}
	}
}

func (s *String) medianHz() float64 {
	if len(s.hz) == 0 {
		return math.Inf(1)
	}
	return settle.Median(s.hz)
}

// analyse runs the settling analysis and sets flags, warnings, reasons and class.
func (s *String) analyse(l Limits, haveConfig bool, when at) {
	for _, st := range s.states {
		s.noteState(st.entry, st.hours)
	}
	if !s.InConfig && len(s.hz) > 0 {
		s.Bass = s.medianHz() < 131 // below C3: treat as bass for the trade share
	}
	if len(s.Points) > 0 {
		an, err := settle.Analyze(s.Points, settleOptions(l, s.Bass))
		s.Analysis, s.Analysed = an, err == nil
	}
	s.BEarly, s.BLate = quarterMedians(s.bs)
	s.judge(l, haveConfig, when)
}

// quarterMedians returns the median of the first and of the last quarter of xs
// (at least one value each), ignoring zeros (no B fitted).
func quarterMedians(xs []float64) (early, late float64) {
	var v []float64
	for _, x := range xs {
		if x > 0 {
			v = append(v, x)
		}
	}
	if len(v) == 0 {
		return math.NaN(), math.NaN()
	}
	q := max(len(v)/4, 1)
	return settle.Median(v[:q]), settle.Median(v[len(v)-q:])
}

func (s *String) flag(f, reason string) {
	s.Flags = append(s.Flags, f)
	s.Reasons = append(s.Reasons, reason)
}

func (s *String) warn(w, reason string) {
	s.Warnings = append(s.Warnings, w)
	if reason != "" {
		s.Reasons = append(s.Reasons, reason)
	}
}

// judge decides flags and warnings. Flags: margin over the alarm share (measured or
// alarmed by the listener), a slip (a step found by the analysis or a jump alarm of
// the listener), a partial shift (alarmed by the listener).
func (s *String) judge(l Limits, haveConfig bool, when at) {
	s.judgeMargin(l)
	s.judgeSlip(when)
	s.judgePartials(when)
	if haveConfig && !s.InConfig {
		s.warn(WarnUnknown, "heard but not in the config: no target or string data")
	}
	if s.Readings == 0 {
		s.warn(WarnNotHeard, "never heard during the night")
		s.Class = ClassFine
		return
	}
	s.judgePitch(l)
}

func (s *String) judgeMargin(l Limits) {
	basis := s.Basis
	if basis == "" {
		basis = "basis as recorded by the listener"
	}
	_, alarmed := s.alarms["margin"]
	switch {
	case s.MaxMargin > l.MarginAlarm || alarmed:
		s.flag(FlagMargin, fmt.Sprintf("tension reached %.0f %% of breaking load (alarm above %.0f %%; %s)",
			100*s.MaxMargin, 100*l.MarginAlarm, basis))
	case s.MaxMargin > l.MarginWarn:
		s.warn(WarnMargin, fmt.Sprintf("tension reached %.0f %% of breaking load (warning above %.0f %%; %s)",
			100*s.MaxMargin, 100*l.MarginWarn, basis))
	}
}

func (s *String) judgeSlip(when at) {
	var steps []string
	for _, e := range s.Analysis.Events {
		if e.Kind == settle.EventStep {
			steps = append(steps, fmt.Sprintf("%.1f cents at %s", -e.Cents, when(e.Hours)))
		}
	}
	j, jumped := s.alarms["jump"]
	switch {
	case len(steps) > 0:
		s.flag(FlagSlip, "sudden drop of "+strings.Join(steps, ", ")+
			" that creep does not explain: a slipped pin, loop or bearing point?")
	case jumped:
		s.flag(FlagSlip, fmt.Sprintf("the listener raised a jump alarm at %s (%.1f cents from target)",
			when(j.hours), j.entry.Cents))
	}
	if slices.Contains(s.Flags, FlagSlip) {
		s.slipSuggestion()
	}
	outliers := 0
	for _, e := range s.Analysis.Events {
		if e.Kind == settle.EventOutlier {
			outliers++
		}
	}
	if outliers > 0 {
		s.warn(WarnOutlier, fmt.Sprintf("%d reading(s) off the trend left out of the fit", outliers))
	}
}

// slipSuggestion replaces the pull-up for a slipped string: a slip is not stretch,
// so no fall-back share applies; find the cause first, then bring it back to pitch.
func (s *String) slipSuggestion() {
	g := &s.Analysis.Suggest
	if !s.Analysed || !finite(s.Analysis.CentsNow) {
		return
	}
	g.RaiseCents, g.AimCents, g.Share = -s.Analysis.CentsNow, 0, 0
	g.Basis = "after a slip: check and re-seat the pin, loop or bearing point first, then retune to pitch " +
		"(no fall-back share: a slip is not stretch)"
}

func (s *String) judgePartials(when at) {
	p, ok := s.alarms["partials"]
	if !ok {
		return
	}
	msg := fmt.Sprintf("partials shifted (listener alarm at %s)", when(p.hours))
	if finite(s.BEarly) && finite(s.BLate) && s.BEarly > 0 {
		msg += fmt.Sprintf(": inharmonicity B went from %.3g to %.3g (%+.0f %%)", s.BEarly, s.BLate,
			100*(s.BLate/s.BEarly-1))
	}
	s.flag(FlagPartials, msg+"; a loosening winding or a loose bridge pin?")
}

// judgePitch sets the off-target and settling warnings and the attention class. The
// fit and the listener may disagree near a threshold (the fit's rate is the model's
// slope now, the listener's a robust slope over its window; the fit's pitch is the
// model's, the listener's its last reading): a string either calls off-target or
// settling is treated so, and the reason says whose verdict it is.
func (s *String) judgePitch(l Limits) {
	an := &s.Analysis
	fitOff := finite(an.CentsNow) && math.Abs(an.CentsNow) > l.ToleranceCents
	listenerOff := s.State == monitor.OffTarget
	switch {
	case fitOff:
		s.warn(WarnOffTarget, fmt.Sprintf("%+.1f cents from target by the fit (tolerance ±%.0f)", an.CentsNow, l.ToleranceCents))
	case listenerOff:
		s.warn(WarnOffTarget, fmt.Sprintf("the listener calls it off-target: its last reading is %+.2f cents from target "+
			"(tolerance ±%s), the fit puts it at %+.2f now", s.LastCents, trimNum(l.ToleranceCents), an.CentsNow))
	}
	listenerSettling := s.State == monitor.Settling
	switch {
	case !an.Steady:
		s.warn(WarnSettling, settlingText(an, l)+s.listenerRateText(l))
	case listenerSettling:
		s.warn(WarnSettling, s.listenerSettlingText(l))
	}
	s.reconcilePullUp(l)
	switch {
	case len(s.Flags) > 0:
		s.Class = ClassAlarm
	case fitOff || listenerOff:
		s.Class = ClassPitch
	case !an.Steady || listenerSettling:
		s.Class = ClassSettling
	default:
		s.Class = ClassFine
	}
}

func settlingText(an *settle.Analysis, l Limits) string {
	if !finite(an.RateNow) {
		return "too few readings for a drift rate"
	}
	txt := fmt.Sprintf("the fit still drifts %+.1f cents/hour (steady under %.1f)", an.RateNow, l.SteadyCentsPerHour)
	switch h := an.HoursToSteady; {
	case math.IsInf(h, 1):
		txt += "; not steady by its straight-line trend"
	case finite(h):
		txt += fmt.Sprintf("; steady in about %.0f h", math.Max(h, 1))
	}
	return txt
}

// listenerRateText adds the listener's rate when it is known.
func (s *String) listenerRateText(l Limits) string {
	if !finite(s.ListenerRate) {
		return ""
	}
	return fmt.Sprintf("; the listener's %s slope: %+.2f cents/hour", windowText(l), s.ListenerRate)
}

// listenerSettlingText explains a string the listener still calls settling while the
// fit's rate is already under the threshold.
func (s *String) listenerSettlingText(l Limits) string {
	var why string
	switch s.StateReason {
	case "pull-up":
		why = "it was pulled up recently"
	case "few-readings":
		why = "it has too few readings for its drift rate yet"
	default:
		why = fmt.Sprintf("%s slope %+.2f cents/hour, not under %s", windowText(l), s.ListenerRate,
			trimNum(l.SteadyCentsPerHour))
	}
	return fmt.Sprintf("the listener still calls it settling (%s); the fit's rate now, %+.2f, is under it: "+
		"steady soon", why, s.Analysis.RateNow)
}

func windowText(l Limits) string {
	return trimNum(l.ListenerRateWindowH) + "-hour"
}

// reconcilePullUp makes the next pull-up agree with the listener's off-target: the
// fit suggests from its fitted pitch now, the listener judges its last reading. When
// the listener calls the string off-target but the fitted pitch is inside the
// tolerance, the suggestion is made from the last reading (same fall-back share), and
// PullUpNote says so.
func (s *String) reconcilePullUp(l Limits) {
	g := &s.Analysis.Suggest
	if s.State != monitor.OffTarget || !s.Analysed || g.RaiseCents != 0 || !finite(s.LastCents) {
		return
	}
	c, fit := s.LastCents, s.Analysis.CentsNow
	switch {
	case c < -l.ToleranceCents:
		g.RaiseCents = -c / (1 - g.Share)
	case c > l.ToleranceCents:
		g.RaiseCents = -c
	default:
		s.PullUpNote = fmt.Sprintf("none: the listener called it off-target, but its last reading (%+.2f cents) and "+
			"the fit (%+.2f) are within this report's ±%s; the listener may have judged by another tolerance",
			c, fit, trimNum(l.ToleranceCents))
		s.Reasons = append(s.Reasons, "next pull-up "+s.PullUpNote)
		return
	}
	g.AimCents = c + g.RaiseCents
	s.PullUpNote = fmt.Sprintf("from the listener's last reading (%+.2f cents, outside ±%s); the fit puts the string "+
		"at %+.2f now, inside", c, trimNum(l.ToleranceCents), fit)
	g.Basis = s.PullUpNote + "; " + g.Basis
	s.Reasons = append(s.Reasons, "next pull-up "+s.PullUpNote)
}

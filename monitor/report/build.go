package report

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strings"
	"time"

	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/settle"
	"taut/monitor/tension"
)

// Options describe where the entries came from and how to judge them.
type Options struct {
	Config      *instrument.Config // nil: strings ordered by pitch, limits at their defaults
	JournalPath string             // shown in the report
	ReadSummary string             // the journal reader's summary (bad and torn lines)
	ReadClean   bool               // the reader skipped nothing
	// AsOf is the moment the report speaks for; zero means the time of the journal's
	// last entry. The report is deliberately not stamped with the time it is written:
	// the same journal then always gives byte-for-byte the same files.
	AsOf time.Time
}

// Limits are the thresholds the report judges by (from the config's listen section,
// or the documented defaults).
type Limits struct {
	SteadyCentsPerHour float64 `json:"steady_cents_per_hour"` // engineering default 1
	ToleranceCents     float64 `json:"tolerance_cents"`       // default 3
	MarginWarn         float64 `json:"margin_warn"`           // 0.70, trade figure (reference-values §4.1)
	MarginAlarm        float64 `json:"margin_alarm"`          // 0.85
	// CautionMargin is min(MarginWarn, tension.CautionFloor): above it the report
	// leads with the safety caution. A config may warn earlier, never later.
	CautionMargin float64 `json:"caution_margin"`
	// ListenerRateWindowH is the listener's drift-rate window (listen.rate_window,
	// default 2 h): its states come from a robust slope over this window.
	ListenerRateWindowH float64 `json:"listener_rate_window_h"`
}

// Report is everything the morning report shows, computed once from the entries.
type Report struct {
	Instrument  string
	ConfigPath  string
	JournalPath string
	ReadSummary string
	ReadClean   bool
	AsOf        time.Time // the moment the report speaks for: the journal's last entry unless set
	Origin      time.Time // time of the first reading: hour 0 of every plot
	End         time.Time // time of the last reading
	Limits      Limits
	Strings     []*String // scale order
	Readings    []Reading // every reading, in journal order
	Night       []Happening
	Load        []LoadPoint
	Bases       []string // strength bases of the margins shown
	Entries     int
	// JournalStrings counts the strings the journal has entries for; NotInConfig
	// lists those the config does not know, in the order they were first heard.
	JournalStrings int
	NotInConfig    []string
}

// Reading is one KindReading entry with its place on the report's time axis.
type Reading struct {
	monitor.Entry
	Hours float64 // since Origin, from the run's monotonic clock
}

// Happening is a journal entry about the night rather than one string: a gap in the
// audio, a clock jump, a fault, a start or stop of the listener.
type Happening struct {
	Time   time.Time
	Hours  float64
	Kind   monitor.Kind
	Reason string
	Detail string
}

// LoadPoint is the instrument's total tension at a moment: the sum of every string's
// latest reading.
type LoadPoint struct {
	Hours  float64
	TotalN float64
}

// Build analyses the entries. Times on the report's axis come from each run's
// monotonic clock (MonoS) anchored at the wall time of the run's first entry, so a
// wall clock stepped during a run does not bend the curves; runs are placed by their
// wall times.
func Build(entries []monitor.Entry, opts Options) *Report {
	r := &Report{
		JournalPath: opts.JournalPath, ReadSummary: opts.ReadSummary, ReadClean: opts.ReadClean,
		Limits: limitsOf(opts.Config), Entries: len(entries),
	}
	if opts.Config != nil {
		r.Instrument, r.ConfigPath = opts.Config.Instrument.Name, opts.Config.Path
	}
	clock := newRunClock(entries)
	r.Origin, r.End = clock.origin, clock.end
	r.AsOf = opts.AsOf
	if r.AsOf.IsZero() {
		r.AsOf = clock.last
	}
	byID := map[string]*String{}
	for _, e := range entries {
		h := clock.hours(&e)
		switch e.Kind {
		case monitor.KindReading:
			r.Readings = append(r.Readings, Reading{Entry: e, Hours: h})
			str := r.stringFor(byID, e.String)
			str.add(e, h)
		case monitor.KindState:
			str := r.stringFor(byID, e.String)
			str.states = append(str.states, stateSeen{entry: e, hours: h})
		case monitor.KindGap, monitor.KindClock, monitor.KindFault, monitor.KindStart, monitor.KindStop:
			r.Night = append(r.Night, Happening{Time: e.Time, Hours: h, Kind: e.Kind, Reason: e.Reason, Detail: e.Detail})
		}
	}
	r.placeStrings(opts.Config, byID)
	for _, s := range r.Strings {
		s.analyse(r.Limits, opts.Config != nil, r.clockText)
	}
	r.Load = totalLoad(r.Readings)
	r.Bases = bases(r.Strings)
	rankAttention(r.Strings)
	return r
}

func limitsOf(cfg *instrument.Config) Limits {
	l := Limits{SteadyCentsPerHour: 1, ToleranceCents: 3, MarginWarn: 0.70, MarginAlarm: 0.85,
		ListenerRateWindowH: 2}
	if cfg != nil {
		set := func(dst *float64, v float64) {
			if v > 0 {
				*dst = v
			}
		}
		set(&l.SteadyCentsPerHour, cfg.Listen.SteadyCentsPerHour)
		set(&l.ToleranceCents, cfg.Listen.ToleranceCents)
		set(&l.MarginWarn, cfg.Listen.MarginWarn)
		set(&l.MarginAlarm, cfg.Listen.MarginAlarm)
		set(&l.ListenerRateWindowH, cfg.Listen.RateWindow.Hours())
	}
	l.CautionMargin = math.Min(l.MarginWarn, tension.CautionFloor)
	return l
}

func (r *Report) stringFor(byID map[string]*String, id string) *String {
	s, ok := byID[id]
	if !ok {
		s = &String{ID: id, firstSeen: len(byID)}
		byID[id] = s
	}
	return s
}

// placeStrings orders the strings: the config's scale order (strings never heard
// are listed too, as quiet), then any string the config does not know. Without a
// config, by median pitch, lowest first, or by first appearance when no pitch is known.
// It also counts the journal's strings and notes those the config does not know.
func (r *Report) placeStrings(cfg *instrument.Config, byID map[string]*String) {
	var heard []*String
	for id, s := range byID {
		if id != "" {
			heard = append(heard, s)
		}
	}
	r.JournalStrings = len(heard)
	seen := map[string]bool{}
	if cfg != nil {
		for i := range cfg.Instrument.Strings {
			cs := &cfg.Instrument.Strings[i]
			s := r.stringFor(byID, cs.ID)
			s.setConfig(cs)
			r.Strings = append(r.Strings, s)
			seen[cs.ID] = true
		}
	}
	var rest []*String
	for id, s := range byID {
		if !seen[id] && id != "" {
			rest = append(rest, s)
		}
	}
	slices.SortFunc(rest, func(a, b *String) int {
		if c := cmp.Compare(a.medianHz(), b.medianHz()); c != 0 {
			return c
		}
		return cmp.Compare(a.firstSeen, b.firstSeen)
	})
	r.Strings = append(r.Strings, rest...)
	if cfg == nil {
		return
	}
	slices.SortFunc(heard, func(a, b *String) int { return cmp.Compare(a.firstSeen, b.firstSeen) })
	for _, s := range heard {
		if !seen[s.ID] {
			r.NotInConfig = append(r.NotInConfig, s.ID)
		}
	}
}

// configMismatchShare is the share of the journal's strings a config may not know
// before the report warns that it is probably the wrong config: beyond it, targets,
// thresholds and advice are likely wrong for most strings.
const configMismatchShare = 0.25

// ConfigWarning returns a warning for people when more than a quarter of the
// journal's strings are not in the config (probably the wrong --config), or "".
func (r *Report) ConfigWarning() string {
	n := len(r.NotInConfig) // only ever set when a config was given
	if r.JournalStrings == 0 || float64(n) <= configMismatchShare*float64(r.JournalStrings) {
		return ""
	}
	names := strings.Join(r.NotInConfig[:min(n, 5)], ", ")
	if n > 5 {
		names += fmt.Sprintf(" and %d more", n-5)
	}
	cfg := r.ConfigPath
	if cfg == "" {
		cfg = "the config"
	}
	return fmt.Sprintf("%s does not know %d of the %d strings in the journal (%.0f %%): %s. "+
		"Their targets, string data, thresholds and advice are missing or wrong; is it the config "+
		"of this instrument?", cfg, n, r.JournalStrings, 100*float64(n)/float64(r.JournalStrings), names)
}

// clockText places a time on the report's axis for people: hours since the first
// reading and the clock time, e.g. "hour 6.5 (01:30)".
func (r *Report) clockText(hours float64) string {
	if !finite(hours) {
		return "an unknown time"
	}
	return fmt.Sprintf("hour %.1f (%s)", hours, r.Origin.Add(time.Duration(hours*float64(time.Hour))).Format("15:04"))
}

// runClock maps entries onto one time axis from each run's monotonic clock.
type runClock struct {
	anchor            map[string]time.Time // wall time of MonoS = 0 of each run
	origin, end, last time.Time
}

func newRunClock(entries []monitor.Entry) *runClock {
	c := &runClock{anchor: map[string]time.Time{}}
	for _, e := range entries {
		if _, ok := c.anchor[e.Run]; !ok {
			c.anchor[e.Run] = e.Time.Add(-time.Duration(e.MonoS * float64(time.Second)))
		}
		t := c.at(&e)
		if e.Kind == monitor.KindReading {
			if c.origin.IsZero() || t.Before(c.origin) {
				c.origin = t
			}
			if t.After(c.end) {
				c.end = t
			}
		}
		if e.Time.After(c.last) {
			c.last = e.Time
		}
	}
	if c.origin.IsZero() && len(entries) > 0 {
		c.origin = c.at(&entries[0])
	}
	return c
}

func (c *runClock) at(e *monitor.Entry) time.Time {
	return c.anchor[e.Run].Add(time.Duration(e.MonoS * float64(time.Second)))
}

func (c *runClock) hours(e *monitor.Entry) float64 {
	return c.at(e).Sub(c.origin).Hours()
}

// totalLoad sums each string's latest tension after every reading, starting once
// every string heard that night has been heard at least once.
func totalLoad(rs []Reading) []LoadPoint {
	all := map[string]bool{}
	for _, r := range rs {
		if r.TensionN > 0 {
			all[r.String] = true
		}
	}
	latest := map[string]float64{}
	var out []LoadPoint
	for _, r := range rs {
		if r.TensionN <= 0 {
			continue
		}
		latest[r.String] = r.TensionN
		if len(latest) < len(all) {
			continue
		}
		var sum float64
		for _, t := range latest {
			sum += t
		}
		out = append(out, LoadPoint{Hours: r.Hours, TotalN: sum})
	}
	slices.SortStableFunc(out, func(a, b LoadPoint) int { return cmp.Compare(a.Hours, b.Hours) })
	return out
}

func bases(strs []*String) []string {
	var out []string
	for _, s := range strs {
		if s.Basis != "" && !slices.Contains(out, s.Basis) {
			out = append(out, s.Basis)
		}
	}
	return out
}

// settleOptions are the analysis options for one string: the report's limits and the
// trade fall-back share of its register.
func settleOptions(l Limits, bass bool) settle.Options {
	o := settle.Options{SteadyCentsPerHour: l.SteadyCentsPerHour, ToleranceCents: l.ToleranceCents,
		TradeShare: settle.TradeShareTreble}
	if bass {
		o.TradeShare = settle.TradeShareBass
	}
	return o
}

func isBassSection(section string) bool {
	return strings.Contains(strings.ToLower(section), "bass")
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

package report

import (
	"encoding/json"
	"io"
	"math"
	"time"

	"taut/monitor/settle"
	"taut/monitor/tension"
)

// summaryFile is summary.json. Numbers are rounded to what the measurement supports;
// a figure that cannot be known (no rate from one reading, never steady by a straight
// line) is null with a note saying why.
type summaryFile struct {
	Instrument  string          `json:"instrument,omitempty"`
	Config      string          `json:"config,omitempty"`
	Journal     string          `json:"journal"`
	AsOf        time.Time       `json:"as_of"` // the journal's last entry, not the time of writing
	ConfigWarn  string          `json:"config_warning,omitempty"`
	NotInConfig []string        `json:"not_in_config,omitempty"`
	First       time.Time       `json:"first_reading"`
	Last        time.Time       `json:"last_reading"`
	Limits      Limits          `json:"limits"`
	Readings    int             `json:"readings"`
	ReadClean   bool            `json:"journal_clean"`
	Flagged     []string        `json:"flagged"`
	Attention   []string        `json:"attention"`
	Strings     []stringSummary `json:"strings"`
	TotalLoadN  *float64        `json:"total_load_n"`
	Caution     string          `json:"caution,omitempty"`
	MarginBasis []string        `json:"margin_basis"`
}

type stringSummary struct {
	ID                string        `json:"id"`
	Note              string        `json:"note,omitempty"`
	Section           string        `json:"section,omitempty"`
	TargetHz          *float64      `json:"target_hz"`
	State             string        `json:"state"` // the listener's, at its last entry
	StateReason       string        `json:"state_reason,omitempty"`
	LastCents         *float64      `json:"listener_cents_last"`
	ListenerRate      *float64      `json:"listener_rate_cents_per_hour"`
	FitSteady         bool          `json:"fit_steady"`
	Flags             []string      `json:"flags"`
	Warnings          []string      `json:"warnings"`
	Reasons           []string      `json:"reasons"`
	Rank              int           `json:"attention_rank"`
	Readings          int           `json:"readings"`
	CentsNow          *float64      `json:"cents_now"`
	CentsNowSE        *float64      `json:"cents_now_se"`
	Rate              *float64      `json:"rate_cents_per_hour"`
	RateSE            *float64      `json:"rate_se"`
	HoursToSteady     *float64      `json:"hours_to_steady"`
	SteadyNote        string        `json:"hours_to_steady_note,omitempty"`
	Cents24h          *float64      `json:"cents_in_24h"`
	TensionN          *float64      `json:"tension_n"`
	Margin            *float64      `json:"margin"`
	MaxMargin         *float64      `json:"max_margin"`
	BreakingN         *float64      `json:"breaking_load_n"`
	FitModel          string        `json:"fit_model"`
	FitParams         []fitParam    `json:"fit_params"`
	ResidualSD        *float64      `json:"fit_residual_sd_cents"`
	PullUps           []eventOut    `json:"pull_ups"`
	Steps             []eventOut    `json:"steps"`
	SuggestedRaise    *float64      `json:"suggested_pull_up_cents"`
	SuggestedAim      *float64      `json:"suggested_aim_cents"`
	FallBackShare     *float64      `json:"fall_back_share"`
	FallBackBasis     string        `json:"fall_back_basis,omitempty"`
	PullUpNote        string        `json:"pull_up_note,omitempty"`
	InharmonicityFrom *float64      `json:"inharmonicity_early"`
	InharmonicityTo   *float64      `json:"inharmonicity_late"`
	Segments          []segmentOut  `json:"segments"`
	Alternatives      []alternative `json:"other_models,omitempty"`
}

type fitParam struct {
	Name  string   `json:"name"`
	Value *float64 `json:"value"`
	SE    *float64 `json:"se"`
}

type eventOut struct {
	Hours *float64 `json:"hours"`
	Cents *float64 `json:"cents"`
}

type segmentOut struct {
	StartHours *float64 `json:"start_hours"`
	EndHours   *float64 `json:"end_hours"`
	Rise       *float64 `json:"rise_cents"`
	Fall       *float64 `json:"fall_cents"`
	Share      *float64 `json:"fall_share"`
}

type alternative struct {
	Model string   `json:"model"`
	AICc  *float64 `json:"aicc"`
}

// num rounds x to the given decimals, or nil when it is not a finite number.
func num(x float64, decimals int) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	p := math.Pow(10, float64(decimals))
	v := math.Round(x*p) / p
	if v == 0 {
		v = 0 // no "-0"
	}
	return &v
}

// WriteJSON writes summary.json.
func (r *Report) WriteJSON(w io.Writer) error {
	f := summaryFile{
		Instrument: r.Instrument, Config: r.ConfigPath, Journal: r.JournalPath, AsOf: r.AsOf,
		ConfigWarn: r.ConfigWarning(), NotInConfig: r.NotInConfig,
		First: r.Origin, Last: r.End, Limits: r.Limits, Readings: len(r.Readings), ReadClean: r.ReadClean,
		Flagged: []string{}, Attention: []string{}, MarginBasis: r.Bases,
	}
	if f.MarginBasis == nil {
		f.MarginBasis = []string{}
	}
	for _, s := range r.Flagged() {
		f.Flagged = append(f.Flagged, s.ID)
	}
	for _, s := range r.Attention() {
		f.Attention = append(f.Attention, s.ID)
	}
	if n := len(r.Load); n > 0 {
		f.TotalLoadN = num(r.Load[n-1].TotalN, 1)
	}
	if r.HighMargin() {
		f.Caution = tension.Caution
	}
	for _, s := range r.Strings {
		f.Strings = append(f.Strings, summarise(s))
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(f)
}

func summarise(s *String) stringSummary {
	an := &s.Analysis
	out := stringSummary{
		ID: s.ID, Note: s.Note, Section: s.Section, TargetHz: positive(s.TargetHz, 3),
		State: s.State.String(), StateReason: s.StateReason,
		Flags: nonNil(s.Flags), Warnings: nonNil(s.Warnings), Reasons: nonNil(s.Reasons), Rank: s.Rank,
		Readings: s.Readings, FitModel: string(settle.ModelNone),
		TensionN: positive(s.TensionN, 1), Margin: positive(s.Margin, 4), MaxMargin: positive(s.MaxMargin, 4),
		BreakingN: positive(s.BreakingN, 1), InharmonicityFrom: num(s.BEarly, 7), InharmonicityTo: num(s.BLate, 7),
		FitParams: []fitParam{}, PullUps: []eventOut{}, Steps: []eventOut{}, Segments: []segmentOut{},
	}
	if s.Readings > 0 {
		out.LastCents, out.ListenerRate = num(s.LastCents, 2), num(s.ListenerRate, 3)
	}
	if !s.Analysed {
		return out
	}
	out.FitSteady, out.PullUpNote = an.Steady, s.PullUpNote
	out.CentsNow, out.CentsNowSE = num(an.CentsNow, 2), num(an.CentsNowSE, 2)
	out.Rate, out.RateSE = num(an.RateNow, 3), num(an.RateSE, 3)
	out.HoursToSteady, out.SteadyNote = num(an.HoursToSteady, 1), steadyNote(an)
	out.Cents24h = num(an.CentsAhead, 1)
	out.FitModel, out.ResidualSD = string(an.Fit.Model), num(an.Fit.ResidualSD, 3)
	for i, n := range an.Fit.Names {
		out.FitParams = append(out.FitParams, fitParam{n, num(an.Fit.Params[i], 4), num(an.Fit.ParamSE[i], 4)})
	}
	for _, a := range an.Fit.Others {
		out.Alternatives = append(out.Alternatives, alternative{string(a.Model), num(a.AICc, 2)})
	}
	for _, e := range an.Events {
		ev := eventOut{num(e.Hours, 3), num(e.Cents, 2)}
		switch e.Kind {
		case settle.EventPullUp:
			out.PullUps = append(out.PullUps, ev)
		case settle.EventStep:
			out.Steps = append(out.Steps, ev)
		}
	}
	for _, g := range an.Segments {
		out.Segments = append(out.Segments, segmentOut{num(g.StartHours, 3), num(g.EndHours, 3),
			num(g.RiseCents, 2), num(g.FallCents, 2), num(g.FallShare, 3)})
	}
	out.SuggestedRaise, out.SuggestedAim = num(an.Suggest.RaiseCents, 1), num(an.Suggest.AimCents, 1)
	out.FallBackShare, out.FallBackBasis = num(an.Suggest.Share, 3), an.Suggest.Basis
	return out
}

func steadyNote(an *settle.Analysis) string {
	switch h := an.HoursToSteady; {
	case math.IsInf(h, 1):
		return "never by the straight-line trend"
	case math.IsNaN(h):
		return "unknown: too few readings"
	case h == 0:
		return "steady now"
	}
	return ""
}

func positive(x float64, decimals int) *float64 {
	if !(x > 0) {
		return nil
	}
	return num(x, decimals)
}

func nonNil(s []string) []string {
	if s == nil {
		return []string{}
	}
	return s
}

package report

import (
	_ "embed"
	"fmt"
	"html/template"
	"io"
	"math"
	"strconv"
	"strings"

	"taut/monitor/settle"
	"taut/monitor/tension"
)

// header holds the column titles the page's table and the terminal table share, so
// both say whose figure each column is and which threshold was used.
type header struct {
	State, ListenerRate, Cents, Rate, Steady, Ahead, Margin, PullUp string
}

func headerOf(l Limits) header {
	return header{
		State:        "state at dawn (listener)",
		ListenerRate: fmt.Sprintf("listener ¢/h (%s h)", trimNum(l.ListenerRateWindowH)),
		Cents:        "fit: cents now",
		Rate:         "fit: ¢/h now (± SE)",
		Steady:       fmt.Sprintf("fit: steady (< %s ¢/h) in", trimNum(l.SteadyCentsPerHour)),
		Ahead:        "fit: at +24 h",
		Margin:       "margin",
		PullUp:       "next pull-up",
	}
}

// trimNum writes a threshold as given: 1.5, 3, 0.25.
func trimNum(x float64) string { return strconv.FormatFloat(x, 'f', -1, 64) }

//go:embed report.html.tmpl
var pageTemplate string

//go:embed report.css
var pageCSS string

var page = template.Must(template.New("report").Funcs(template.FuncMap{
	"mul100": func(x float64) float64 { return 100 * x },
}).Parse(pageTemplate))

// view is what the template sees: text already formatted, plots already drawn.
type view struct {
	Title, Instrument, Journal, Config string
	Period, AsOf                       string
	ConfigWarning                      string
	Head                               header
	ReadSummary                        string
	ReadClean                          bool
	CSS                                template.CSS
	Caution                            string
	HighMargin                         bool
	Bases                              []string
	Limits                             Limits
	Attention                          []row
	Rows                               []row
	CentsPlot, MarginPlot, LoadPlot    template.HTML
	Panels                             []panel
	Night                              []string
	Flagged                            int
	Strings                            int // heard: in the journal
	Listed                             int // in the report: the config's and the journal's
	Readings                           int
	TradeNote                          string
}

type row struct {
	Rank                                  int
	ID, Note, Section, State, StateClass  string
	OtherNote                             string // the note when it differs from the id
	Class                                 string // attention label
	Flags, Warnings                       string
	Reasons                               []string
	ListenerRate                          string // the listener's robust slope at its last reading
	Cents, Rate, Steady, Ahead            string // the fit's
	Tension, Margin, Model, PullUp, Basis string
	Share                                 string // share of the raise expected back, e.g. "30 %"
}

type panel struct {
	ID, Heading, Caption string
	SVG                  template.HTML
}

// WriteHTML writes report.html: one self-contained page (inline CSS and SVG; no
// scripts, fonts or network).
func (r *Report) WriteHTML(w io.Writer) error {
	v := view{
		Title: "Settling report", Instrument: r.Instrument, Journal: r.JournalPath, Config: r.ConfigPath,
		Period: fmt.Sprintf("%s to %s (%.1f h)", r.Origin.Format("2006-01-02 15:04 MST"),
			r.End.Format("2006-01-02 15:04 MST"), r.End.Sub(r.Origin).Hours()),
		AsOf: r.AsOf.Format("2006-01-02 15:04 MST"), ConfigWarning: r.ConfigWarning(), Head: headerOf(r.Limits),
		ReadSummary: r.ReadSummary, ReadClean: r.ReadClean,
		CSS: template.CSS(pageCSS), Caution: tension.Caution, HighMargin: r.HighMargin(), Bases: r.Bases, Limits: r.Limits,
		CentsPlot: template.HTML(r.centsPlot()), MarginPlot: template.HTML(r.marginPlot()),
		LoadPlot: template.HTML(r.loadPlot()), Flagged: len(r.Flagged()), Strings: r.JournalStrings, Listed: len(r.Strings),
		Readings: len(r.Readings),
		TradeNote: "A raise falls back roughly 25–35 % on the treble bridge and about 10 % on the bass bridge " +
			"(reference-values §4.3: trade practice, not a measurement).",
	}
	if v.Instrument == "" {
		v.Instrument = "(no config given)"
	}
	for _, s := range r.Attention() {
		v.Attention = append(v.Attention, rowOf(s))
	}
	for _, s := range r.Strings {
		v.Rows = append(v.Rows, rowOf(s))
		if len(s.Points) > 0 {
			v.Panels = append(v.Panels, panel{ID: s.ID, Heading: panelHeading(s), Caption: panelCaption(s),
				SVG: template.HTML(r.stringPlot(s, r.hoursMax()))})
		}
	}
	for _, h := range r.Night {
		line := fmt.Sprintf("%s: %s", r.clockText(h.Hours), h.Kind)
		if h.Reason != "" {
			line += " — " + h.Reason
		}
		if h.Detail != "" {
			line += ": " + h.Detail
		}
		v.Night = append(v.Night, line)
	}
	return page.Execute(w, v)
}

var classNames = map[int]string{ClassAlarm: "ALARM", ClassPitch: "OFF TARGET", ClassSettling: "SETTLING", ClassFine: "ok"}

func rowOf(s *String) row {
	an := &s.Analysis
	r := row{
		Rank: s.Rank, ID: s.ID, Note: s.Note, Section: s.Section, State: s.State.String(),
		StateClass: "st-" + strings.ReplaceAll(s.State.String(), "-", ""), Class: classNames[s.Class],
		Flags: strings.Join(s.Flags, ", "), Warnings: strings.Join(s.Warnings, ", "), Reasons: s.Reasons,
		ListenerRate: "—", Cents: "—", Rate: "—", Steady: "—", Ahead: "—", Tension: "—", Margin: "—", Model: "—",
		PullUp: "—", Basis: s.Basis,
	}
	if s.Readings > 0 && finite(s.ListenerRate) {
		r.ListenerRate = fmt.Sprintf("%+.2f", s.ListenerRate)
	}
	if s.Note != s.ID {
		r.OtherNote = s.Note
	}
	if s.Class == ClassPitch && finite(s.Analysis.CentsNow) {
		r.Class = "SHARP"
		if s.Analysis.CentsNow < 0 {
			r.Class = "FLAT"
		}
	}
	if s.TensionN > 0 {
		r.Tension = fmt.Sprintf("%.0f N", s.TensionN)
	}
	if s.MaxMargin > 0 {
		r.Margin = fmt.Sprintf("%.0f %%", 100*s.Margin)
		if math.Round(100*s.MaxMargin) > math.Round(100*s.Margin) {
			r.Margin += fmt.Sprintf(" (max %.0f %%)", 100*s.MaxMargin)
		}
	}
	if !s.Analysed {
		return r
	}
	r.Cents = fmt.Sprintf("%+.1f", an.CentsNow)
	if finite(an.RateNow) {
		r.Rate = fmt.Sprintf("%+.2f", an.RateNow)
		if finite(an.RateSE) {
			r.Rate += fmt.Sprintf(" ± %.2f", an.RateSE)
		}
	}
	r.Steady = steadyText(an)
	if finite(an.CentsAhead) {
		r.Ahead = fmt.Sprintf("%+.1f", an.CentsAhead)
	}
	r.Model = string(an.Fit.Model)
	r.PullUp = pullUpText(an)
	switch {
	case strings.HasPrefix(s.PullUpNote, "none"):
		r.PullUp += " (see reasons)"
	case s.PullUpNote != "":
		r.PullUp += " (from last reading)"
	}
	if g := an.Suggest; g.RaiseCents > 0 && g.Share > 0 {
		r.Share = fmt.Sprintf("%.0f %%", 100*g.Share)
	}
	return r
}

func steadyText(an *settle.Analysis) string {
	switch h := an.HoursToSteady; {
	case math.IsNaN(h):
		return "unknown"
	case math.IsInf(h, 1):
		return "not by trend"
	case h == 0:
		return "now"
	case h > 999:
		return "> 999 h"
	}
	return fmt.Sprintf("%.1f h", an.HoursToSteady)
}

func pullUpText(an *settle.Analysis) string {
	s := an.Suggest
	switch {
	case math.IsNaN(s.RaiseCents):
		return "—"
	case s.RaiseCents == 0:
		return "none"
	case s.RaiseCents < 0:
		return fmt.Sprintf("lower %.1f ¢", -s.RaiseCents)
	case s.Share == 0:
		return fmt.Sprintf("check pin, then +%.1f ¢", s.RaiseCents)
	}
	return fmt.Sprintf("+%.1f ¢ → aim %+.1f", s.RaiseCents, s.AimCents)
}

func panelHeading(s *String) string {
	h := s.ID
	if s.Note != "" && s.Note != s.ID {
		h += " (" + s.Note + ")"
	}
	h += " — " + s.State.String()
	if len(s.Flags) > 0 {
		h += " — FLAGGED: " + strings.Join(s.Flags, ", ")
	}
	return h
}

func panelCaption(s *String) string {
	an := &s.Analysis
	c := fmt.Sprintf("%d readings; model %s", len(an.Points), an.Fit.Model)
	if finite(an.Fit.ResidualSD) {
		c += fmt.Sprintf(" (residual SD %.2f ¢)", an.Fit.ResidualSD)
	}
	if finite(an.RateNow) {
		c += fmt.Sprintf("; now %+.1f ¢ at %+.2f ¢/h", an.CentsNow, an.RateNow)
	}
	return c
}

package report

import (
	"fmt"
	"math"
	"slices"

	"taut/monitor/settle"
)

// stringPlot draws one string's night: readings (dots; left-out outliers as crosses),
// the fitted model over the latest segment, the target ± tolerance band, and the
// pull-ups (▲) and slips (▼) with their sizes written beside them.
func (r *Report) stringPlot(s *String, hoursMax float64) string {
	an := &s.Analysis
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, p := range an.Points {
		lo, hi = math.Min(lo, p.Cents), math.Max(hi, p.Cents)
	}
	tol := r.Limits.ToleranceCents
	lo, hi = niceRange(lo, hi, 0.12, -tol, tol)
	p := newPlot(400, 170, 0, hoursMax, lo, hi)
	p.frame("hours since first reading", "cents", fmtNum(0), fmtNum(0))
	p.band(-tol, tol, "band")
	p.hline(0, "target", "")
	if a, ok := s.alarms["partials"]; ok && finite(a.hours) {
		p.vline(a.hours, "alarm-line", "partials shifted")
	}
	if slices.Contains(s.Flags, FlagMargin) {
		p.text(p.left+4, p.top+11, fmt.Sprintf("tension at %.0f %% of breaking load", 100*s.MaxMargin), "start", "note-label slip-label")
	}
	p.fitted(an)
	out := outlierSet(an.Events)
	for i, pt := range an.Points {
		if out[i] {
			p.marker(pt.Hours, pt.Cents, "cross", "outlier")
			continue
		}
		p.marker(pt.Hours, pt.Cents, "dot", "reading")
	}
	for _, e := range an.Events {
		pt := an.Points[e.Index]
		switch e.Kind {
		case settle.EventPullUp:
			p.marker(pt.Hours, pt.Cents+0.06*(hi-lo), "up", "pullup")
			p.text(p.X(pt.Hours)+6, p.Y(pt.Cents)-8, fmt.Sprintf("pull-up %+.0f", e.Cents), "start", "note-label")
		case settle.EventStep:
			p.marker(pt.Hours, pt.Cents-0.06*(hi-lo), "down", "slip")
			p.text(p.X(pt.Hours)+6, p.Y(pt.Cents)+14, fmt.Sprintf("slip %+.0f", e.Cents), "start", "note-label slip-label")
		}
	}
	desc := fmt.Sprintf("%d readings of %s; model %s", len(an.Points), s.ID, an.Fit.Model)
	return p.svg("cents from target against time, string "+s.ID, desc)
}

// fitted draws the chosen model across the latest segment.
func (p *plot) fitted(an *settle.Analysis) {
	if len(an.Segments) == 0 || an.Fit.Model == settle.ModelNone || an.Fit.Model == settle.ModelSingle {
		return
	}
	seg := an.Segments[len(an.Segments)-1]
	var xs, ys []float64
	const n = 60
	for i := 0; i <= n; i++ {
		h := seg.StartHours + (seg.EndHours-seg.StartHours)*float64(i)/n
		xs = append(xs, h)
		ys = append(ys, an.FitAt(h))
	}
	p.polyline(xs, ys, "fit")
}

func outlierSet(ev []settle.Event) map[int]bool {
	m := map[int]bool{}
	for _, e := range ev {
		if e.Kind == settle.EventOutlier {
			m[e.Index] = true
		}
	}
	return m
}

// barPlot is one bar per string in scale order, with the string ids under the bars.
type barPlot struct {
	*plot
	strs []*String
}

func (r *Report) newBarPlot(h, y0, y1 float64) barPlot {
	w := math.Max(720, 60+22*float64(len(r.Strings)))
	p := newPlot(w, h, 0, float64(max(len(r.Strings), 1)), y0, y1)
	p.bottom = 46
	return barPlot{p, r.Strings}
}

func (b barPlot) bar(i int, from, to float64, class string) {
	x0, x1 := b.X(float64(i)+0.15), b.X(float64(i)+0.85)
	ya, yb := b.Y(clamp(math.Max(from, to), b.y0, b.y1)), b.Y(clamp(math.Min(from, to), b.y0, b.y1))
	b.printf(`<rect class="%s" x="%.1f" y="%.1f" width="%.1f" height="%.1f"/>`, class, x0, ya, x1-x0, math.Max(yb-ya, 0.5))
}

func (b barPlot) labels() {
	for i, s := range b.strs {
		x := b.X(float64(i) + 0.5)
		b.printf(`<text class="tick" text-anchor="end" transform="translate(%.1f %.1f) rotate(-60)">%s</text>`,
			x+3, b.h-b.bottom+10, s.ID)
	}
}

// centsPlot shows each string's present pitch from target; strings over the tolerance
// are hatched as well as coloured, and flagged strings carry a "!" over the bar.
func (r *Report) centsPlot() string {
	lo, hi := 0.0, 0.0
	for _, s := range r.Strings {
		if finite(s.Analysis.CentsNow) {
			lo, hi = math.Min(lo, s.Analysis.CentsNow), math.Max(hi, s.Analysis.CentsNow)
		}
	}
	tol := r.Limits.ToleranceCents
	lo, hi = niceRange(lo, hi, 0.1, -tol-1, tol+1)
	b := r.newBarPlot(230, lo, hi)
	b.printf(`<defs><pattern id="hatch-cents" width="5" height="5" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">` +
		`<line class="hatch" x1="0" y1="0" x2="0" y2="5"/></pattern></defs>`)
	b.frame("", "cents now", nil, fmtNum(0))
	b.band(-tol, tol, "band")
	b.hline(0, "target", "")
	for i, s := range r.Strings {
		c := s.Analysis.CentsNow
		if !s.Analysed || !finite(c) {
			continue
		}
		class := "bar"
		if math.Abs(c) > tol {
			class = "bar off"
			b.bar(i, 0, c, class)
			class = "bar hatched-cents"
		}
		b.bar(i, 0, c, class)
		if len(s.Flags) > 0 {
			b.text(b.X(float64(i)+0.5), b.Y(clamp(math.Max(c, 0), lo, hi))-3, "!", "middle", "flag-mark")
		}
	}
	b.labels()
	return b.svg("cents from target now, per string in scale order",
		fmt.Sprintf("band: target ± %.0f cents; hatched bars are outside it; ! marks a flagged string", tol))
}

// marginPlot shows each string's highest share of breaking load over the night, with
// the warning and alarm lines labelled; bars over a line are hatched and numbered.
func (r *Report) marginPlot() string {
	top := 1.0
	for _, s := range r.Strings {
		top = math.Max(top, 100*s.MaxMargin*1.08)
	}
	l := r.Limits
	b := r.newBarPlot(250, 0, top)
	b.printf(`<defs><pattern id="hatch-margin" width="5" height="5" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">` +
		`<line class="hatch" x1="0" y1="0" x2="0" y2="5"/></pattern></defs>`)
	b.frame("", "% of breaking load", nil, fmtNum(0))
	for i, s := range r.Strings {
		m := 100 * s.MaxMargin
		if m <= 0 {
			continue
		}
		switch {
		case s.MaxMargin > l.MarginAlarm:
			b.bar(i, 0, m, "bar alarm")
			b.bar(i, 0, m, "bar hatched-margin")
			b.text(b.X(float64(i)+0.5), b.Y(m)-3, fmt.Sprintf("%.0f", m), "middle", "flag-mark")
		case s.MaxMargin > l.MarginWarn:
			b.bar(i, 0, m, "bar warn")
			b.text(b.X(float64(i)+0.5), b.Y(m)-3, fmt.Sprintf("%.0f", m), "middle", "rule-label")
		default:
			b.bar(i, 0, m, "bar")
		}
	}
	b.hline(100*l.MarginWarn, "warn-line", fmt.Sprintf("warning %.0f %%", 100*l.MarginWarn))
	b.hline(100*l.MarginAlarm, "alarm-line", fmt.Sprintf("alarm %.0f %%", 100*l.MarginAlarm))
	b.labels()
	return b.svg("highest share of breaking load over the night, per string in scale order",
		fmt.Sprintf("dashed lines at the warning (%.0f %%) and alarm (%.0f %%) shares", 100*l.MarginWarn, 100*l.MarginAlarm))
}

// loadPlot shows the instrument's total tension over the night.
func (r *Report) loadPlot() string {
	if len(r.Load) < 2 {
		return ""
	}
	var xs, ys []float64
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, p := range r.Load {
		xs, ys = append(xs, p.Hours), append(ys, p.TotalN/1000)
		lo, hi = math.Min(lo, p.TotalN/1000), math.Max(hi, p.TotalN/1000)
	}
	lo, hi = niceRange(lo, hi, 0.15)
	p := newPlot(720, 220, 0, r.hoursMax(), lo, hi)
	p.left = 56
	p.frame("hours since first reading", "total load, kN", fmtNum(0), fmtNum(2))
	p.polyline(xs, ys, "load")
	return p.svg("total string load over the night", "sum of every string's latest measured tension, kilonewtons")
}

func (r *Report) hoursMax() float64 {
	return math.Max(r.End.Sub(r.Origin).Hours(), 0.5)
}

package report

import (
	"fmt"
	"html"
	"math"
	"strings"
)

// plot is a hand-written SVG canvas with one linear data frame. Styling is by CSS
// classes from the page's stylesheet, so the SVG carries no fonts or colours of its own.
type plot struct {
	w, h                     float64
	left, right, top, bottom float64
	x0, x1, y0, y1           float64
	b                        strings.Builder
}

func newPlot(w, h, x0, x1, y0, y1 float64) *plot {
	if x1 <= x0 {
		x1 = x0 + 1
	}
	if y1 <= y0 {
		y0, y1 = y0-1, y1+1
	}
	return &plot{w: w, h: h, left: 48, right: 12, top: 12, bottom: 34, x0: x0, x1: x1, y0: y0, y1: y1}
}

// X and Y map data to canvas coordinates.
func (p *plot) X(v float64) float64 {
	return p.left + (v-p.x0)/(p.x1-p.x0)*(p.w-p.left-p.right)
}

func (p *plot) Y(v float64) float64 {
	return p.h - p.bottom - (v-p.y0)/(p.y1-p.y0)*(p.h-p.top-p.bottom)
}

func (p *plot) printf(format string, a ...any) { fmt.Fprintf(&p.b, format, a...) }

// svg wraps the drawing; title and desc make it readable to screen readers.
func (p *plot) svg(title, desc string) string {
	return fmt.Sprintf(`<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 %.0f %.0f" width="%.0f" height="%.0f" role="img">`+
		`<title>%s</title><desc>%s</desc>%s</svg>`,
		p.w, p.h, p.w, p.h, html.EscapeString(title), html.EscapeString(desc), p.b.String())
}

// frame draws the plot area, grid, ticks and axis labels.
func (p *plot) frame(xlabel, ylabel string, xfmt, yfmt func(float64) string) {
	p.printf(`<rect class="area" x="%.1f" y="%.1f" width="%.1f" height="%.1f"/>`,
		p.left, p.top, p.w-p.left-p.right, p.h-p.top-p.bottom)
	for _, v := range ticks(p.y0, p.y1, 5) {
		y := p.Y(v)
		p.printf(`<line class="grid" x1="%.1f" x2="%.1f" y1="%.1f" y2="%.1f"/>`, p.left, p.w-p.right, y, y)
		p.text(p.left-4, y+3.5, yfmt(v), "end", "tick")
	}
	if xfmt != nil {
		for _, v := range ticks(p.x0, p.x1, 6) {
			x := p.X(v)
			p.printf(`<line class="grid" x1="%.1f" x2="%.1f" y1="%.1f" y2="%.1f"/>`, x, x, p.top, p.h-p.bottom)
			p.text(x, p.h-p.bottom+13, xfmt(v), "middle", "tick")
		}
	}
	if xlabel != "" {
		p.text((p.left+p.w-p.right)/2, p.h-4, xlabel, "middle", "axis")
	}
	if ylabel != "" {
		p.printf(`<text class="axis" text-anchor="middle" transform="translate(11 %.1f) rotate(-90)">%s</text>`,
			(p.top+p.h-p.bottom)/2, html.EscapeString(ylabel))
	}
}

func (p *plot) text(x, y float64, s, anchor, class string) {
	p.printf(`<text class="%s" x="%.1f" y="%.1f" text-anchor="%s">%s</text>`, class, x, y, anchor, html.EscapeString(s))
}

// band shades the data range [lo, hi] across the plot.
func (p *plot) band(lo, hi float64, class string) {
	lo, hi = math.Max(lo, p.y0), math.Min(hi, p.y1)
	if hi <= lo {
		return
	}
	p.printf(`<rect class="%s" x="%.1f" y="%.1f" width="%.1f" height="%.1f"/>`,
		class, p.left, p.Y(hi), p.w-p.left-p.right, p.Y(lo)-p.Y(hi))
}

// hline draws a horizontal rule at data y with a label at its right end.
func (p *plot) hline(y float64, class, label string) {
	if y < p.y0 || y > p.y1 {
		return
	}
	p.printf(`<line class="%s" x1="%.1f" x2="%.1f" y1="%.1f" y2="%.1f"/>`, class, p.left, p.w-p.right, p.Y(y), p.Y(y))
	if label != "" {
		p.text(p.w-p.right-3, p.Y(y)-3, label, "end", "rule-label")
	}
}

// vline draws a vertical rule at data x with a label near its top.
func (p *plot) vline(x float64, class, label string) {
	if x < p.x0 || x > p.x1 {
		return
	}
	p.printf(`<line class="%s" x1="%.1f" x2="%.1f" y1="%.1f" y2="%.1f"/>`, class, p.X(x), p.X(x), p.top, p.h-p.bottom)
	if label != "" {
		anchor, dx := "start", 3.0
		if p.X(x) > (p.left+p.w-p.right)/2 {
			anchor, dx = "end", -3
		}
		p.text(p.X(x)+dx, p.top+10, label, anchor, "rule-label")
	}
}

// polyline draws the points (xs[i], ys[i]), skipping non-finite ones.
func (p *plot) polyline(xs, ys []float64, class string) {
	var pts []string
	for i := range xs {
		if finite(xs[i]) && finite(ys[i]) {
			pts = append(pts, fmt.Sprintf("%.1f,%.1f", p.X(xs[i]), p.Y(clamp(ys[i], p.y0, p.y1))))
		}
	}
	if len(pts) > 1 {
		p.printf(`<polyline class="%s" points="%s"/>`, class, strings.Join(pts, " "))
	}
}

// marker draws a symbol at a data point: "dot", "cross", "up" or "down" triangle.
func (p *plot) marker(x, y float64, shape, class string) {
	cx, cy := p.X(x), p.Y(clamp(y, p.y0, p.y1))
	switch shape {
	case "dot":
		p.printf(`<circle class="%s" cx="%.1f" cy="%.1f" r="2.2"/>`, class, cx, cy)
	case "cross":
		p.printf(`<path class="%s" d="M%.1f %.1fl6 6m0 -6l-6 6"/>`, class, cx-3, cy-3)
	case "up":
		p.printf(`<path class="%s" d="M%.1f %.1fl5 8h-10z"/>`, class, cx, cy-4)
	case "down":
		p.printf(`<path class="%s" d="M%.1f %.1fl5 -8h-10z"/>`, class, cx, cy+4)
	}
}

// ticks returns about n round values covering [lo, hi].
func ticks(lo, hi float64, n int) []float64 {
	if !(hi > lo) || n < 1 {
		return []float64{lo}
	}
	raw := (hi - lo) / float64(n)
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	step := mag
	for _, m := range []float64{1, 2, 2.5, 5, 10} {
		if m*mag >= raw {
			step = m * mag
			break
		}
	}
	var out []float64
	for v := math.Ceil(lo/step) * step; v <= hi+step*1e-9; v += step {
		out = append(out, math.Round(v/step)*step)
	}
	return out
}

func clamp(v, lo, hi float64) float64 { return math.Max(lo, math.Min(hi, v)) }

// niceRange widens [lo, hi] by a margin and to include the extra values.
func niceRange(lo, hi, pad float64, include ...float64) (float64, float64) {
	for _, v := range include {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	if !finite(lo) || !finite(hi) {
		return -1, 1
	}
	span := hi - lo
	if span < 1e-6*math.Max(math.Abs(lo), math.Abs(hi)) || span == 0 {
		half := math.Max(0.02*math.Abs(hi), 0.5) // a flat series: show it mid-frame
		return lo - half, hi + half
	}
	return lo - pad*span, hi + pad*span
}

func fmtNum(decimals int) func(float64) string {
	return func(v float64) string {
		if v == 0 {
			v = 0
		}
		return fmt.Sprintf("%.*f", decimals, v)
	}
}

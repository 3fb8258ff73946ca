package settle

import (
	"math"
	"slices"
	"sort"
)

// EventKind says what interrupted the smooth settling of a string.
type EventKind string

// Event kinds.
const (
	EventPullUp  EventKind = "pull-up" // a rise well above noise: the string was retuned upwards
	EventStep    EventKind = "step"    // a sudden drop that is not creep: a slip at a pin or bearing
	EventOutlier EventKind = "outlier" // one reading off the trend that the next one contradicts
	EventGap     EventKind = "gap"     // no reading for longer than the gap threshold
)

// Event is one interruption of the series. Index is the first point after it
// (for an outlier: the outlier itself) in Analysis.Points.
type Event struct {
	Kind     EventKind
	Index    int
	Hours    float64
	Cents    float64 // rise (+) or drop (−) against the trend's prediction; 0 for a gap
	GapHours float64 // length of a gap
}

// clean drops points with a non-finite time or pitch and sorts the rest by time
// (stable, so equal times keep their input order).
func clean(in []Point) (out []Point, dropped int, reordered bool) {
	out = make([]Point, 0, len(in))
	for _, p := range in {
		if finite(p.Hours) && finite(p.Cents) {
			out = append(out, p)
			continue
		}
		dropped++
	}
	if !sort.SliceIsSorted(out, func(i, j int) bool { return out[i].Hours < out[j].Hours }) {
		reordered = true
		sort.SliceStable(out, func(i, j int) bool { return out[i].Hours < out[j].Hours })
	}
	return out, dropped, reordered
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// detector walks the series once and classifies every departure from the local trend.
type detector struct {
	pts      []Point
	gapH     float64
	up, down float64 // thresholds, cents
}

// detect finds pull-ups, steps, outliers and gaps; see the package documentation.
// It returns the events in time order and the robust SD of the innovations. A first
// walk uses the floor thresholds; the innovations of the points it left in runs of at
// least three readings give the noise scale, and when that raises a threshold the
// series is walked again.
func detect(pts []Point, o Options) ([]Event, float64) {
	d := detector{pts: pts, gapH: gapHours(pts, o), up: o.PullUpCents, down: o.StepCents}
	ev, inn := d.walk()
	sd := 0.0
	if len(inn) >= 5 {
		sd = 1.4826 * mad(inn)
	}
	if o.JumpSigma*sd > math.Min(d.up, d.down) {
		d.up = math.Max(o.PullUpCents, o.JumpSigma*sd)
		d.down = math.Max(o.StepCents, o.JumpSigma*sd)
		ev, _ = d.walk()
	}
	return ev, sd
}

func gapHours(pts []Point, o Options) float64 {
	if o.GapHours > 0 {
		return o.GapHours
	}
	var dt []float64
	for i := 1; i < len(pts); i++ {
		if s := pts[i].Hours - pts[i-1].Hours; s > 0 {
			dt = append(dt, s)
		}
	}
	if len(dt) == 0 {
		return 1
	}
	return math.Max(1, 3*Median(dt))
}

// predict extrapolates the least-squares line through the last (up to) four points of
// run to time h; with one point it returns that point's pitch.
func (d *detector) predict(run []int, h float64) float64 {
	if len(run) > 4 {
		run = run[len(run)-4:]
	}
	if len(run) == 1 {
		return d.pts[run[0]].Cents
	}
	var mt, mc float64
	for _, i := range run {
		mt += d.pts[i].Hours
		mc += d.pts[i].Cents
	}
	mt /= float64(len(run))
	mc /= float64(len(run))
	var sxy, sxx float64
	for _, i := range run {
		dt := d.pts[i].Hours - mt
		sxy += dt * (d.pts[i].Cents - mc)
		sxx += dt * dt
	}
	if sxx == 0 {
		return mc
	}
	return mc + sxy/sxx*(h-mt)
}

// walk classifies each point against the run of points since the last event.
// A pull-up is a rise above the last reading: settling only ever sags, so a rise
// needs no trend. A step is a drop both below the last reading and below the
// extrapolated trend of the run; it needs at least two points of trend, so a drop
// right after the start, a pull-up, a step or a gap is left to the creep model
// (new strings fall fastest exactly there). Across a gap only a rise is classified.
func (d *detector) walk() (ev []Event, innovations []float64) {
	run := []int{0}
	for i := 1; i < len(d.pts); i++ {
		p := d.pts[i]
		last := d.pts[run[len(run)-1]].Cents
		gap := p.Hours - d.pts[i-1].Hours
		if gap > d.gapH {
			ev = append(ev, Event{Kind: EventGap, Index: i, Hours: p.Hours, GapHours: gap})
			if rise := p.Cents - last; rise > d.up {
				ev = append(ev, Event{Kind: EventPullUp, Index: i, Hours: p.Hours, Cents: rise})
			}
			run = []int{i}
			continue
		}
		kind, size := d.classify(run, p)
		if kind == "" {
			if len(run) >= 3 {
				innovations = append(innovations, p.Cents-d.predict(run, p.Hours))
			}
			run = append(run, i)
			continue
		}
		if d.isOutlier(run, i) {
			ev = append(ev, Event{Kind: EventOutlier, Index: i, Hours: p.Hours, Cents: size})
			continue
		}
		ev = append(ev, Event{Kind: kind, Index: i, Hours: p.Hours, Cents: size})
		run = []int{i}
	}
	return ev, innovations
}

// classify says whether p leaves the run as a pull-up or a step, and by how much.
func (d *detector) classify(run []int, p Point) (EventKind, float64) {
	last := d.pts[run[len(run)-1]].Cents
	if rise := p.Cents - last; rise > d.up {
		return EventPullUp, rise
	}
	if len(run) < 2 {
		return "", 0
	}
	e := p.Cents - d.predict(run, p.Hours)
	if e < -d.down && p.Cents-last < -d.down {
		return EventStep, e
	}
	return "", 0
}

// isOutlier reports whether the point after i returns to the run that i left.
func (d *detector) isOutlier(run []int, i int) bool {
	j := i + 1
	if j >= len(d.pts) || d.pts[j].Hours-d.pts[i].Hours > d.gapH {
		return false
	}
	ref := d.pts[run[len(run)-1]].Cents
	if len(run) >= 2 {
		ref = d.predict(run, d.pts[j].Hours)
	}
	lim := math.Min(d.up, d.down)
	back := d.pts[j].Cents - ref
	away := d.pts[j].Cents - d.pts[i].Cents
	return math.Abs(back) <= lim/2 && math.Abs(away) > lim
}

// split cuts the series into segments at pull-ups.
func split(pts []Point, ev []Event) []Segment {
	segs := []Segment{{First: 0}}
	for _, e := range ev {
		if e.Kind != EventPullUp {
			continue
		}
		segs[len(segs)-1].Last = e.Index - 1
		segs[len(segs)-1].Complete = true
		segs = append(segs, Segment{First: e.Index, RiseCents: e.Cents})
	}
	segs[len(segs)-1].Last = len(pts) - 1
	for i := range segs {
		segs[i].StartHours = pts[segs[i].First].Hours
		segs[i].EndHours = pts[segs[i].Last].Hours
		segs[i].FallCents, segs[i].FallShare = math.NaN(), math.NaN()
	}
	return segs
}

// Median returns the median of x (the mean of the two middle values for an even
// count), or NaN for an empty slice. x is not modified.
func Median(x []float64) float64 {
	s := slices.Clone(x)
	slices.Sort(s)
	n := len(s)
	if n == 0 {
		return math.NaN()
	}
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

func mad(x []float64) float64 {
	m := Median(x)
	dev := make([]float64, len(x))
	for i, v := range x {
		dev[i] = math.Abs(v - m)
	}
	return Median(dev)
}

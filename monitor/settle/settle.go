package settle

import (
	"errors"
	"math"
)

// Point is one reading of one string.
type Point struct {
	Hours float64 // time on a monotonic scale, hours (any origin)
	Cents float64 // pitch from the string's target, cents
}

// Model names the settling model that describes the latest segment.
type Model string

// Models, from least to most informative.
const (
	ModelNone     Model = "none"        // no usable point
	ModelSingle   Model = "single"      // one point: a level, no rate
	ModelLine     Model = "line"        // straight line (Theil–Sen when few points)
	ModelLogCreep Model = "log-creep"   // c(t) = a − b·ln(1 + t/t0)
	ModelExp      Model = "exponential" // c(t) = c∞ + A·e^(−t/τ)
)

// Trade figures for the share of a pull-up that falls back, used when a string has no
// pull-up history of its own: roughly 25–35 % on the treble bridge and about 10 % on
// the bass bridge (reference-values §4.3, a piano technician's page; trade practice,
// not a measurement). The treble figure is the middle of the range.
const (
	TradeShareTreble = 0.30
	TradeShareBass   = 0.10
)

// Options tunes the analysis. The zero value gives the defaults documented per field.
type Options struct {
	SteadyCentsPerHour float64 // |rate| under this is steady; 0 → 1 (engineering default)
	ToleranceCents     float64 // a pull-up is suggested when +24 h is flatter than this; 0 → 3
	PullUpCents        float64 // smallest rise counted as a pull-up; 0 → 2.5 (a restorer retunes anything past a 3-cent tolerance)
	StepCents          float64 // smallest sudden drop counted as a step; 0 → 5
	JumpSigma          float64 // a jump must also exceed this many robust SDs of the innovations; 0 → 5
	GapHours           float64 // a spacing longer than this is a gap; 0 → max(1 h, 3 × median spacing)
	MinCurvePoints     int     // fewer points in the latest segment → Theil–Sen line; 0 → 6
	HorizonHours       float64 // prediction horizon; 0 → 24
	TradeShare         float64 // fall-back share without history; 0 → TradeShareTreble
}

func (o Options) withDefaults() Options {
	def := func(v *float64, d float64) {
		if *v <= 0 || math.IsNaN(*v) {
			*v = d
		}
	}
	def(&o.SteadyCentsPerHour, 1)
	def(&o.ToleranceCents, 3)
	def(&o.PullUpCents, 2.5)
	def(&o.StepCents, 5)
	def(&o.JumpSigma, 5)
	def(&o.HorizonHours, 24)
	def(&o.TradeShare, TradeShareTreble)
	if o.MinCurvePoints <= 0 {
		o.MinCurvePoints = 6
	}
	if o.MinCurvePoints < 5 {
		o.MinCurvePoints = 5 // a 3-parameter curve plus σ needs n ≥ 5 for AICc
	}
	return o
}

// Fit is the settling model chosen for the latest segment, with its uncertainty.
// Times inside the fit are hours since the first point of the segment.
type Fit struct {
	Model      Model
	Names      []string  // parameter names, e.g. ["a", "b", "t0_h"]
	Params     []float64 // parameter values, in the order of Names
	ParamSE    []float64 // standard errors from the Jacobian (NaN when not estimable)
	StepCents  []float64 // fitted level shift of each step inside the segment (negative = drop)
	StepHours  []float64 // time of each of those steps (hours on the series' scale)
	ResidualSD float64   // cents; NaN with fewer points than parameters + 1
	AICc       float64   // small-sample AIC of the least-squares fit; NaN for Theil–Sen
	N          int       // points fitted
	Robust     bool      // Theil–Sen line (too few points for a curve)
	Others     []Alternative
	originH    float64     // Hours of the segment's first point
	cur        *curve      // the model's functions
	cov        [][]float64 // covariance of Params then StepCents (nil when not estimable)
}

// Alternative is a model that was fitted and not chosen.
type Alternative struct {
	Model Model
	AICc  float64
}

// Suggestion is the next pull-up for a string.
type Suggestion struct {
	RaiseCents float64 // raise from the present pitch; 0 = none needed; negative = lower
	AimCents   float64 // cents from target to tune to now (the overshoot when raising)
	Share      float64 // share of a raise expected to fall back
	Basis      string  // where Share comes from
}

// Analysis is the settling analysis of one string.
type Analysis struct {
	Points        []Point   // usable points, sorted by time
	Dropped       int       // points with NaN or infinite time or cents
	Reordered     bool      // times were not in order and were sorted
	Events        []Event   // pull-ups, steps, outliers, gaps in time order
	Segments      []Segment // split at pull-ups; the last is the one fitted
	Fit           Fit
	InnovationSD  float64 // robust SD of the one-step prediction errors, cents
	HoursNow      float64 // time of the last point
	CentsNow      float64 // fitted pitch at HoursNow
	CentsNowSE    float64
	RateNow       float64 // fitted drift rate at HoursNow, cents per hour
	RateSE        float64
	HoursToSteady float64 // from HoursNow until |rate| < threshold: 0 already, +Inf never (line), NaN unknown
	HorizonHours  float64
	CentsAhead    float64 // predicted at HoursNow + HorizonHours
	CentsAheadSE  float64
	Steady        bool // |RateNow| under the threshold
	Suggest       Suggestion
}

// ErrNoPoints is returned when no point has a finite time and pitch.
var ErrNoPoints = errors.New("settle: no usable points")

// Analyze splits the series at pull-ups, fits the latest segment and predicts its
// settling. The input is not modified. See the package documentation for the method.
func Analyze(points []Point, opts Options) (Analysis, error) {
	o := opts.withDefaults()
	var an Analysis
	an.HorizonHours = o.HorizonHours
	an.Points, an.Dropped, an.Reordered = clean(points)
	if len(an.Points) == 0 {
		an.Fit.Model = ModelNone
		nanAll(&an)
		return an, ErrNoPoints
	}
	an.Events, an.InnovationSD = detect(an.Points, o)
	an.Segments = split(an.Points, an.Events)
	last := an.Segments[len(an.Segments)-1]
	an.Fit = fitSegment(an.Points, an.Events, last, o)
	predict(&an, o)
	measureFalls(&an)
	an.Suggest = suggest(&an, o)
	return an, nil
}

func nanAll(an *Analysis) {
	n := math.NaN()
	an.HoursNow, an.CentsNow, an.CentsNowSE, an.RateNow, an.RateSE = n, n, n, n, n
	an.HoursToSteady, an.CentsAhead, an.CentsAheadSE = n, n, n
	an.Suggest = Suggestion{RaiseCents: n, AimCents: n, Share: n, Basis: "no readings"}
}

// FitAt returns the fitted pitch at time h (hours on the series' scale) for the
// latest segment, including the level shift of every step before h. NaN without a
// fit.
func (an *Analysis) FitAt(h float64) float64 {
	f := &an.Fit
	if f.cur == nil {
		return math.NaN()
	}
	v := f.cur.value(f.Params, h-f.originH)
	for k, sh := range f.StepHours {
		if h >= sh && k < len(f.StepCents) {
			v += f.StepCents[k]
		}
	}
	return v
}

package pitch

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/dsp/fourier"
)

// Conditions under which Analyze reports "no pitch" instead of a number. Analyze may wrap
// them with detail; test with errors.Is.
var (
	// ErrTooShort: x holds too few samples for the search range or the detected pitch.
	ErrTooShort = errors.New("pitch: too short")
	// ErrSilence: the RMS level is below Config.SilenceDB.
	ErrSilence = errors.New("pitch: silence")
	// ErrClipped: a large share of the samples lie on flat tops at full scale (see the
	// package doc).
	ErrClipped = errors.New("pitch: clipped")
	// ErrNoPitch: no partial series stands out of the noise.
	ErrNoPitch = errors.New("pitch: no pitch")
	// ErrBadSample: a sample is NaN, infinite or beyond ±1000 (not audio).
	ErrBadSample = errors.New("pitch: bad sample")
)

// Config fixes the sample rate, the search range and the buffer sizes of an Analyzer.
type Config struct {
	SampleRate   float64 // Hz
	MinHz, MaxHz float64 // search range; zero → 25 and 4500
	MaxPartials  int     // zero → 16
	MaxSamples   int     // longest x Analyze will see; buffers sized once (zero → 2^16)
	SilenceDB    float64 // RMS level (dBFS) below which Analyze reports ErrSilence; zero → -75
}

// Hint narrows the search range of one Analyze call. Zero fields take the Config range;
// the hint is intersected with the Config range.
type Hint struct{ MinHz, MaxHz float64 }

// Note is the result of analysing one sounding of a string.
type Note struct {
	FundamentalHz float64   // first partial, f0·sqrt(1+B) from the fit (see package doc)
	F0Hz          float64   // fitted ideal f0 (use this for tension)
	B             float64   // fitted inharmonicity; 0 when fewer than two partials were found
	Partials      []Partial // measured partials, appended into dst.Partials[:0]
	Clarity       float64   // 0..1: share of the analysed band's power in the partials
	LevelDB       float64   // RMS level of the analysed samples, dBFS (full-scale sine: -3.01)
	YINHz         float64   // raw YIN estimate
	UsedSamples   int       // samples from x[0] that the partial estimate used
}

// Partial is one measured partial: its number, frequency and amplitude (dBFS, a
// full-scale sine is 0 dB).
type Partial struct {
	N      int
	Hz, DB float64
}

const (
	defaultMinHz       = 25.0
	defaultMaxHz       = 4500.0
	defaultMaxPartials = 16
	defaultMaxSamples  = 1 << 16
	defaultSilenceDB   = -75.0

	maxSample = 1000 // larger magnitudes are not audio (ErrBadSample)

	specPeriods     = 12   // periods of the pitch in the spectral window, at least
	specLongPeriods = 48   // periods wanted for precision …
	specLongS       = 0.2  // … as long as the window stays within this many seconds
	specMinPeriods  = 6    // fewest periods that still resolve the partials
	specMinS        = 0.05 // shortest spectral window, seconds
	specMaxS        = 0.5  // longest spectral window, seconds
	minClarity      = 0.05 // below this the tone is called noise
)

// Analyzer measures notes. It owns its buffers, so one Analyzer must not be used by
// several goroutines at once; after the first calls it does not allocate.
type Analyzer struct {
	cfg  Config
	rate float64
	pyr  pyramid
	ffts [3][32]*fourier.FFT // plans by size 2^k, 3·2^k, 5·2^k; made on first use

	fftIn       []float64
	specA       []complex128
	specB       []complex128
	corr        []float64
	power       []float64
	energy      []float64 // prefix sums of squares of the loaded samples
	yinEnergy   []float64 // prefix sums of squares at the YIN level
	scratch     []float64
	bandScratch []float64
	yinD        [yinFrames][]float64
	yinDP       [yinFrames][]float64
	parts       []partialEst
	parts2      []partialEst // the other list of retrack
	cands       []float64    // alternative YIN estimates (Hz) when no dip is below the threshold
	spec        spectrum
	levelSum    float64 // sum of squares of the loaded samples
	clipLong    int     // flat runs longer than this are clipping however they start
}

// New returns an Analyzer for cfg, with zero fields replaced by their defaults.
func New(cfg Config) (*Analyzer, error) {
	cfg = withDefaults(cfg)
	if err := checkConfig(cfg); err != nil {
		return nil, err
	}
	a := &Analyzer{cfg: cfg, rate: cfg.SampleRate, clipLong: clipLongRun(cfg.SampleRate, cfg.MinHz)}
	a.pyr.init(cfg.MaxSamples)
	// Upper bounds over every hint: the longest lag is that of MinHz at the full rate,
	// and the spectral window is at most specMaxS, zero-padded to twice its length.
	tauMax := int(math.Ceil(cfg.SampleRate/cfg.MinHz)) + 2
	yinM := fftSize(2*tauMax + int(math.Ceil(yinMinWinS*cfg.SampleRate)) + 1)
	specM := fftSize(specPad * min(cfg.MaxSamples, int(math.Ceil(specMaxS*cfg.SampleRate))))
	a.fftIn = make([]float64, max(yinM, specM))
	a.specA = make([]complex128, max(yinM, specM)/2+1)
	a.specB = make([]complex128, yinM/2+1)
	a.corr = make([]float64, yinM)
	a.power = make([]float64, specM/2+1)
	a.energy = make([]float64, cfg.MaxSamples+1)
	a.yinEnergy = make([]float64, cfg.MaxSamples+1)
	a.scratch = make([]float64, 2*scratchHalf+1)
	a.bandScratch = make([]float64, specM/2+1)
	for i := range a.yinD {
		a.yinD[i] = make([]float64, tauMax+1)
		a.yinDP[i] = make([]float64, tauMax+1)
	}
	a.parts = make([]partialEst, 0, cfg.MaxPartials)
	a.parts2 = make([]partialEst, 0, cfg.MaxPartials)
	a.cands = make([]float64, 0, maxCands)
	return a, nil
}

func withDefaults(cfg Config) Config {
	if cfg.MinHz == 0 {
		cfg.MinHz = defaultMinHz
	}
	if cfg.MaxHz == 0 {
		cfg.MaxHz = defaultMaxHz
	}
	if cfg.MaxPartials == 0 {
		cfg.MaxPartials = defaultMaxPartials
	}
	if cfg.MaxSamples == 0 {
		cfg.MaxSamples = defaultMaxSamples
	}
	if cfg.SilenceDB == 0 {
		cfg.SilenceDB = defaultSilenceDB
	}
	return cfg
}

func checkConfig(cfg Config) error {
	switch {
	case !(cfg.SampleRate >= 1000 && cfg.SampleRate <= 1e6):
		return fmt.Errorf("pitch: config: SampleRate %v Hz: want 1000 to 1000000", cfg.SampleRate)
	case !(cfg.MinHz > 0 && cfg.MinHz < cfg.MaxHz):
		return fmt.Errorf("pitch: config: MinHz %v, MaxHz %v: want 0 < MinHz < MaxHz", cfg.MinHz, cfg.MaxHz)
	case !(cfg.MaxHz <= 0.45*cfg.SampleRate):
		return fmt.Errorf("pitch: config: MaxHz %v: want at most 0.45·SampleRate = %v", cfg.MaxHz, 0.45*cfg.SampleRate)
	case cfg.MaxPartials < 1 || cfg.MaxPartials > 64:
		return fmt.Errorf("pitch: config: MaxPartials %d: want 1 to 64", cfg.MaxPartials)
	case cfg.MaxSamples < 256 || cfg.MaxSamples > 1<<24:
		return fmt.Errorf("pitch: config: MaxSamples %d: want 256 to %d", cfg.MaxSamples, 1<<24)
	case math.IsNaN(cfg.SilenceDB) || cfg.SilenceDB > 0:
		return fmt.Errorf("pitch: config: SilenceDB %v: want a level in dBFS at or below 0", cfg.SilenceDB)
	}
	return nil
}

// Config returns the configuration in use, with defaults filled in.
func (a *Analyzer) Config() Config { return a.cfg }

// Analyze measures the note in x (samples in [-1, 1] at Config.SampleRate, starting after
// the attack) and stores the result in dst, reusing dst.Partials. It uses at most
// Config.MaxSamples samples and, of those, only as many as the detected pitch needs (see
// the package doc). On error dst is left unchanged; the error is one of ErrTooShort,
// ErrSilence, ErrClipped, ErrNoPitch or ErrBadSample, possibly wrapped.
func (a *Analyzer) Analyze(dst *Note, x []float32, hint Hint) error {
	minHz, maxHz, err := a.searchRange(hint)
	if err != nil {
		return err
	}
	n := min(len(x), a.cfg.MaxSamples, a.regionLen(minHz, maxHz))
	if need := yinNeed(a.rate, minHz, maxHz); n < need {
		return fmt.Errorf("%w: need %d samples for %.4g Hz at %.0f Hz, got %d", ErrTooShort, need, minHz, a.rate, n)
	}
	if err := a.load(x[:n]); err != nil {
		return err
	}
	if levelDB(a.levelSum, n) < a.cfg.SilenceDB {
		return ErrSilence
	}
	a.spec.power = nil // no spectrum of this input yet
	yinHz, sure, err := a.yin(minHz, maxHz)
	if err != nil {
		return err
	}
	var res result
	err = a.refine(&res, yinHz, minHz, maxHz)
	if sure && errors.Is(err, ErrTooShort) {
		return err // a clear period, but too few of them: no guessing at other pitches
	}
	if !sure || err != nil || res.explained < minExplained {
		start := a.bestCandidate(&res, err, yinHz, minHz, maxHz)
		err = a.refine(&res, start, minHz, maxHz)
	}
	if err != nil {
		return err
	}
	a.fill(dst, &res, yinHz)
	return nil
}

// regionLen is the number of input samples Analyze may use for the range.
func (a *Analyzer) regionLen(minHz, maxHz float64) int {
	return regionLen(a.rate, minHz, maxHz, a.cfg.MaxPartials)
}

// regionLen is the longer of the YIN frames and the spectral window for the lowest
// pitch (a semitone below minHz, where the octave check may still land).
func regionLen(rate, minHz, maxHz float64, maxPartials int) int {
	return max(yinSpan(rate, minHz, maxHz), specSpan(rate, minHz/semitone, maxPartials))
}

// searchRange intersects the hint with the configured range.
func (a *Analyzer) searchRange(h Hint) (minHz, maxHz float64, err error) {
	minHz, maxHz = a.cfg.MinHz, a.cfg.MaxHz
	if h.MinHz != 0 {
		minHz = math.Max(minHz, h.MinHz)
	}
	if h.MaxHz != 0 {
		maxHz = math.Min(maxHz, h.MaxHz)
	}
	if !(minHz < maxHz) {
		return 0, 0, fmt.Errorf("pitch: hint %v–%v Hz does not overlap the configured range %v–%v Hz",
			h.MinHz, h.MaxHz, a.cfg.MinHz, a.cfg.MaxHz)
	}
	return minHz, maxHz, nil
}

func (a *Analyzer) fill(dst *Note, r *result, yinHz float64) {
	dst.F0Hz, dst.B = r.f0Hz, r.b
	dst.FundamentalHz = modelHz(1, r.f0Hz, r.b)
	dst.Clarity = r.clarity
	dst.LevelDB = levelDB(a.energy[r.used], r.used)
	dst.YINHz = yinHz
	dst.UsedSamples = r.used
	dst.Partials = dst.Partials[:0]
	for _, p := range a.parts {
		dst.Partials = append(dst.Partials, Partial{N: p.n, Hz: p.hz, DB: p.db})
	}
}

func levelDB(sumSquares float64, n int) float64 {
	if n == 0 || sumSquares <= 0 {
		return math.Inf(-1)
	}
	return 10 * math.Log10(sumSquares/float64(n))
}

// plan returns the FFT plan for size m (from fftSize), making it on first use.
func (a *Analyzer) plan(m int) *fourier.FFT {
	kind, pow := 0, m
	switch {
	case m%5 == 0:
		kind, pow = 2, m/5
	case m%3 == 0:
		kind, pow = 1, m/3
	}
	k := log2(pow)
	if a.ffts[kind][k] == nil {
		a.ffts[kind][k] = fourier.NewFFT(m)
	}
	return a.ffts[kind][k]
}

// fftSize returns the smallest of 2^k, 3·2^k and 5·2^k that is at least n (and at
// least 16): sizes the FFT does fast, with less zero-padding than powers of two alone.
func fftSize(n int) int {
	best := nextPow2(max(n, 16))
	for _, f := range []int{3, 5} {
		if m := f * nextPow2((n+f-1)/f); m >= n && m >= 16 && m < best {
			best = m
		}
	}
	return best
}

func nextPow2(n int) int {
	m := 1
	for m < n {
		m <<= 1
	}
	return m
}

func log2(m int) int {
	k := 0
	for 1<<k < m {
		k++
	}
	return k
}

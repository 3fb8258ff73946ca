package lamp

import (
	"context"
	"errors"
	"fmt"
	"sync"
	"time"

	"github.com/jonboulle/clockwork"
	"periph.io/x/conn/v3/gpio"

	"taut/monitor"
)

// What a lamp can show (Lamp.Shows).
const (
	ShowsAlarm     = "alarm"
	ShowsSettling  = "settling"
	ShowsSteady    = "steady"
	ShowsOffTarget = "off-target"
	ShowsFault     = "fault"
	ShowsAlive     = "alive"
)

// Defaults for the options.
const (
	DefaultBlinkPeriod = time.Second
	DefaultFaultWindow = 10 * time.Minute
)

var validShows = []string{ShowsAlarm, ShowsSettling, ShowsSteady, ShowsOffTarget, ShowsFault, ShowsAlive}

// Lamp is one output: a pin and what it shows.
type Lamp struct {
	Name  string      // for error messages, e.g. "alarm"
	Shows string      // one of the Shows* constants
	Blink bool        // flash while the condition holds instead of staying lit
	Pin   gpio.PinOut // driven High for lit, Low for dark
}

// Option changes a Board's defaults.
type Option func(*Board)

// WithClock sets the clock that paces blinking and ages faults (tests use a fake).
func WithClock(c clockwork.Clock) Option { return func(b *Board) { b.clock = c } }

// WithBlinkPeriod sets the full on+off period of blinking lamps (default 1 s).
func WithBlinkPeriod(d time.Duration) Option { return func(b *Board) { b.period = d } }

// WithFaultWindow sets how long a fault entry keeps the fault lamp lit (default 10 min).
func WithFaultWindow(d time.Duration) Option { return func(b *Board) { b.faultWindow = d } }

// WithErrorHandler sets a function called (from Run's goroutine) when a pin write
// fails; the board keeps going and retries at the next pass. f must not call the
// Board.
func WithErrorHandler(f func(lamp string, err error)) Option {
	return func(b *Board) { b.onError = f }
}

// Board drives a set of lamps from the entries it is given.
type Board struct {
	lamps       []Lamp
	clock       clockwork.Clock
	period      time.Duration
	faultWindow time.Duration
	onError     func(lamp string, err error)

	kick chan struct{} // Publish → Run: levels may have changed

	mu        sync.Mutex
	strings   map[string]monitor.State
	counts    [monitor.Alarm + 1]int // strings per state
	lastFault time.Time              // board clock; zero = never
	halted    bool
	levels    []gpio.Level // last level written to each lamp
}

var _ monitor.Sink = (*Board)(nil)

// New checks the lamps and drives every pin low. A lamp without a pin, a pin used
// twice or an unknown Shows value is an error naming the lamp.
func New(lamps []Lamp, opts ...Option) (*Board, error) {
	b := &Board{
		lamps:       append([]Lamp(nil), lamps...),
		clock:       clockwork.NewRealClock(),
		period:      DefaultBlinkPeriod,
		faultWindow: DefaultFaultWindow,
		kick:        make(chan struct{}, 1),
		strings:     make(map[string]monitor.State),
		levels:      make([]gpio.Level, len(lamps)),
	}
	for _, o := range opts {
		o(b)
	}
	if b.period <= 0 || b.faultWindow <= 0 {
		return nil, fmt.Errorf("lamp: blink period %v and fault window %v must be positive", b.period, b.faultWindow)
	}
	if err := checkLamps(b.lamps); err != nil {
		return nil, err
	}
	for i, l := range b.lamps {
		if err := l.Pin.Out(gpio.Low); err != nil {
			return nil, fmt.Errorf("lamp: %s on %s: set low: %w", l.Name, l.Pin.Name(), err)
		}
		b.levels[i] = gpio.Low
	}
	return b, nil
}

func checkLamps(lamps []Lamp) error {
	pins := make(map[string]string)
	for i, l := range lamps {
		name := l.Name
		if name == "" {
			name = fmt.Sprintf("#%d", i+1)
		}
		if l.Pin == nil {
			return fmt.Errorf("lamp: %s: no pin", name)
		}
		if !validShow(l.Shows) {
			return fmt.Errorf("lamp: %s: shows %q, want one of %v", name, l.Shows, validShows)
		}
		if p := l.Pin.Name(); p != "" {
			if other, dup := pins[p]; dup {
				return fmt.Errorf("lamp: %s: pin %s is already used by lamp %s", name, p, other)
			}
			pins[p] = name
		}
	}
	return nil
}

func validShow(s string) bool {
	for _, v := range validShows {
		if s == v {
			return true
		}
	}
	return false
}

// Publish records the entry's string state or fault and wakes Run. It never blocks
// and never writes a pin.
func (b *Board) Publish(e monitor.Entry) {
	b.mu.Lock()
	switch {
	case e.Kind == monitor.KindFault:
		b.lastFault = b.clock.Now()
	case (e.Kind == monitor.KindReading || e.Kind == monitor.KindState) && e.String != "":
		b.setState(e.String, e.State)
	}
	b.mu.Unlock()
	select {
	case b.kick <- struct{}{}:
	default: // a wake-up is already pending
	}
}

func (b *Board) setState(id string, s monitor.State) {
	if s > monitor.Alarm {
		return // unknown state from a newer writer: ignore rather than index out of range
	}
	if old, ok := b.strings[id]; ok {
		b.counts[old]--
	}
	b.strings[id] = s
	b.counts[s]++
}

// Run drives the lamps until ctx is done: it applies changes published since the
// last pass and toggles blinking lamps every half period. It returns nil when ctx
// is cancelled; call Halt afterwards for the exit state.
func (b *Board) Run(ctx context.Context) error {
	tick := b.clock.NewTicker(b.period / 2)
	defer tick.Stop()
	phase := true // the first half period is "on"
	b.apply(phase)
	for {
		select {
		case <-ctx.Done():
			return nil
		case <-b.kick:
		case <-tick.Chan():
			phase = !phase
		}
		b.apply(phase)
	}
}

// apply writes every lamp whose level differs from the last one written.
func (b *Board) apply(phase bool) {
	b.mu.Lock()
	defer b.mu.Unlock()
	if b.halted {
		return
	}
	for i, l := range b.lamps {
		want := b.level(l, phase)
		if want == b.levels[i] {
			continue
		}
		if err := l.Pin.Out(want); err != nil {
			if b.onError != nil {
				b.onError(l.Name, fmt.Errorf("lamp: %s on %s: %w", l.Name, l.Pin.Name(), err))
			}
			continue // levels[i] unchanged: the write is retried at the next pass
		}
		b.levels[i] = want
	}
}

// level is the level lamp l should have now; b.mu is held.
func (b *Board) level(l Lamp, phase bool) gpio.Level {
	if l.Shows == ShowsAlive {
		return gpio.Level(phase)
	}
	if !b.condition(l.Shows) {
		return gpio.Low
	}
	return gpio.Level(!l.Blink || phase)
}

// condition reports whether what a lamp shows holds now; b.mu is held.
func (b *Board) condition(shows string) bool {
	switch shows {
	case ShowsAlarm:
		return b.counts[monitor.Alarm] > 0
	case ShowsSettling:
		return b.counts[monitor.Settling] > 0
	case ShowsOffTarget:
		return b.counts[monitor.OffTarget] > 0
	case ShowsSteady:
		heard := len(b.strings) - b.counts[monitor.Quiet]
		return heard > 0 && b.counts[monitor.Steady] == heard
	case ShowsFault:
		return !b.lastFault.IsZero() && b.clock.Since(b.lastFault) < b.faultWindow
	}
	return false
}

// Halt drives every lamp low, the defined exit state, and stops Run from writing
// again. It writes every pin even if the board believes it is already low, tries
// every pin even when one fails, and returns the failures joined.
func (b *Board) Halt() error {
	b.mu.Lock()
	defer b.mu.Unlock()
	b.halted = true
	var errs []error
	for i, l := range b.lamps {
		if err := l.Pin.Out(gpio.Low); err != nil {
			errs = append(errs, fmt.Errorf("lamp: %s on %s: set low: %w", l.Name, l.Pin.Name(), err))
			continue
		}
		b.levels[i] = gpio.Low
	}
	return errors.Join(errs...)
}

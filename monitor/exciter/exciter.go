package exciter

import (
	"context"
	"errors"
	"fmt"
	"sort"
	"sync"
	"time"

	"github.com/jonboulle/clockwork"
	"periph.io/x/conn/v3/gpio"
)

// HardMaxPulse is the longest pulse Strike ever produces, whatever the options say.
// Solenoid and electromagnet exciters need a few to a few tens of milliseconds; a
// quarter second is already far beyond any useful pulse (engineering limit, common
// practice, no source).
const HardMaxPulse = 250 * time.Millisecond

// ErrHalted is returned by Strike after Halt.
var ErrHalted = errors.New("exciter: halted")

// Options configure a Driver.
type Options struct {
	Pulse    time.Duration   // how long a strike holds the line high
	MaxPulse time.Duration   // Pulse may never exceed this; at most HardMaxPulse
	Clock    clockwork.Clock // nil = the real clock
}

// Driver sounds strings through their exciter lines, one strike at a time.
type Driver struct {
	pins  map[string]gpio.PinOut // string id → line (several strings may share a line)
	lines []gpio.PinOut          // each distinct line once, for Halt
	pulse time.Duration
	clock clockwork.Clock

	busy chan struct{} // holds a token while a strike is in progress
	stop chan struct{} // closed by Halt

	mu     sync.Mutex
	halted bool
}

// New checks the options and the pins and drives every line low.
func New(pins map[string]gpio.PinOut, opts Options) (*Driver, error) {
	if err := checkOptions(opts); err != nil {
		return nil, err
	}
	d := &Driver{
		pins:  make(map[string]gpio.PinOut, len(pins)),
		pulse: opts.Pulse,
		clock: opts.Clock,
		busy:  make(chan struct{}, 1),
		stop:  make(chan struct{}),
	}
	if d.clock == nil {
		d.clock = clockwork.NewRealClock()
	}
	seen := make(map[gpio.PinOut]bool)
	for _, id := range sortedIDs(pins) {
		p := pins[id]
		if p == nil {
			return nil, fmt.Errorf("exciter: string %s: no pin", id)
		}
		d.pins[id] = p
		if !seen[p] {
			seen[p] = true
			d.lines = append(d.lines, p)
		}
	}
	for _, p := range d.lines {
		if err := p.Out(gpio.Low); err != nil {
			return nil, fmt.Errorf("exciter: %s: set low: %w", p.Name(), err)
		}
	}
	return d, nil
}

func checkOptions(o Options) error {
	switch {
	case o.Pulse <= 0:
		return fmt.Errorf("exciter: pulse %v: want a positive duration", o.Pulse)
	case o.MaxPulse <= 0:
		return fmt.Errorf("exciter: max pulse %v: want a positive duration", o.MaxPulse)
	case o.MaxPulse > HardMaxPulse:
		return fmt.Errorf("exciter: max pulse %v is over the hard limit %v", o.MaxPulse, HardMaxPulse)
	case o.Pulse > o.MaxPulse:
		return fmt.Errorf("exciter: pulse %v is longer than max pulse %v", o.Pulse, o.MaxPulse)
	}
	return nil
}

func sortedIDs(pins map[string]gpio.PinOut) []string {
	ids := make([]string, 0, len(pins))
	for id := range pins {
		ids = append(ids, id)
	}
	sort.Strings(ids)
	return ids
}

// Strings returns the ids of the strings the driver can sound, sorted.
func (d *Driver) Strings() []string { return sortedIDs(d.pins) }

// Strike drives the string's line high for the pulse, then low. It waits for a
// strike in progress to finish first. If ctx ends during the pulse the line goes
// low at once and ctx's error is returned. The line is driven low even when
// driving it high failed.
func (d *Driver) Strike(ctx context.Context, stringID string) error {
	p, ok := d.pins[stringID]
	if !ok {
		return fmt.Errorf("exciter: string %s has no exciter line", stringID)
	}
	select {
	case d.busy <- struct{}{}:
	case <-ctx.Done():
		return ctx.Err()
	}
	defer func() { <-d.busy }()
	pulse := min(d.pulse, HardMaxPulse)
	halted, errHigh := d.start(p)
	if halted {
		return ErrHalted
	}
	var errWait error
	if errHigh == nil {
		select {
		case <-d.clock.After(pulse):
		case <-ctx.Done():
			errWait = ctx.Err()
		case <-d.stop:
			errWait = ErrHalted
		}
	}
	errLow := p.Out(gpio.Low)
	switch {
	case errLow != nil:
		return fmt.Errorf("exciter: strike %s on %s: set low: %w", stringID, p.Name(), errLow)
	case errHigh != nil:
		return fmt.Errorf("exciter: strike %s on %s: set high: %w", stringID, p.Name(), errHigh)
	}
	return errWait
}

// start drives p high unless the driver is halted. Holding mu across the write
// means Halt either comes first (no pulse) or forces the line low after it.
func (d *Driver) start(p gpio.PinOut) (halted bool, err error) {
	d.mu.Lock()
	defer d.mu.Unlock()
	if d.halted {
		return true, nil
	}
	return false, p.Out(gpio.High)
}

// Halt drives every line low, the defined exit state, cuts a pulse in progress
// short (that Strike returns ErrHalted) and makes later strikes return ErrHalted.
// Calling it again drives the lines low again.
func (d *Driver) Halt() error {
	d.mu.Lock()
	defer d.mu.Unlock()
	if !d.halted {
		d.halted = true
		close(d.stop)
	}
	var errs []error
	for _, p := range d.lines {
		if err := p.Out(gpio.Low); err != nil {
			errs = append(errs, fmt.Errorf("exciter: %s: set low: %w", p.Name(), err))
		}
	}
	return errors.Join(errs...)
}

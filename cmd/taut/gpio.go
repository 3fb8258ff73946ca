package main

import (
	"errors"
	"fmt"
	"strings"
	"time"

	"github.com/rs/zerolog"
	"periph.io/x/conn/v3/gpio"
	"periph.io/x/conn/v3/gpio/gpioreg"
	"periph.io/x/conn/v3/physic"

	"taut/monitor/exciter"
	"taut/monitor/instrument"
	"taut/monitor/lamp"
)

// gpioHelp is what an installer checks when a pin is missing.
const gpioHelp = "check the pin name as periph knows it (e.g. GPIO17), that the user running taut " +
	"can open /dev/gpiochip* (member of the gpio group; udev rule SUBSYSTEM==\"gpio\", GROUP=\"gpio\", MODE=\"0660\"), " +
	"and that this board has the pin"

// pinLookup finds GPIO pins. setupLamps and setupExciter use periph's process-wide
// registry (hostPins); tests pass their own so that they depend neither on pins other
// tests registered nor on the order tests run in.
type pinLookup struct {
	byName func(name string) gpio.PinIO // nil for a pin that does not exist
	all    func() []gpio.PinIO          // every pin; none = no usable GPIO on this machine
}

// hostPins looks pins up in periph's registry; host.Init must have run.
func hostPins() pinLookup {
	return pinLookup{byName: gpioreg.ByName, all: gpioreg.All}
}

// setupLamps builds the lamp board from the config with periph's pins. host.Init must
// have run. See setupLampsWith.
func setupLamps(cfg instrument.Lamps, off bool, log zerolog.Logger) (*lamp.Board, error) {
	return setupLampsWith(hostPins(), cfg, off, log)
}

// setupLampsWith builds the lamp board from the config. Pins are looked up by name;
// when the machine has no GPIO, or off is set (--lamps=off), every lamp is logged
// instead of driven, with one warning. With lamps.required a missing pin is an error
// naming every missing lamp and pin; without it, the missing lamps are logged instead
// (one warning) and the others are driven.
func setupLampsWith(pins pinLookup, cfg instrument.Lamps, off bool, log zerolog.Logger) (*lamp.Board, error) {
	noGPIO := len(pins.all()) == 0
	var lamps []lamp.Lamp
	var missing []string
	for _, lc := range cfg.Lamp {
		var pin gpio.PinOut
		if !off {
			if p := pins.byName(lc.Pin); p != nil {
				pin = p
			} else {
				missing = append(missing, fmt.Sprintf("lamp %q on pin %q", lc.Name, lc.Pin))
			}
		}
		if pin == nil {
			pin = newLogPin(lc, log)
		}
		lamps = append(lamps, lamp.Lamp{Name: lc.Name, Shows: lc.Shows, Blink: lc.Blink, Pin: pin})
	}
	if err := lampWarnings(cfg, off, noGPIO, missing, log); err != nil {
		return nil, err
	}
	return lamp.New(lamps, lamp.WithErrorHandler(lampErrorLogger(log)))
}

// lampWarnings logs the one warning about logged lamps, or fails when the config
// requires lamps that are not there.
func lampWarnings(cfg instrument.Lamps, off, noGPIO bool, missing []string, log zerolog.Logger) error {
	switch {
	case len(cfg.Lamp) == 0:
		return nil
	case off:
		log.Warn().Int("lamps", len(cfg.Lamp)).Msg("lamps off (--lamps=off): lamp changes are logged instead of driven")
	case noGPIO && cfg.Required:
		return fmt.Errorf("lamps are required (lamps.required = true) but this machine has no usable GPIO "+
			"(no GPIO chip found, or no permission to open one), so these pins were not found: %s; %s; or pass --lamps=off",
			strings.Join(missing, ", "), gpioHelp)
	case noGPIO:
		log.Warn().Int("lamps", len(cfg.Lamp)).Msg("no GPIO on this machine (no GPIO chip, or no permission to open /dev/gpiochip*): " +
			"lamp changes are logged instead; set lamps.required = true to make this a start-up error")
	case len(missing) > 0 && cfg.Required:
		return fmt.Errorf("lamps are required (lamps.required = true) but GPIO pins were not found: %s; %s; or pass --lamps=off",
			strings.Join(missing, ", "), gpioHelp)
	case len(missing) > 0:
		log.Warn().Strs("missing", missing).Msg("GPIO pins not found, those lamps are logged instead; " + gpioHelp)
	}
	return nil
}

// lampErrorLogger logs failing pin writes at most once a minute per lamp (the board
// retries at every pass, twice a second).
func lampErrorLogger(log zerolog.Logger) func(string, error) {
	last := map[string]time.Time{} // only called from the board's Run goroutine
	return func(name string, err error) {
		if t, ok := last[name]; ok && time.Since(t) < time.Minute {
			return
		}
		last[name] = time.Now()
		log.Error().Err(err).Str("lamp", name).Msg("lamp write failed; retrying")
	}
}

// logPin is a gpio.PinOut that logs level changes instead of driving a line. A
// blinking or heartbeat lamp toggles twice a second, so those go to debug level.
type logPin struct {
	lamp    instrument.Lamp
	log     zerolog.Logger
	level   gpio.Level
	written bool
}

var _ gpio.PinOut = (*logPin)(nil)

func newLogPin(lc instrument.Lamp, log zerolog.Logger) *logPin { return &logPin{lamp: lc, log: log} }

func (p *logPin) String() string   { return "logged lamp " + p.lamp.Name }
func (p *logPin) Halt() error      { return nil }
func (p *logPin) Name() string     { return p.lamp.Pin } // lamp.New still catches a pin named twice
func (p *logPin) Number() int      { return -1 }
func (p *logPin) Function() string { return "Out/logged" }

func (p *logPin) PWM(gpio.Duty, physic.Frequency) error {
	return errors.New("logged lamp: no PWM")
}

// Out logs a change of level; the first low (the board's start state) is silent.
func (p *logPin) Out(l gpio.Level) error {
	if (p.written && l == p.level) || (!p.written && l == gpio.Low) {
		p.level, p.written = l, true
		return nil
	}
	p.level, p.written = l, true
	ev := p.log.Info()
	if p.lamp.Blink || p.lamp.Shows == lamp.ShowsAlive {
		ev = p.log.Debug()
	}
	state := "off"
	if l {
		state = "on"
	}
	ev.Str("lamp", p.lamp.Name).Str("pin", p.lamp.Pin).Str("shows", p.lamp.Shows).Msg("lamp " + state)
	return nil
}

// setupExciter builds the exciter driver with periph's pins. host.Init must have run.
// See setupExciterWith.
func setupExciter(cfg *instrument.Config, log zerolog.Logger) (*exciter.Driver, error) {
	return setupExciterWith(hostPins(), cfg, log)
}

// setupExciterWith builds the exciter driver when the config enables it (nil, nil
// otherwise). Every string's exciter pin must exist.
func setupExciterWith(lookup pinLookup, cfg *instrument.Config, log zerolog.Logger) (*exciter.Driver, error) {
	ec := cfg.Exciter
	if !ec.Enabled {
		return nil, nil
	}
	pins := make(map[string]gpio.PinOut)
	var missing []string
	for _, s := range cfg.Instrument.Strings {
		if s.ExciterPin == "" {
			continue
		}
		p := lookup.byName(s.ExciterPin)
		if p == nil {
			missing = append(missing, fmt.Sprintf("string %s on pin %q", s.ID, s.ExciterPin))
			continue
		}
		pins[s.ID] = p
	}
	switch {
	case len(missing) > 0:
		return nil, fmt.Errorf("exciter is enabled but GPIO pins were not found: %s; %s; or set exciter.enabled = false",
			strings.Join(missing, ", "), gpioHelp)
	case len(pins) == 0:
		return nil, errors.New("exciter is enabled but no string has an exciter pin: set exciter_pin on the strings to drive, or exciter.enabled = false")
	}
	d, err := exciter.New(pins, exciter.Options{Pulse: ec.Pulse, MaxPulse: ec.MaxPulse})
	if err != nil {
		return nil, err
	}
	log.Info().Int("strings", len(pins)).Dur("pulse", ec.Pulse).Dur("max_pulse", ec.MaxPulse).
		Msg("exciter ready; its driver must be safe on its own if taut dies (pull-down, hardware pulse limit)")
	return d, nil
}

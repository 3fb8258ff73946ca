package instrument

import (
	"fmt"
	"regexp"
	"strings"
	"time"
)

type rawLamps struct {
	Required any       `toml:"required"`
	Lamp     []rawLamp `toml:"lamp"`
}

type rawLamp struct {
	Name  any `toml:"name"`
	Pin   any `toml:"pin"`
	Shows any `toml:"shows"`
	Blink any `toml:"blink"`
}

// LampShows lists what a lamp may show (Lamp.Shows).
var LampShows = []string{"alarm", "settling", "steady", "off-target", "fault", "alive"}

func (p *parser) lamps(r *rawLamps) Lamps {
	ls := Lamps{Required: p.c.optBool(p.at("lamps.required"), r.Required, false)}
	names := map[string]bool{}
	for i, rl := range r.Lamp {
		key := fmt.Sprintf("lamps.lamp.%d", i)
		at := func(k string) pos {
			a := p.at(key + "." + k)
			a.field = fmt.Sprintf("lamps.lamp#%d.%s", i+1, k)
			if a.line == 0 {
				a.line = p.loc.line(key)
			}
			return a
		}
		l := Lamp{
			Name:  p.c.optString(at("name"), rl.Name, ""),
			Pin:   p.c.optString(at("pin"), rl.Pin, ""),
			Shows: p.c.optOneOf(at("shows"), rl.Shows, "", LampShows...),
			Blink: p.c.optBool(at("blink"), rl.Blink, false),
		}
		if rl.Shows == nil {
			p.c.add(at("shows"), nil, "missing; want one of %s", quoteList(LampShows))
		}
		if l.Name == "" {
			l.Name = l.Shows
		}
		if l.Pin == "" {
			p.c.add(at("pin"), rl.Pin, `want a GPIO pin name, e.g. "GPIO17"`)
		}
		if names[l.Name] && l.Name != "" {
			p.c.add(at("name"), l.Name, "duplicate lamp name; want a unique name per lamp")
		}
		names[l.Name] = true
		ls.Lamp = append(ls.Lamp, l)
	}
	return ls
}

type rawExciter struct {
	Enabled    any `toml:"enabled"`
	Interval   any `toml:"interval"`
	Pulse      any `toml:"pulse"`
	MaxPulse   any `toml:"max_pulse"`
	Listen     any `toml:"listen"`
	QuietHours any `toml:"quiet_hours"`
}

var quietHoursRE = regexp.MustCompile(`^([01][0-9]|2[0-3]):[0-5][0-9]-([01][0-9]|2[0-3]):[0-5][0-9]$`)

// exciter reads [exciter]. The pulse may never exceed max_pulse, and max_pulse is
// capped at 1 s: a coil held longer than that is a fault, not a pluck (engineering
// judgement).
func (p *parser) exciter(r *rawExciter, strs []String) Exciter {
	d := DefaultExciter
	c := &p.c
	e := Exciter{
		Enabled:    c.optBool(p.at("exciter.enabled"), r.Enabled, false),
		Interval:   c.optDuration(p.at("exciter.interval"), r.Interval, d.Interval, time.Second, 24*time.Hour),
		Pulse:      c.optDuration(p.at("exciter.pulse"), r.Pulse, d.Pulse, 100*time.Microsecond, time.Second),
		MaxPulse:   c.optDuration(p.at("exciter.max_pulse"), r.MaxPulse, d.MaxPulse, 100*time.Microsecond, time.Second),
		Listen:     c.optDuration(p.at("exciter.listen"), r.Listen, d.Listen, 100*time.Millisecond, time.Minute),
		QuietHours: c.optString(p.at("exciter.quiet_hours"), r.QuietHours, ""),
	}
	if e.Pulse > e.MaxPulse {
		c.add(p.at("exciter.pulse"), r.Pulse, "pulse %v is longer than max_pulse %v; want pulse ≤ max_pulse", e.Pulse, e.MaxPulse)
	}
	if e.QuietHours != "" && !quietHoursRE.MatchString(strings.TrimSpace(e.QuietHours)) {
		c.add(p.at("exciter.quiet_hours"), r.QuietHours, `want "HH:MM-HH:MM" in 24-hour local time, e.g. "22:00-07:00", or "" for none`)
	}
	if e.Enabled {
		n := 0
		for _, s := range strs {
			if s.ExciterPin != "" {
				n++
			}
		}
		if n == 0 && len(strs) > 0 {
			c.add(p.at("exciter.enabled"), true, "no string has an exciter_pin; want exciter_pin on the strings to drive, or enabled = false")
		}
		if rounds := time.Duration(n) * (e.Listen + e.MaxPulse); n > 0 && rounds > e.Interval {
			c.add(p.at("exciter.interval"), e.Interval.String(), "a round of %d strings takes up to %v; want an interval at least that long", n, rounds)
		}
	}
	return e
}

// checkPins reports a GPIO pin used twice by lamps and exciters. Strings of one
// note (a unison) may share an exciter, as the strings of a piano unison share a hammer.
func (p *parser) checkPins(cfg *Config) {
	type user struct{ who, note string }
	users := map[string]user{}
	use := func(pin string, u user, at pos) {
		if pin == "" {
			return
		}
		k := strings.ToUpper(pin)
		if prev, dup := users[k]; dup && (prev.note == "" || prev.note != u.note) {
			p.c.add(at, pin, "pin already used by %s; want one pin per lamp and per note's exciter", prev.who)
			return
		}
		users[k] = u
	}
	for i, l := range cfg.Lamps.Lamp {
		at := p.at(fmt.Sprintf("lamps.lamp.%d.pin", i))
		at.field = fmt.Sprintf("lamps.lamp#%d.pin", i+1)
		use(l.Pin, user{who: "lamp " + l.Name}, at)
	}
	for _, s := range cfg.Instrument.Strings {
		use(s.ExciterPin, user{who: "the exciter of string " + s.ID, note: s.Note}, p.pinAt[s.ID])
	}
}

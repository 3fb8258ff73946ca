package instrument

import (
	"math"
	"strconv"
	"strings"
	"time"
)

// The converters below accept a value as decoded from TOML (string, int64, float64,
// bool, or nil when absent) or as read from a CSV cell (string). On a bad value they
// record an error and return ok = false. check, when not nil, returns "" for a good
// value or the expectation for a bad one.

// number converts a TOML number or a numeric CSV cell.
func (c *collector) number(at pos, v any, want string) (float64, bool) {
	var f float64
	switch x := v.(type) {
	case float64:
		f = x
	case int64:
		f = float64(x)
	case string:
		p, err := strconv.ParseFloat(strings.TrimSpace(x), 64)
		if err != nil {
			c.add(at, v, "want %s", want)
			return 0, false
		}
		f = p
	default:
		c.add(at, v, "want %s", want)
		return 0, false
	}
	if math.IsNaN(f) || math.IsInf(f, 0) {
		c.add(at, v, "want %s", want)
		return 0, false
	}
	return f, true
}

// optNumber returns def when v is absent, else the number if check passes.
func (c *collector) optNumber(at pos, v any, def float64, want string, check func(float64) bool) float64 {
	if v == nil {
		return def
	}
	f, ok := c.number(at, v, want)
	if !ok {
		return def
	}
	if check != nil && !check(f) {
		c.add(at, v, "want %s", want)
		return def
	}
	return f
}

// optInt returns def when v is absent, else a whole number within [lo, hi].
func (c *collector) optInt(at pos, v any, def, lo, hi int64, want string) int64 {
	if v == nil {
		return def
	}
	f, ok := c.number(at, v, want)
	if !ok {
		return def
	}
	if f != math.Trunc(f) || f < float64(lo) || f > float64(hi) {
		c.add(at, v, "want %s", want)
		return def
	}
	return int64(f)
}

// optString returns def when v is absent, else the string.
func (c *collector) optString(at pos, v any, def string) string {
	if v == nil {
		return def
	}
	s, ok := v.(string)
	if !ok {
		c.add(at, v, "want a quoted string")
		return def
	}
	return s
}

// optOneOf returns def when v is absent, else a string from the allowed set.
func (c *collector) optOneOf(at pos, v any, def string, allowed ...string) string {
	s := c.optString(at, v, def)
	for _, a := range allowed {
		if s == a {
			return s
		}
	}
	if v != nil {
		if _, isString := v.(string); isString {
			c.add(at, v, "want one of %s%s", quoteList(allowed), suggest(s, allowed))
		}
	}
	return def
}

// optBool returns def when v is absent, else true or false.
func (c *collector) optBool(at pos, v any, def bool) bool {
	if v == nil {
		return def
	}
	b, ok := v.(bool)
	if !ok {
		c.add(at, v, "want true or false (unquoted)")
		return def
	}
	return b
}

// optDuration returns def when v is absent, else a Go duration string within [lo, hi].
func (c *collector) optDuration(at pos, v any, def, lo, hi time.Duration) time.Duration {
	if v == nil {
		return def
	}
	want := "a quoted duration from " + lo.String() + " to " + hi.String() + `, e.g. "5s", "20ms", "2h"`
	s, ok := v.(string)
	if !ok {
		c.add(at, v, "want %s", want)
		return def
	}
	d, err := time.ParseDuration(strings.TrimSpace(s))
	if err != nil || d < lo || d > hi {
		c.add(at, v, "want %s", want)
		return def
	}
	return d
}

// optStrings returns nil when v is absent, else a list of strings.
func (c *collector) optStrings(at pos, v any) []string {
	if v == nil {
		return nil
	}
	list, ok := v.([]any)
	if !ok {
		c.add(at, v, `want a list of quoted strings, e.g. ["a.wav", "b.wav"]`)
		return nil
	}
	out := make([]string, 0, len(list))
	for _, x := range list {
		s, ok := x.(string)
		if !ok {
			c.add(at, x, "want a quoted string in the list")
			continue
		}
		out = append(out, s)
	}
	return out
}

func quoteList(xs []string) string {
	q := make([]string, len(xs))
	for i, x := range xs {
		q[i] = strconv.Quote(x)
	}
	return strings.Join(q, ", ")
}

package journal

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"time"
	"unicode/utf8"

	"taut/monitor"
)

// appendEntry appends e as one JSON object and a newline to dst. The bytes are exactly what
// encoding/json.Marshal would produce for monitor.Entry (field order, omitempty, number and
// string formats; a test holds it to that), without reflection or allocation.
//
// It refuses values that would not read back as the same entry: an empty kind, NaN or
// infinite numbers, a state without a name, a year outside 0–9999 or a zone offset of 24
// hours or more.
// A zone offset with a seconds part (historic local mean time) is written in UTC, since
// RFC 3339 offsets have minutes only and the instant would otherwise shift.
func appendEntry(dst []byte, e *monitor.Entry) ([]byte, error) {
	if err := checkEntry(e); err != nil {
		return dst, err
	}
	b := append(dst, `{"seq":`...)
	b = strconv.AppendUint(b, e.Seq, 10)
	b = append(b, `,"kind":`...)
	b = appendString(b, string(e.Kind))
	b = append(b, `,"time":"`...)
	b = appendTime(b, e.Time)
	b = append(b, `","mono_s":`...)
	b = appendFloat(b, e.MonoS)
	b = append(b, `,"run":`...)
	b = appendString(b, e.Run)
	if e.String != "" {
		b = append(b, `,"string":`...)
		b = appendString(b, e.String)
	}
	b = appendOptFloat(b, `,"fundamental_hz":`, e.FundamentalHz)
	b = appendOptFloat(b, `,"f0_hz":`, e.F0Hz)
	b = appendOptFloat(b, `,"inharmonicity":`, e.Inharmonicity)
	b = append(b, `,"cents":`...)
	b = appendFloat(b, e.Cents)
	b = appendOptFloat(b, `,"tension_n":`, e.TensionN)
	b = appendOptFloat(b, `,"margin":`, e.Margin)
	b = append(b, `,"rate_cents_per_hour":`...)
	b = appendFloat(b, e.RateCentsHour)
	b = appendOptFloat(b, `,"clarity":`, e.Clarity)
	if e.Partials != 0 {
		b = append(b, `,"partials":`...)
		b = strconv.AppendInt(b, int64(e.Partials), 10)
	}
	b = append(b, `,"state":"`...)
	b = append(b, e.State.String()...)
	b = append(b, '"')
	if e.Prev != nil {
		b = append(b, `,"prev_state":"`...)
		b = append(b, e.Prev.String()...)
		b = append(b, '"')
	}
	if e.Reason != "" {
		b = append(b, `,"reason":`...)
		b = appendString(b, e.Reason)
	}
	if e.Detail != "" {
		b = append(b, `,"detail":`...)
		b = appendString(b, e.Detail)
	}
	if e.GapFrames != 0 {
		b = append(b, `,"gap_frames":`...)
		b = strconv.AppendInt(b, e.GapFrames, 10)
	}
	b = appendOptFloat(b, `,"clock_jump_s":`, e.ClockJumpS)
	return append(b, "}\n"...), nil
}

// checkEntry reports the first value appendEntry cannot write faithfully.
func checkEntry(e *monitor.Entry) error {
	floats := [...]struct {
		name string
		v    float64
	}{
		{"mono_s", e.MonoS}, {"fundamental_hz", e.FundamentalHz}, {"f0_hz", e.F0Hz},
		{"inharmonicity", e.Inharmonicity}, {"cents", e.Cents}, {"tension_n", e.TensionN},
		{"margin", e.Margin}, {"rate_cents_per_hour", e.RateCentsHour},
		{"clarity", e.Clarity}, {"clock_jump_s", e.ClockJumpS},
	}
	for _, f := range floats {
		if math.IsNaN(f.v) || math.IsInf(f.v, 0) {
			return fmt.Errorf("field %s is %v (want a finite number)", f.name, f.v)
		}
	}
	if e.Kind == "" {
		return errors.New("field kind is empty (want reading, state, gap, ...)")
	}
	if e.State > monitor.Alarm {
		return fmt.Errorf("field state is %v (want quiet, settling, steady, off-target or alarm)", e.State)
	}
	if e.Prev != nil && *e.Prev > monitor.Alarm {
		return fmt.Errorf("field prev_state is %v (want quiet, settling, steady, off-target or alarm)", *e.Prev)
	}
	t := wireTime(e.Time)
	if y := t.Year(); y < 0 || y > 9999 {
		return fmt.Errorf("field time has year %d (want 0 to 9999)", y)
	}
	if _, off := t.Zone(); off <= -24*3600 || off >= 24*3600 {
		return fmt.Errorf("field time has zone offset %ds (want under 24 hours)", off)
	}
	return nil
}

// wireTime is the time as written: without a monotonic reading, in UTC when its zone
// offset cannot be written exactly in RFC 3339.
func wireTime(t time.Time) time.Time {
	if _, off := t.Zone(); off%60 != 0 {
		return t.UTC()
	}
	return t
}

func appendTime(b []byte, t time.Time) []byte {
	return wireTime(t).AppendFormat(b, time.RFC3339Nano)
}

func appendOptFloat(b []byte, key string, f float64) []byte {
	if f == 0 {
		return b
	}
	return appendFloat(append(b, key...), f)
}

// appendFloat formats f like encoding/json: shortest representation that parses back to
// the same float64, exponent form only for very small or very large magnitudes.
func appendFloat(b []byte, f float64) []byte {
	format := byte('f')
	if abs := math.Abs(f); abs != 0 && (abs < 1e-6 || abs >= 1e21) {
		format = 'e'
	}
	b = strconv.AppendFloat(b, f, format, -1, 64)
	if format == 'e' {
		// Clean up e-09 to e-9, as encoding/json does.
		n := len(b)
		if n >= 4 && b[n-4] == 'e' && b[n-3] == '-' && b[n-2] == '0' {
			b[n-2] = b[n-1]
			b = b[:n-1]
		}
	}
	return b
}

const hexDigits = "0123456789abcdef"

// appendString quotes s like encoding/json with HTML escaping: control characters, quote,
// backslash, <, > and & escaped; invalid UTF-8 replaced by U+FFFD; U+2028 and U+2029
// escaped. The result never contains a raw newline, so one entry is always one line.
func appendString(b []byte, s string) []byte {
	b = append(b, '"')
	start := 0
	for i := 0; i < len(s); {
		if c := s[i]; c < utf8.RuneSelf {
			if c >= 0x20 && c != '"' && c != '\\' && c != '<' && c != '>' && c != '&' {
				i++
				continue
			}
			b = append(b, s[start:i]...)
			b = appendEscapedByte(b, c)
			i++
			start = i
			continue
		}
		r, size := utf8.DecodeRuneInString(s[i:])
		if r == utf8.RuneError && size == 1 {
			b = append(b, s[start:i]...)
			b = append(b, `\ufffd`...)
			i += size
			start = i
			continue
		}
		if r == '\u2028' || r == '\u2029' {
			b = append(b, s[start:i]...)
			b = append(b, '\\', 'u', '2', '0', '2', hexDigits[r&0xF])
			i += size
			start = i
			continue
		}
		i += size
	}
	b = append(b, s[start:]...)
	return append(b, '"')
}

func appendEscapedByte(b []byte, c byte) []byte {
	switch c {
	case '\\', '"':
		return append(b, '\\', c)
	case '\b':
		return append(b, '\\', 'b')
	case '\f':
		return append(b, '\\', 'f')
	case '\n':
		return append(b, '\\', 'n')
	case '\r':
		return append(b, '\\', 'r')
	case '\t':
		return append(b, '\\', 't')
	}
	return append(b, '\\', 'u', '0', '0', hexDigits[c>>4], hexDigits[c&0xF])
}

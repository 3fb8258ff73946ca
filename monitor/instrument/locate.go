package instrument

import (
	"strconv"
	"strings"
)

// locator maps TOML key paths to the lines they were written on. The TOML decoder
// does not expose key positions, so this is a light line scanner: it follows
// [table] and [[array]] headers and "key =" lines. Paths number array elements,
// e.g. "string.2.length_mm" (0-based) and "lamps.lamp.0.pin". A value it cannot
// place (inside a multi-line string or an inline table) gets line 0: unknown.
type locator struct {
	lines map[string]int   // indexed path → line
	plain map[string][]int // path without array indices → lines in order
}

func newLocator(src string) *locator {
	l := &locator{lines: map[string]int{}, plain: map[string][]int{}}
	counts := map[string]int{}
	prefix, plainPrefix := "", ""
	for i, raw := range strings.Split(src, "\n") {
		line := strings.TrimSpace(stripComment(raw))
		switch {
		case line == "":
		case strings.HasPrefix(line, "[["):
			name := keyPath(strings.TrimSuffix(strings.TrimPrefix(line, "[["), "]]"))
			prefix = name + "." + strconv.Itoa(counts[name])
			counts[name]++
			plainPrefix = name
			l.record(prefix, plainPrefix, i+1)
		case strings.HasPrefix(line, "["):
			name := keyPath(strings.TrimSuffix(strings.TrimPrefix(line, "["), "]"))
			prefix, plainPrefix = name, name
			l.record(prefix, plainPrefix, i+1)
		default:
			eq := strings.IndexByte(line, '=')
			if eq <= 0 {
				continue
			}
			key := keyPath(line[:eq])
			l.record(join(prefix, key), join(plainPrefix, key), i+1)
		}
	}
	return l
}

func (l *locator) record(path, plain string, line int) {
	if _, seen := l.lines[path]; !seen {
		l.lines[path] = line
	}
	l.plain[plain] = append(l.plain[plain], line)
}

// line returns the line of an indexed path, or 0.
func (l *locator) line(path string) int { return l.lines[path] }

// nth returns the line of the n-th (0-based) occurrence of a path without array
// indices, or 0.
func (l *locator) nth(plain string, n int) int {
	if ls := l.plain[plain]; n < len(ls) {
		return ls[n]
	}
	return 0
}

func join(prefix, key string) string {
	if prefix == "" {
		return key
	}
	return prefix + "." + key
}

// keyPath normalises a (possibly dotted or quoted) TOML key to a.b.c.
func keyPath(s string) string {
	parts := strings.Split(s, ".")
	for i, p := range parts {
		parts[i] = strings.Trim(strings.TrimSpace(p), `"'`)
	}
	return strings.Join(parts, ".")
}

// stripComment removes a trailing # comment that is not inside a quoted string.
func stripComment(s string) string {
	var quote byte
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case quote != 0 && c == '\\' && quote == '"':
			i++
		case quote != 0 && c == quote:
			quote = 0
		case quote == 0 && (c == '"' || c == '\''):
			quote = c
		case quote == 0 && c == '#':
			return s[:i]
		}
	}
	return s
}

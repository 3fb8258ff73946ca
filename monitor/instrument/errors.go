package instrument

import (
	"fmt"
	"strings"
)

// FieldError is one problem in a config file or its string table.
type FieldError struct {
	File  string // file as named to Load or Parse, or the CSV table it points to
	Line  int    // 1-based line in File (for a CSV row, the row's line); 0 = unknown
	Field string // e.g. "listen.margin_alarm", "string[3].length_mm", "length_mm"
	Value string // the bad value as written; "" when the field is missing
	Want  string // what was expected
}

func (e *FieldError) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
	}
	b.WriteString(": ")
	if e.Field != "" {
		b.WriteString(e.Field)
		if e.Value != "" {
			fmt.Fprintf(&b, " = %s", e.Value)
		}
		b.WriteString(": ")
	}
	b.WriteString(e.Want)
	return b.String()
}

// Errors is every problem found in one config, in file and line order.
type Errors struct {
	List []*FieldError
}

func (e *Errors) Error() string {
	var b strings.Builder
	if len(e.List) == 1 {
		b.WriteString("instrument: 1 error in config:")
	} else {
		fmt.Fprintf(&b, "instrument: %d errors in config:", len(e.List))
	}
	for _, fe := range e.List {
		b.WriteString("\n  ")
		b.WriteString(fe.Error())
	}
	return b.String()
}

// Unwrap lets errors.As find each FieldError.
func (e *Errors) Unwrap() []error {
	out := make([]error, len(e.List))
	for i, fe := range e.List {
		out[i] = fe
	}
	return out
}

// pos is where a value was written.
type pos struct {
	file  string
	line  int
	field string
}

// collector gathers errors so that one run reports them all.
type collector struct {
	list []*FieldError
}

func (c *collector) add(at pos, value any, want string, a ...any) {
	c.list = append(c.list, &FieldError{
		File: at.file, Line: at.line, Field: at.field, Value: show(value), Want: fmt.Sprintf(want, a...),
	})
}

func (c *collector) err() error {
	if len(c.list) == 0 {
		return nil
	}
	return &Errors{List: c.list}
}

// show renders a value the way the user wrote it.
func show(v any) string {
	switch x := v.(type) {
	case nil:
		return ""
	case string:
		return fmt.Sprintf("%q", x)
	case float64, int64, bool, int:
		return fmt.Sprint(x)
	}
	return fmt.Sprintf("%v", v)
}

// suggest returns ` (did you mean "x"?)` for the candidate closest to name, or "".
func suggest(name string, candidates []string) string {
	if best := closest(name, candidates); best != "" {
		return fmt.Sprintf(" (did you mean %q?)", best)
	}
	return ""
}

// closest returns the candidate within a few edits of name, or "".
func closest(name string, candidates []string) string {
	best, bestD := "", 1<<30
	for _, c := range candidates {
		if d := editDistance(strings.ToLower(name), c); d < bestD {
			best, bestD = c, d
		}
	}
	if best == "" || bestD > max(2, len(name)/3) {
		return ""
	}
	return best
}

// editDistance is the Levenshtein distance between a and b.
func editDistance(a, b string) int {
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}

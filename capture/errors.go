package capture

import (
	"errors"
	"fmt"
)

// Conditions callers may branch on with errors.Is. Every *InputError wraps one of them.
var (
	// ErrTruncated: the input ended inside a frame or before the length its header
	// declared. The complete frames before the end were delivered.
	ErrTruncated = errors.New("capture: truncated input")
	// ErrUnsupported: the header describes audio this package does not decode
	// (compressed, big-endian, 64-bit RIFF, an unknown sample format).
	ErrUnsupported = errors.New("capture: unsupported audio format")
	// ErrMalformed: the header or the samples are impossible (zero channels, a block
	// size that does not match the sample size, a NaN sample, ...).
	ErrMalformed = errors.New("capture: malformed input")
)

// InputError describes input that cannot be read as audio: which input, where, what
// was found and what was expected.
type InputError struct {
	Kind   string // "wav" or "pcm"
	Name   string // file name, "-" for stdin, "" when unknown
	Offset int64  // byte offset of the problem, or -1
	What   string // what was found and what was expected
	Err    error  // ErrTruncated, ErrUnsupported or ErrMalformed
}

func (e *InputError) Error() string {
	s := "capture: " + e.Kind
	if e.Name != "" {
		s += " " + e.Name
	}
	s += ": " + e.What
	if e.Offset >= 0 {
		s += fmt.Sprintf(" (at byte %d)", e.Offset)
	}
	return s
}

func (e *InputError) Unwrap() error { return e.Err }

// named returns err with its input name set when it is an *InputError without one.
func named(err error, name string) error {
	var ie *InputError
	if errors.As(err, &ie) && ie.Name == "" {
		c := *ie
		c.Name = name
		return &c
	}
	return err
}

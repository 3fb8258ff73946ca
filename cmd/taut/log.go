package main

import (
	"fmt"
	"io"
	stdlog "log"
	"os"
	"sync"
	"time"

	"github.com/rs/zerolog"
	"golang.org/x/term"
)

// logFlags are the diagnostic-log flags shared by the commands that run for long.
type logFlags struct {
	level string
	file  string
}

// logOutput is where diagnostics go: stderr, or a file that SIGHUP reopens so that
// logrotate can move it away (the classic move-then-HUP contract).
type logOutput struct {
	mu   sync.Mutex
	path string
	f    *os.File
	w    io.Writer
}

func (o *logOutput) Write(p []byte) (int, error) {
	o.mu.Lock()
	defer o.mu.Unlock()
	return o.w.Write(p)
}

// Reopen closes the log file and opens the same name again; a no-op on stderr.
func (o *logOutput) Reopen() error {
	if o.path == "" {
		return nil
	}
	f, err := openLogFile(o.path)
	if err != nil {
		return err
	}
	o.mu.Lock()
	old := o.f
	o.f, o.w = f, f
	o.mu.Unlock()
	return old.Close()
}

// Close closes the log file, if any.
func (o *logOutput) Close() error {
	if o.f == nil {
		return nil
	}
	o.mu.Lock()
	defer o.mu.Unlock()
	o.w = io.Discard
	return o.f.Close()
}

func openLogFile(path string) (*os.File, error) {
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_APPEND, 0o644)
	if err != nil {
		return nil, fmt.Errorf("open log file: %w (check that the directory exists and is writable, or leave --log.file empty to log to stderr)", err)
	}
	return f, nil
}

// newLogger builds the one zerolog logger of the process: JSON lines to --log.file or,
// when stderr is not a terminal (systemd, a pipe), to stderr; human-readable console
// lines with RFC 3339 times on a terminal. Timestamps have nanoseconds. The standard
// library's log (periph's drivers print with it) is redirected into it.
func newLogger(stderr io.Writer, lf logFlags) (zerolog.Logger, *logOutput, error) {
	level, err := zerolog.ParseLevel(lf.level)
	if err != nil || lf.level == "" {
		return zerolog.Nop(), nil, usagef("--log.level %q: want trace, debug, info, warn or error", lf.level)
	}
	setTimeFormat.Do(func() { zerolog.TimeFieldFormat = time.RFC3339Nano })
	out := &logOutput{w: stderr}
	var w io.Writer = out
	if lf.file != "" {
		f, err := openLogFile(lf.file)
		if err != nil {
			return zerolog.Nop(), nil, err
		}
		out.path, out.f, out.w = lf.file, f, f
	} else if isTerminal(stderr) {
		w = zerolog.ConsoleWriter{Out: out, TimeFormat: time.RFC3339}
	}
	log := zerolog.New(w).Level(level).With().Timestamp().Logger()
	stdlog.SetFlags(0)
	stdlog.SetOutput(log.With().Str("component", "stdlog").Logger())
	return log, out, nil
}

// setTimeFormat sets zerolog's process-wide time format once: a second write would
// race with the goroutines (the status page's) of a logger built before.
var setTimeFormat sync.Once

func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}

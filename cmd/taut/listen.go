package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"github.com/rs/zerolog"

	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/journal"
	"taut/monitor/status"
)

// listenStdin is what `--input -` reads; tests replace it.
var listenStdin io.Reader = os.Stdin

// Seams for the fault tests; nil and zero in production.
var (
	listenJournalFS  journal.FS     // the journal's file system (journaltest.FS injects faults)
	listenExtraSinks []monitor.Sink // sinks after the lamps and the status page
	// journalRetryMin and journalRetryMax bound the backoff of failed journal writes;
	// zero means the journal's defaults (500 ms doubling to 30 s).
	journalRetryMin, journalRetryMax time.Duration
)

// liveStallAfter is how long a live input may deliver nothing before a fault is raised.
const liveStallAfter = 10 * time.Second

// listenFlags are the flags of `taut listen`; zero values mean "from the config".
type listenFlags struct {
	config   string
	inputs   []string
	format   string
	rateHz   int
	channels int
	device   string
	journal  string
	speed    float64
	lamps    string
	http     string
	clock    string
	log      logFlags
}

func parseListenFlags(args []string, stderr io.Writer) (*listenFlags, error) {
	lf := &listenFlags{speed: -1}
	fs := flag.NewFlagSet("listen", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: taut listen --config FILE [flags]\n\nRun the listener: match notes to strings, "+
			"journal readings and states, drive lamps and the exciter.\n\nflags:")
		fs.PrintDefaults()
	}
	fs.StringVar(&lf.config, "config", "", "instrument config `file` (TOML)")
	fs.Func("input", "audio `input`: a WAV file (repeat for a list played in order), - for raw PCM on stdin, "+
		"or device (PortAudio build); default from [audio] in the config", func(s string) error {
		lf.inputs = append(lf.inputs, s)
		return nil
	})
	fs.StringVar(&lf.format, "format", "", "stdin PCM encoding: s16le, s32le or f32le (default from the config)")
	fs.IntVar(&lf.rateHz, "rate", 0, "stdin PCM sample rate in Hz (default from the config)")
	fs.IntVar(&lf.channels, "channels", 0, "stdin PCM channels (default from the config)")
	fs.StringVar(&lf.device, "device", "", "PortAudio input device `name` substring (implies --input device)")
	fs.StringVar(&lf.journal, "journal", "", "journal `dir` (default [journal] dir in the config)")
	fs.Var((*unsetFloat)(&lf.speed), "speed", "WAV replay `speed`: 0 = as fast as possible, 1 = real time (default from the config)")
	fs.StringVar(&lf.lamps, "lamps", "on", "on: drive the configured lamps; off: only log them")
	fs.StringVar(&lf.http, "http", "", "status page `address`, e.g. 127.0.0.1:9440 (default [http] listen in the config)")
	fs.StringVar(&lf.clock, "clock", "", "entry times: wall (wall clock, for live input) or samples "+
		"(start time + sample count, for replay); default wall for stdin and devices, samples for files")
	fs.StringVar(&lf.log.level, "log.level", "info", "diagnostic log level: trace, debug, info, warn or error")
	fs.StringVar(&lf.log.file, "log.file", "", "diagnostic log `file` (reopened on SIGHUP); default stderr")
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return nil, err
		}
		return nil, usagef("listen: %v", err)
	}
	return lf, lf.check(fs.Args())
}

func (lf *listenFlags) check(rest []string) error {
	switch {
	case len(rest) > 0:
		return usagef("listen: unexpected argument %q (audio files go after --input)", rest[0])
	case lf.config == "":
		return usagef("listen: --config FILE is required")
	case lf.lamps != "on" && lf.lamps != "off":
		return usagef("listen: --lamps %q: want on or off", lf.lamps)
	case lf.clock != "" && lf.clock != "wall" && lf.clock != "samples":
		return usagef("listen: --clock %q: want wall or samples", lf.clock)
	}
	return nil
}

// cmdListen runs the listener daemon until its input ends or a signal cancels ctx.
// The first SIGINT/SIGTERM stops capture, analyses what was captured, flushes and
// fsyncs the journal and leaves lamps and exciter idle, then exits 0; main restores
// the default signal action once ctx is cancelled, so a second signal ends the
// process at once. Under systemd (Type=notify) it speaks sd_notify: see notifier.
func cmdListen(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	lf, err := parseListenFlags(args, stderr)
	if errors.Is(err, flag.ErrHelp) {
		return nil
	} else if err != nil {
		return err
	}
	log, out, err := newLogger(stderr, lf.log)
	if err != nil {
		return err
	}
	defer out.Close()
	cfg, err := instrument.Load(lf.config)
	if err != nil {
		return usagef("listen: %v", err)
	}
	stopSignals := watchSignals(log, out)
	defer stopSignals()
	initHost(log)
	l := &listener{flags: lf, cfg: cfg, log: log, notify: newNotifier(log), extraSinks: listenExtraSinks}
	if err := l.run(ctx); err != nil {
		log.Error().Err(err).Msg("listener stopped with an error")
		l.notify.failed(err)
		return err
	}
	return nil
}

// listener is one run of the daemon: the parts it opened, closed in reverse order.
type listener struct {
	flags      *listenFlags
	cfg        *instrument.Config
	log        zerolog.Logger
	notify     *notifier
	extraSinks []monitor.Sink
	// in, when set, is used instead of opening the input the flags name (the soak
	// test's synthetic night); started, when set, is called with the monitor before it
	// runs (to feed that night).
	in      *input
	started func(*monitor.Monitor)

	mon      atomic.Pointer[monitor.Monitor]
	status   atomic.Pointer[status.Server]
	httpAddr string // the status page's configured address; "" = none
	states   *stringStates
	journal  *journal.Writer
	closers  []func()
}

func (l *listener) run(ctx context.Context) (err error) {
	defer l.closeAll()
	rec, err := l.openJournal()
	if err != nil {
		return err
	}
	in := l.in
	if in == nil {
		if in, err = l.openInput(); err != nil {
			return err
		}
	}
	sinkCtx, stopSinks := context.WithCancel(context.WithoutCancel(ctx))
	l.closers = append(l.closers, func() {
		stopSinks()
		// The status page shuts down on sinkCtx; wait for it so nothing logs after the
		// log file closes. Its error was logged by startStatus.
		if srv := l.status.Load(); srv != nil {
			_ = srv.Wait()
		}
	})
	sinks, err := l.startSinks(ctx, sinkCtx)
	if err != nil {
		return err
	}
	l.states = newStringStates(l.cfg, rec)
	sinks = append(append(sinks, l.states), l.extraSinks...)
	exc, err := l.startExciter()
	if err != nil {
		return err
	}
	m, err := monitor.New(monitor.Options{
		Config: l.cfg, Source: in.src, Journal: l.journal, Sinks: sinks, Exciter: exc,
		Logger: l.log.With().Str("component", "monitor").Logger(), Resume: rec.Entries,
		LiveClock: in.liveClock, StallAfter: in.stallAfter, DropWhenBehind: in.drop,
		Reopen: in.reopen, ReopenMin: deviceReopenMin, ReopenMax: deviceReopenMax,
	})
	if err != nil {
		return fmt.Errorf("listen: %w", err)
	}
	l.mon.Store(m)
	l.log.Info().Str("run", m.RunID()).Str("input", in.name).Str("config", l.cfg.Path).
		Int("resumed_entries", len(rec.Entries)).Msg("listening")
	if l.started != nil {
		l.started(m)
	}
	return l.runMonitor(ctx, m)
}

// runMonitor runs the monitor with the systemd notifier beside it. STOPPING=1 goes out
// as soon as ctx ends (a signal) or, when the input ends first, as Run returns: before
// the journal is flushed and the lamps halted.
func (l *listener) runMonitor(ctx context.Context, m *monitor.Monitor) error {
	if l.notify == nil {
		l.notify = newNotifier(l.log)
	}
	done := make(chan struct{})
	var wg sync.WaitGroup
	wg.Go(func() { l.notify.run(ctx, done, l) })
	err := m.Run(ctx)
	l.notify.stopping()
	close(done)
	wg.Wait()
	if err != nil {
		return fmt.Errorf("listen: %w", err)
	}
	l.log.Info().Msg("listener stopped")
	return nil
}

// closeAll runs the closers in reverse order: sinks stop, exciter and lamps go idle,
// the journal is fsynced and closed last of the parts that hold data.
func (l *listener) closeAll() {
	for i := len(l.closers) - 1; i >= 0; i-- {
		l.closers[i]()
	}
}

// openJournal opens and recovers the journal and reports what recovery repaired.
func (l *listener) openJournal() (*journal.Recovery, error) {
	dir := firstNonEmpty(l.flags.journal, l.cfg.Journal.Dir, os.Getenv("STATE_DIRECTORY"))
	if dir == "" {
		return nil, usagef("listen: no journal directory: set [journal] dir in the config or pass --journal DIR")
	}
	w, rec, err := journal.Open(dir, journal.Options{
		FsyncInterval: l.cfg.Journal.FsyncInterval, SegmentBytes: l.cfg.Journal.SegmentBytes, FS: listenJournalFS,
		RetryMin: journalRetryMin, RetryMax: journalRetryMax,
		OnFsync: func(d time.Duration, err error) {
			if s := l.status.Load(); s != nil {
				s.ObserveFsync(d, err)
			}
		}})
	if err != nil {
		return nil, fmt.Errorf("listen: journal directory %s cannot be used: %w\n"+
			"  fix: create it and let the user running taut write to it "+
			"(e.g. sudo install -d -o taut -g taut %s), or pass --journal DIR", dir, err, dir)
	}
	l.journal = w
	l.closers = append(l.closers, l.closeJournal)
	for _, c := range rec.Cuts {
		l.log.Warn().Str("repair", c.String()).Msg("journal: torn tail repaired")
	}
	if rec.Report != nil && !rec.Report.Clean() {
		l.log.Warn().Str("report", rec.Report.String()).Msg("journal: problems while reading the history")
	}
	l.log.Info().Str("dir", dir).Uint64("last_seq", rec.LastSeq).Int("repairs", rec.Repairs).Msg("journal open")
	return rec, nil
}

func (l *listener) closeJournal() {
	if err := l.journal.Sync(); err != nil {
		l.log.Error().Err(err).Msg("journal: final fsync failed")
	}
	if err := l.journal.Close(); err != nil {
		l.log.Error().Err(err).Msg("journal: close failed")
	}
	st := l.journal.Stats()
	l.log.Info().Uint64("last_seq", st.LastSeq).Uint64("synced_seq", st.SyncedSeq).
		Uint64("dropped", st.Dropped).Msg("journal closed")
}

func firstNonEmpty(s ...string) string {
	for _, v := range s {
		if strings.TrimSpace(v) != "" {
			return v
		}
	}
	return ""
}

// unsetFloat is a float flag whose negative value means "not given" (the config
// decides); it prints no default in the usage text.
type unsetFloat float64

func (f *unsetFloat) String() string {
	if f == nil || *f <= 0 { // unset (or the zero value the flag package compares with)
		return ""
	}
	return strconv.FormatFloat(float64(*f), 'g', -1, 64)
}

func (f *unsetFloat) Set(s string) error {
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || v < 0 {
		return fmt.Errorf("want a speed of 0 or more, got %q", s)
	}
	*f = unsetFloat(v)
	return nil
}

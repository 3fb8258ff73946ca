package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"sync"
	"sync/atomic"
	"time"

	"github.com/rs/zerolog"

	"taut/capture"
	"taut/monitor"
	"taut/monitor/journal"
	"taut/monitor/sim"
	"taut/monitor/status"
)

// demoNoiseRMS is the room noise added to the demo's audio (≈ −54 dBFS).
const demoNoiseRMS = 0.002

// nightResult is what running the night produced.
type nightResult struct {
	stats   monitor.Stats
	journal journal.Stats
	wall    time.Duration
	cpu     time.Duration // process CPU time while the night ran (0 where unknown)
	audioS  float64       // seconds of audio rendered and analysed
	lamps   *lampLog
	serve   func(ctx context.Context, stdout io.Writer) error
	mon     atomic.Pointer[monitor.Monitor] // for the status page's counters
}

// runNight plays the night into a synthetic source and runs the real monitor on it,
// with the journal in jdir, the lamps on logging pins and, with --serve, the status
// page as a sink.
func runNight(ctx context.Context, night *sim.Night, jdir string, df *demoFlags, stderr io.Writer) (*nightResult, error) {
	// Lamp changes are logged at info level (the demo's lamps are logging pins); the
	// monitor and the rest only say something when it is a warning.
	log := zerolog.New(zerolog.ConsoleWriter{Out: stderr, NoColor: true, TimeFormat: "15:04:05"}).
		Level(zerolog.InfoLevel).With().Timestamp().Logger()
	w, _, err := journal.Open(jdir, journal.Options{})
	if err != nil {
		return nil, fmt.Errorf("demo: open journal: %w", err)
	}
	res := &nightResult{lamps: &lampLog{}, serve: func(context.Context, io.Writer) error { return nil }}
	// The sinks outlive an interrupted ctx long enough to be stopped in order.
	sinkCtx, stopSinks := context.WithCancel(context.WithoutCancel(ctx))
	sinks, closeSinks, err := demoSinks(sinkCtx, night, df, res, log)
	if err != nil {
		stopSinks()
		w.Close()
		return nil, err
	}
	src := capture.NewSynthSource(capture.Format{SampleRate: night.Options.RateHz, Channels: 1})
	mon, err := monitor.New(monitor.Options{
		Config: night.Config, Source: sim.Noisy(src, demoNoiseRMS, df.seed), Journal: w, Sinks: sinks,
		Logger: log.Level(zerolog.WarnLevel).With().Str("component", "monitor").Logger(), StartTime: demoStart,
		RunID: fmt.Sprintf("demo-%s-seed%d", df.instrument, df.seed),
	})
	if err == nil {
		res.mon.Store(mon)
		err = playNight(ctx, night, src, mon, res)
	}
	if cerr := w.Close(); err == nil && cerr != nil {
		err = fmt.Errorf("demo: close journal: %w", cerr)
	}
	res.journal = w.Stats()
	closeSinks(df.serve != "" && err == nil, stopSinks)
	if err != nil {
		return nil, err
	}
	return res, nil
}

// playNight feeds the night and runs the monitor until the audio ends.
func playNight(ctx context.Context, night *sim.Night, src *capture.SynthSource, mon *monitor.Monitor, res *nightResult) error {
	cpu0, start := cpuTime(), time.Now()
	feedCtx, stopFeed := context.WithCancel(ctx)
	defer stopFeed()
	fed := make(chan error, 1)
	go func() { fed <- sim.Feed(feedCtx, night, src, mon, 48) }()
	runErr := mon.Run(ctx)
	stopFeed()
	feedErr := <-fed
	res.wall, res.cpu = time.Since(start), cpuTime()-cpu0
	res.stats = mon.Stats()
	res.audioS = float64(night.Strikes()) * float64(night.SlotFrames()) / float64(night.Options.RateHz)
	switch {
	case runErr != nil && !errors.Is(runErr, context.Canceled):
		return fmt.Errorf("demo: monitor: %w", runErr)
	case ctx.Err() != nil:
		return fmt.Errorf("demo: interrupted: %w", ctx.Err())
	case feedErr != nil && !errors.Is(feedErr, context.Canceled):
		return fmt.Errorf("demo: feed: %w", feedErr)
	}
	return nil
}

// demoSinks starts the lamps (logging pins) and, with --serve, the status page. The
// returned close function stops them; keep=true leaves the status page running for
// serveUntilDone instead.
func demoSinks(sinkCtx context.Context, night *sim.Night, df *demoFlags, res *nightResult,
	log zerolog.Logger) ([]monitor.Sink, func(keep bool, stop func()), error) {
	board, err := setupLamps(night.Config.Lamps, true, log.With().Str("component", "lamps").Logger())
	if err != nil {
		return nil, nil, fmt.Errorf("demo: lamps: %w", err)
	}
	var wg sync.WaitGroup
	lampCtx, stopLamps := context.WithCancel(sinkCtx)
	wg.Go(func() { _ = board.Run(lampCtx) })
	sinks := []monitor.Sink{board, res.lamps}
	var srv *status.Server
	if df.serve != "" {
		srv, err = startStatus(sinkCtx, df.serve, night.Config, res.statusStats,
			log.With().Str("component", "http").Logger())
		if err != nil {
			stopLamps()
			wg.Wait()
			return nil, nil, fmt.Errorf("demo: status page on %s: %w", df.serve, err)
		}
		sinks = append(sinks, srv)
	}
	closeAll := func(keep bool, stop func()) {
		stopLamps()
		wg.Wait()
		_ = board.Halt()
		// stopAndWait ends the sinks and waits for the status page's shutdown, so
		// nothing serves or logs after the demo returns.
		stopAndWait := func() {
			stop()
			if srv != nil {
				_ = srv.Wait()
			}
		}
		if !keep {
			stopAndWait()
			return
		}
		res.serve = func(ctx context.Context, stdout io.Writer) error {
			fmt.Fprintf(stdout, "\nstatus page: http://%s/ — press Ctrl-C to stop\n", df.serve)
			<-ctx.Done()
			stopAndWait()
			return nil
		}
	}
	return sinks, closeAll, nil
}

// statusStats gives the status page the monitor's counters (none before it exists).
func (r *nightResult) statusStats() status.Stats {
	var s status.Stats
	if m := r.mon.Load(); m != nil {
		ms := m.Stats()
		s.FramesRead, s.FramesDropped, s.Gaps = uint64(ms.FramesRead), uint64(ms.FramesDropped), uint64(ms.Gaps)
		s.Readings, s.Unmatched, s.LastFrame = uint64(ms.Readings), uint64(ms.Unmatched), ms.LastFrame
	}
	return s
}

func (r *nightResult) serveUntilDone(ctx context.Context, stdout io.Writer) error {
	return r.serve(ctx, stdout)
}

// lampLog is a sink that remembers what the lamps were told: how many strings ended
// the night in each state and how many alarm entries there were.
type lampLog struct {
	mu     sync.Mutex
	state  map[string]monitor.State
	alarms int
}

func (l *lampLog) Publish(e monitor.Entry) {
	if e.String == "" || (e.Kind != monitor.KindReading && e.Kind != monitor.KindState) {
		return
	}
	l.mu.Lock()
	defer l.mu.Unlock()
	if l.state == nil {
		l.state = map[string]monitor.State{}
	}
	l.state[e.String] = e.State
	if e.Kind == monitor.KindState && e.State == monitor.Alarm {
		l.alarms++
	}
}

// summary is e.g. "alarm lamp lit (3 strings), settling lamp lit (20 strings)".
func (l *lampLog) summary() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	count := map[monitor.State]int{}
	for _, s := range l.state {
		count[s]++
	}
	return fmt.Sprintf("at dawn %d string(s) in alarm, %d settling, %d off-target, %d steady, %d quiet; %d alarm change(s) in the night",
		count[monitor.Alarm], count[monitor.Settling], count[monitor.OffTarget], count[monitor.Steady],
		count[monitor.Quiet], l.alarms)
}

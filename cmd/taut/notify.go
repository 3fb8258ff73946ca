package main

import (
	"context"
	"sync"
	"time"

	"github.com/rs/zerolog"

	"taut/cmd/internal/sdnotify"
)

// Timing of the systemd notifications (daemon-notes §4.2).
const (
	// readyPoll is how often the notifier looks for the first audio frames before READY=1.
	readyPoll = 50 * time.Millisecond
	// statusEvery is how often STATUS= is refreshed when nothing in it changed.
	statusEvery = 10 * time.Second
	// maxCheck bounds the period of the health check: a recovered pipeline feeds the
	// watchdog again within this.
	maxCheck = time.Second
)

// notifier speaks systemd's notify protocol for one run of the listener:
//
//   - READY=1 once the journal is recovered, the first audio frames arrived and the
//     status page (when configured) is serving;
//   - WATCHDOG=1 every watchdog interval (half of $WATCHDOG_USEC) but only while the
//     pipeline is healthy: audio frames arrived within the last frameAge and the
//     journal has no write error outstanding (or its backlog is draining). A capture
//     stuck in a driver, a source that cannot be reopened or a journal that cannot
//     be written then ends in a restart by systemd;
//   - STATUS= a one-line summary, e.g. "36 strings: 20 steady, 10 settling, 1 alarm,
//     5 quiet; journal ok", when it changes and every statusEvery;
//   - STOPPING=1 when shutdown begins (a signal, or the input ended).
//
// Without $NOTIFY_SOCKET every notification is a no-op, so the loop costs one health
// check a second.
type notifier struct {
	sd       *sdnotify.Notifier
	log      zerolog.Logger
	watchdog time.Duration // WATCHDOG=1 period; 0 when systemd's watchdog is off
	check    time.Duration // health check period
	frameAge time.Duration // frames older than this are not flowing
	stopOnce sync.Once
}

// newNotifier reads $NOTIFY_SOCKET and $WATCHDOG_USEC.
func newNotifier(log zerolog.Logger) *notifier {
	n := &notifier{sd: sdnotify.New(), log: log, watchdog: sdnotify.WatchdogInterval(), check: maxCheck,
		frameAge: liveStallAfter}
	if n.watchdog > 0 {
		n.check = min(maxCheck, n.watchdog/2)
		n.frameAge = min(liveStallAfter, n.watchdog)
	}
	return n
}

// pipeline is what the notifier watches: the listener.
type pipeline interface {
	// ready reports whether the first frames arrived and the status page serves (the
	// journal is recovered before the pipeline starts).
	ready() bool
	// health judges the pipeline now against the previous check.
	health(h *healthState, frameAge time.Duration) (ok bool, why string)
	// summary is the strings part of STATUS=.
	summary() string
}

// run sends READY=1 when p is ready, then feeds the watchdog and refreshes STATUS=
// until done is closed or ctx ends; on ctx's end it sends STOPPING=1 at once.
func (n *notifier) run(ctx context.Context, done <-chan struct{}, p pipeline) {
	if !n.waitReady(ctx, done, p) {
		return
	}
	n.send("READY=1")
	var h healthState
	_, why := p.health(&h, n.frameAge)
	n.status(p.summary(), why)
	n.log.Info().Bool("systemd", n.sd.Enabled()).Dur("watchdog", n.watchdog).Msg("ready: journal recovered, audio flowing")
	tick := time.NewTicker(n.check)
	defer tick.Stop()
	lastPing, lastStatus, line := time.Now(), time.Now(), ""
	wasOK := true
	for {
		select {
		case <-ctx.Done():
			n.stopping()
			return
		case <-done:
			return
		case <-tick.C:
		}
		ok, why := p.health(&h, n.frameAge)
		if ok != wasOK {
			n.logHealth(ok, why)
			wasOK = ok
		}
		if ok && n.watchdog > 0 && time.Since(lastPing) >= n.watchdog-n.check/2 {
			n.send("WATCHDOG=1")
			lastPing = time.Now()
		}
		if l := statusLine(p.summary(), why); l != line || time.Since(lastStatus) >= statusEvery {
			n.send("STATUS=" + l)
			line, lastStatus = l, time.Now()
		}
	}
}

// waitReady polls p until it is ready; false when done or ctx came first.
func (n *notifier) waitReady(ctx context.Context, done <-chan struct{}, p pipeline) bool {
	poll := time.NewTicker(readyPoll)
	defer poll.Stop()
	for !p.ready() {
		select {
		case <-ctx.Done():
			n.stopping()
			return false
		case <-done:
			return false
		case <-poll.C:
		}
	}
	return true
}

func (n *notifier) logHealth(ok bool, why string) {
	if ok {
		n.log.Info().Msg("pipeline healthy again: feeding the systemd watchdog")
		return
	}
	ev := n.log.Warn()
	if n.watchdog > 0 {
		ev = n.log.Error().Dur("watchdog", 2*n.watchdog)
	}
	ev.Str("why", why).Msg("pipeline unhealthy: the systemd watchdog is not fed, systemd restarts taut if this lasts")
}

func (n *notifier) status(summary, why string) { n.send("STATUS=" + statusLine(summary, why)) }

// stopping sends STOPPING=1 once.
func (n *notifier) stopping() {
	n.stopOnce.Do(func() {
		n.send("STOPPING=1")
		n.log.Debug().Msg("stopping: told systemd")
	})
}

// failed tells systemd why the listener could not run (shown by systemctl status).
func (n *notifier) failed(err error) { n.send("STATUS=failed: " + err.Error()) }

func (n *notifier) send(state string) {
	if err := n.sd.Notify(state); err != nil {
		n.log.Warn().Err(err).Msg("systemd notify failed")
	}
}

// statusLine joins the strings summary and the health: "...; journal ok" when healthy.
func statusLine(summary, why string) string {
	if why == "" {
		why = "journal ok"
	}
	return summary + "; " + why
}

package main

import (
	"os"
	"os/signal"
	"syscall"

	"github.com/rs/zerolog"
	"periph.io/x/host/v3"
)

// watchSignals reopens the log file on SIGHUP (logrotate's move-then-HUP) and turns
// SIGPIPE into EPIPE write errors: without it, a restarted journald kills the daemon
// with a signal that systemd counts as a clean exit (daemon-notes §4.3). It returns a
// function that stops watching.
func watchSignals(log zerolog.Logger, out *logOutput) (stop func()) {
	hup := make(chan os.Signal, 1)
	pipe := make(chan os.Signal, 1)
	signal.Notify(hup, syscall.SIGHUP)
	signal.Notify(pipe, syscall.SIGPIPE)
	done := make(chan struct{})
	go func() {
		for {
			select {
			case <-done:
				return
			case <-hup:
				switch err := out.Reopen(); {
				case err != nil:
					log.Error().Err(err).Msg("SIGHUP: reopen log file")
				case out.path == "":
					log.Info().Msg("SIGHUP: logging to stderr, no log file to reopen")
				default:
					log.Info().Str("file", out.path).Msg("SIGHUP: log file reopened")
				}
			}
		}
	}()
	return func() {
		signal.Stop(hup)
		signal.Stop(pipe)
		close(done)
	}
}

// initHost loads periph's host drivers once and logs which loaded, which were skipped
// (normal on a machine without that hardware) and which failed (only missing pins
// matter; the lamps and exciter setup reports those).
func initHost(log zerolog.Logger) {
	st, err := host.Init()
	if err != nil {
		log.Warn().Err(err).Msg("gpio: host drivers failed to initialise; lamps and exciter will be logged only")
		return
	}
	var loaded, skipped, failed []string
	for _, d := range st.Loaded {
		loaded = append(loaded, d.String())
	}
	for _, f := range st.Skipped {
		skipped = append(skipped, f.String())
	}
	for _, f := range st.Failed {
		failed = append(failed, f.String())
	}
	log.Info().Strs("loaded", loaded).Strs("skipped", skipped).Strs("failed", failed).Msg("gpio: host drivers")
}

package main

import (
	"context"
	"errors"
	"fmt"
	"sync"

	"taut/monitor"
	"taut/monitor/status"
)

// startSinks sets up the lamps (running until sinkCtx ends, then halted) and, when an
// address is configured, the status server; both receive every entry.
func (l *listener) startSinks(ctx, sinkCtx context.Context) ([]monitor.Sink, error) {
	board, err := setupLamps(l.cfg.Lamps, l.flags.lamps == "off", l.log.With().Str("component", "lamps").Logger())
	if err != nil {
		return nil, fmt.Errorf("listen: lamps: %w", err)
	}
	lampCtx, stopLamps := context.WithCancel(sinkCtx)
	var wg sync.WaitGroup
	wg.Go(func() {
		if err := board.Run(lampCtx); err != nil && !errors.Is(err, context.Canceled) {
			l.log.Error().Err(err).Msg("lamps stopped")
		}
	})
	l.closers = append(l.closers, func() {
		stopLamps()
		wg.Wait()
		if err := board.Halt(); err != nil {
			l.log.Error().Err(err).Msg("lamps: halt")
		}
	})
	sinks := []monitor.Sink{board}
	addr := firstNonEmpty(l.flags.http, l.cfg.HTTP.Listen)
	l.httpAddr = addr
	if addr == "" {
		return sinks, nil
	}
	srv, err := startStatus(sinkCtx, addr, l.cfg, l.statusStats, l.log.With().Str("component", "http").Logger())
	if err != nil {
		return nil, fmt.Errorf("listen: status page on %s: %w", addr, err)
	}
	l.status.Store(srv)
	return append(sinks, srv), nil
}

// startExciter sets up the exciter, halted (lines low) when the listener closes; nil
// when the config disables it.
func (l *listener) startExciter() (monitor.Exciter, error) {
	d, err := setupExciter(l.cfg, l.log.With().Str("component", "exciter").Logger())
	if err != nil {
		return nil, fmt.Errorf("listen: exciter: %w", err)
	}
	if d == nil {
		return nil, nil // a nil interface, not a nil *exciter.Driver
	}
	l.closers = append(l.closers, func() {
		if err := d.Halt(); err != nil {
			l.log.Error().Err(err).Msg("exciter: halt")
		}
	})
	return d, nil
}

// statusStats gathers the monitor's and the journal's counters for the status page.
func (l *listener) statusStats() status.Stats {
	var s status.Stats
	if m := l.mon.Load(); m != nil {
		ms := m.Stats()
		s.FramesRead, s.FramesDropped, s.Gaps = uint64(ms.FramesRead), uint64(ms.FramesDropped), uint64(ms.Gaps)
		s.Readings, s.Unmatched, s.LastFrame = uint64(ms.Readings), uint64(ms.Unmatched), ms.LastFrame
	}
	if l.journal != nil {
		js := l.journal.Stats()
		s.JournalFsyncs, s.JournalFsyncErrors, s.JournalWriteErrors = js.Fsyncs, js.FsyncErrors, js.WriteErrors
		s.JournalBacklog = js.Backlog
		if js.LastError != nil {
			s.JournalLastError = js.LastError.Error()
		}
	}
	return s
}

package main

import (
	"syscall"
	"testing"
	"time"

	"taut/monitor"
	"taut/monitor/journal"
	"taut/monitor/journal/journaltest"
)

// TestListener_healthJournal: a failing journal degrades the health line but keeps the
// watchdog fed until the held entries near the writer's limit.
func TestListener_healthJournal(t *testing.T) {
	fsys := &journaltest.FS{NoSync: true}
	w, _, err := journal.Open(t.TempDir(), journal.Options{FS: fsys, RetryMin: time.Hour, RetryMax: time.Hour})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { fsys.Clear(); w.Close() })
	l := &listener{journal: w}
	fsys.Inject(journaltest.Fault{Op: journaltest.OpWrite, Times: -1, Err: syscall.ENOSPC})
	appendN := func(n int) {
		for range n {
			e := monitor.Entry{Kind: monitor.KindReading, Time: time.Unix(1e9, 0), String: "C4", State: monitor.Settling}
			w.Append(&e) // fails: held in the backlog
		}
	}
	var h healthState
	appendN(10)
	if ok, why := l.health(&h, time.Minute); !ok || why == "" {
		t.Errorf("10 entries held: health = %v %q, want fed and a reason", ok, why)
	}
	appendN(journalBacklogStarve)
	if ok, why := l.health(&h, time.Minute); ok {
		t.Errorf("%d entries held: health = %v %q, want the watchdog starved", w.Stats().Backlog, ok, why)
	}
}

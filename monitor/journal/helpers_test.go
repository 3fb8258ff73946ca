package journal_test

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"testing"
	"time"

	"taut/monitor"
	"taut/monitor/journal"
)

var stringIDs = []string{"A0", "C4", "G#5", "C8"}

// entryN is the i-th entry of a made-up night: mostly readings, some state changes and
// an occasional alarm, with wall times that step back now and then (a board without a
// real-time clock) while mono_s keeps rising.
func entryN(i int) monitor.Entry {
	wall := time.Date(2025, 11, 3, 1, 0, 0, 0, time.UTC).Add(time.Duration(i) * 7 * time.Second)
	if i%9 == 4 {
		wall = wall.Add(-time.Hour) // the wall clock went backwards
	}
	e := monitor.Entry{
		Kind: monitor.KindReading, Time: wall.Add(time.Duration(i) * 1234567), MonoS: 7.125 * float64(i),
		Run: "run-b1", String: stringIDs[i%len(stringIDs)], FundamentalHz: 261.6 + float64(i)/1000,
		F0Hz: 261.5 + float64(i)/1000, Inharmonicity: 3.8e-4, Cents: -2.5 + float64(i)/100,
		TensionN: 690.1, Margin: 0.51, RateCentsHour: 0.8, Clarity: 0.93, Partials: 11, State: monitor.Settling,
	}
	switch {
	case i%10 == 7:
		prev := monitor.Settling
		e.Kind, e.State, e.Prev, e.Reason = monitor.KindState, monitor.Steady, &prev, "drift"
	case i%25 == 24:
		e.State, e.Reason = monitor.Alarm, "margin"
	}
	return e
}

// appendN appends n entries from entryN(from) on and returns them with their seqs.
func appendN(t testing.TB, w *journal.Writer, from, n int) []monitor.Entry {
	t.Helper()
	out := make([]monitor.Entry, 0, n)
	for i := from; i < from+n; i++ {
		e := entryN(i)
		if err := w.Append(&e); err != nil {
			t.Fatalf("append %d: %v", i, err)
		}
		out = append(out, e)
	}
	return out
}

func openT(t testing.TB, dir string, opts journal.Options) (*journal.Writer, *journal.Recovery) {
	t.Helper()
	w, rec, err := journal.Open(dir, opts)
	if err != nil {
		t.Fatalf("open: %v", err)
	}
	return w, rec
}

func closeT(t testing.TB, w *journal.Writer) {
	t.Helper()
	if err := w.Close(); err != nil {
		t.Fatalf("close: %v", err)
	}
}

// loadClean loads dir and fails unless the report is clean.
func loadClean(t testing.TB, dir string) []monitor.Entry {
	t.Helper()
	got, rep, err := journal.Load(dir)
	if err != nil {
		t.Fatalf("load: %v", err)
	}
	if !rep.Clean() {
		t.Fatalf("load: report not clean: %s", rep)
	}
	return got
}

// assertEntries checks that got holds want, field for field, in order.
func assertEntries(t testing.TB, got, want []monitor.Entry) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("got %d entries, want %d", len(got), len(want))
	}
	for i := range want {
		if err := sameEntry(got[i], want[i]); err != nil {
			t.Fatalf("entry %d: %v", i, err)
		}
	}
}

func sameEntry(got, want monitor.Entry) error {
	if !got.Time.Equal(want.Time) {
		return fmt.Errorf("seq %d: time %v, want %v", want.Seq, got.Time, want.Time)
	}
	got.Time, want.Time = time.Time{}, time.Time{}
	if (got.Prev == nil) != (want.Prev == nil) || got.Prev != nil && *got.Prev != *want.Prev {
		return fmt.Errorf("seq %d: prev_state %v, want %v", want.Seq, got.Prev, want.Prev)
	}
	got.Prev, want.Prev = nil, nil
	if got != want {
		return fmt.Errorf("got %+v\nwant %+v", got, want)
	}
	return nil
}

// assertContinuous checks that entries have seqs first, first+1, ...
func assertContinuous(t testing.TB, entries []monitor.Entry, first uint64) {
	t.Helper()
	for i, e := range entries {
		if want := first + uint64(i); e.Seq != want {
			t.Fatalf("entry %d has seq %d, want %d", i, e.Seq, want)
		}
	}
}

func segmentFiles(t testing.TB, dir string) []string {
	t.Helper()
	paths, err := filepath.Glob(filepath.Join(dir, "journal-*.jsonl"))
	if err != nil {
		t.Fatal(err)
	}
	slices.Sort(paths)
	return paths
}

func readFile(t testing.TB, path string) []byte {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

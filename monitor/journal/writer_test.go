package journal_test

import (
	"bytes"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"taut/monitor"
	"taut/monitor/journal"
	"taut/monitor/journal/journaltest"
)

// hour keeps the background commit out of the way of tests that count fsyncs.
const hour = time.Hour

func TestWriter_RoundTrip(t *testing.T) {
	dir := t.TempDir()
	w, rec := openT(t, dir, journal.Options{FsyncInterval: hour})
	if rec.LastSeq != 0 || rec.Segments != 0 || len(rec.Entries) != 0 {
		t.Fatalf("empty dir recovered %+v", rec)
	}
	want := appendN(t, w, 0, 60)
	closeT(t, w)
	got := loadClean(t, dir)
	assertEntries(t, got, want)
	assertContinuous(t, got, 1)
}

func TestWriter_SeqContinuesAcrossOpen(t *testing.T) {
	dir := t.TempDir()
	var want []monitor.Entry
	for run := range 4 {
		w, rec := openT(t, dir, journal.Options{FsyncInterval: hour})
		if rec.LastSeq != uint64(len(want)) {
			t.Fatalf("run %d: recovered last seq %d, want %d", run, rec.LastSeq, len(want))
		}
		want = append(want, appendN(t, w, len(want), 5+run)...)
		closeT(t, w)
	}
	got := loadClean(t, dir)
	assertEntries(t, got, want)
	assertContinuous(t, got, 1)
	if n := len(segmentFiles(t, dir)); n != 4 {
		t.Fatalf("%d segments, want one per run (4)", n)
	}
}

func TestWriter_ReusesEmptyNewestSegment(t *testing.T) {
	dir := t.TempDir()
	for range 3 {
		w, _ := openT(t, dir, journal.Options{FsyncInterval: hour})
		closeT(t, w) // nothing appended
	}
	if n := len(segmentFiles(t, dir)); n != 1 {
		t.Fatalf("%d segments after three empty runs, want 1", n)
	}
}

func TestWriter_Rollover(t *testing.T) {
	dir := t.TempDir()
	fsys := &journaltest.FS{}
	w, _ := openT(t, dir, journal.Options{FsyncInterval: hour, SegmentBytes: 2000, FS: fsys})
	want := appendN(t, w, 0, 100)
	st := w.Stats()
	closeT(t, w)

	segs := segmentFiles(t, dir)
	if len(segs) < 5 {
		t.Fatalf("%d segments for %d bytes at 2000 per segment", len(segs), st.Bytes)
	}
	if got := fsys.Count(journaltest.OpSyncDir); got != len(segs) {
		t.Fatalf("directory fsynced %d times for %d new segments", got, len(segs))
	}
	if st.Segment != segs[len(segs)-1] {
		t.Fatalf("Stats.Segment = %s, want the newest %s", st.Segment, segs[len(segs)-1])
	}
	for i, path := range segs {
		entries, rep, err := journal.Load(path)
		if err != nil || !rep.Clean() || len(entries) == 0 {
			t.Fatalf("segment %s: %d entries, err %v, report %s", path, len(entries), err, rep)
		}
		if name := filepath.Base(path); name != fmt.Sprintf("journal-%020d.jsonl", entries[0].Seq) {
			t.Fatalf("segment %s starts with seq %d", name, entries[0].Seq)
		}
		if size := len(readFile(t, path)); i < len(segs)-1 && size < 2000 {
			t.Fatalf("segment %s closed at %d bytes, before its 2000-byte limit", path, size)
		}
	}
	assertEntries(t, loadClean(t, dir), want)
}

func TestLoad_SequenceOrderNotFileTime(t *testing.T) {
	dir := t.TempDir()
	w, _ := openT(t, dir, journal.Options{FsyncInterval: hour, SegmentBytes: 1500})
	want := appendN(t, w, 0, 60)
	closeT(t, w)
	segs := segmentFiles(t, dir)
	rng := rand.New(rand.NewPCG(1, 1))
	base := time.Date(2001, 1, 1, 0, 0, 0, 0, time.UTC)
	for _, path := range segs {
		mtime := base.Add(time.Duration(rng.IntN(1e6)) * time.Second)
		if err := os.Chtimes(path, mtime, mtime); err != nil {
			t.Fatal(err)
		}
	}
	got := loadClean(t, dir)
	assertEntries(t, got, want)
	_, rep, _ := journal.Load(dir)
	if len(rep.Files) != len(segs) {
		t.Fatalf("read %d files, want %d", len(rep.Files), len(segs))
	}
}

func TestWriter_UrgentEntriesCommitAtOnce(t *testing.T) {
	tests := []struct {
		name string
		edit func(e *monitor.Entry)
	}{
		{"Alarm", func(e *monitor.Entry) { e.State = monitor.Alarm }},
		{"Fault", func(e *monitor.Entry) { e.Kind, e.String, e.Detail = monitor.KindFault, "", "audio source stalled" }},
		{"Stop", func(e *monitor.Entry) { e.Kind, e.String = monitor.KindStop, "" }},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			w, _ := openT(t, t.TempDir(), journal.Options{FsyncInterval: hour})
			defer closeT(t, w)
			e := entryN(0)
			if err := w.Append(&e); err != nil {
				t.Fatal(err)
			}
			if st := w.Stats(); st.Fsyncs != 0 || st.SyncedSeq != 0 {
				t.Fatalf("plain reading committed at once: %+v", st)
			}
			u := entryN(1)
			tc.edit(&u)
			if err := w.Append(&u); err != nil {
				t.Fatal(err)
			}
			if st := w.Stats(); st.Fsyncs != 1 || st.SyncedSeq != u.Seq {
				t.Fatalf("after %s: Fsyncs %d, SyncedSeq %d, want 1 and %d", tc.name, st.Fsyncs, st.SyncedSeq, u.Seq)
			}
		})
	}
}

func TestWriter_GroupCommitOnInterval(t *testing.T) {
	var mu sync.Mutex
	var hooks []error
	w, _ := openT(t, t.TempDir(), journal.Options{FsyncInterval: 10 * time.Millisecond, OnFsync: func(d time.Duration, err error) {
		mu.Lock()
		defer mu.Unlock()
		hooks = append(hooks, err)
	}})
	defer closeT(t, w)
	appendN(t, w, 0, 3)
	waitFor(t, "a timed commit", func() bool { return w.Stats().SyncedSeq == 3 })
	st := w.Stats()
	if st.Fsyncs == 0 || st.LastFsyncDuration <= 0 {
		t.Fatalf("stats after a timed commit: %+v", st)
	}
	time.Sleep(50 * time.Millisecond) // idle: nothing written, so no more fsyncs
	mu.Lock()
	defer mu.Unlock()
	if n := w.Stats().Fsyncs; n != st.Fsyncs || uint64(len(hooks)) != n {
		t.Fatalf("Fsyncs went from %d to %d while idle; OnFsync called %d times", st.Fsyncs, n, len(hooks))
	}
	for _, err := range hooks {
		if err != nil {
			t.Fatalf("OnFsync got %v", err)
		}
	}
}

func waitFor(t testing.TB, what string, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(10 * time.Second)
	for !cond() {
		if time.Now().After(deadline) {
			t.Fatalf("timed out waiting for %s", what)
		}
		time.Sleep(time.Millisecond)
	}
}

func TestWriter_WallClockBackwards(t *testing.T) {
	dir := t.TempDir()
	w, _ := openT(t, dir, journal.Options{FsyncInterval: hour})
	times := []time.Time{
		time.Date(2025, 11, 3, 3, 0, 0, 999999999, time.UTC),
		time.Date(2025, 11, 3, 2, 59, 59, 1, time.UTC),              // one second back
		time.Date(1970, 1, 1, 0, 0, 12, 0, time.UTC),                // early boot, no clock yet
		time.Date(2022, 6, 1, 0, 0, 0, 0, time.FixedZone("", 3600)), // fake-hwclock's saved time
		time.Date(2025, 11, 3, 3, 0, 1, 0, time.UTC),                // NTP caught up
	}
	var want []monitor.Entry
	for i, tm := range times {
		e := entryN(i)
		e.Time = tm
		if err := w.Append(&e); err != nil {
			t.Fatal(err)
		}
		want = append(want, e)
	}
	closeT(t, w)
	got := loadClean(t, dir)
	assertEntries(t, got, want)
	assertContinuous(t, got, 1)
	w, rec := openT(t, dir, journal.Options{FsyncInterval: hour})
	defer closeT(t, w)
	if rec.LastSeq != uint64(len(times)) {
		t.Fatalf("recovered last seq %d, want %d", rec.LastSeq, len(times))
	}
}

func TestOpen_RecentHistoryIsBounded(t *testing.T) {
	dir := t.TempDir()
	w, _ := openT(t, dir, journal.Options{FsyncInterval: hour})
	var all []monitor.Entry
	for i := range 400 {
		e := entryN(i)
		if i%50 == 0 {
			e = monitor.Entry{Kind: monitor.KindGap, Run: "run-b1", Time: e.Time, GapFrames: int64(i)}
		}
		if err := w.Append(&e); err != nil {
			t.Fatal(err)
		}
		all = append(all, e)
	}
	closeT(t, w)

	w, rec := openT(t, dir, journal.Options{FsyncInterval: hour, RecoverReadings: 10})
	defer closeT(t, w)
	want := expectedHistory(all, 10, 16)
	assertEntries(t, rec.Entries, want)
	if !rec.Report.Clean() || rec.Report.Entries != 400 {
		t.Fatalf("recovery report: %s", rec.Report)
	}
}

// expectedHistory is the history Open should return, computed the slow way.
func expectedHistory(all []monitor.Entry, readings, other int) []monitor.Entry {
	keep := map[uint64]bool{}
	nReadings, nOther, sawLast := map[string]int{}, 0, map[string]bool{}
	for i := len(all) - 1; i >= 0; i-- {
		e := all[i]
		switch {
		case e.String == "":
			if nOther < other {
				keep[e.Seq] = true
				nOther++
			}
		case e.Kind == monitor.KindReading:
			if nReadings[e.String] < readings {
				keep[e.Seq] = true
				nReadings[e.String]++
			}
		case !sawLast[e.String]:
			keep[e.Seq], sawLast[e.String] = true, true
		}
	}
	var out []monitor.Entry
	for _, e := range all {
		if keep[e.Seq] {
			out = append(out, e)
		}
	}
	return out
}

func TestOpen_SecondWriterRefused(t *testing.T) {
	dir := t.TempDir()
	w, _ := openT(t, dir, journal.Options{FsyncInterval: hour})
	defer closeT(t, w)
	_, _, err := journal.Open(dir, journal.Options{})
	if err == nil || !strings.Contains(err.Error(), dir) || !strings.Contains(err.Error(), "in use") {
		t.Fatalf("second Open: error %v, want one naming %s as in use", err, dir)
	}
}

func TestWriter_ConcurrentUse(t *testing.T) {
	dir := t.TempDir()
	w, _ := openT(t, dir, journal.Options{FsyncInterval: time.Millisecond, SegmentBytes: 4096})
	var wg sync.WaitGroup
	for g := range 3 {
		wg.Go(func() {
			for i := range 200 {
				e := entryN(g*1000 + i)
				if err := w.Append(&e); err != nil {
					t.Error(err)
					return
				}
				if i%50 == 0 {
					if err := w.Sync(); err != nil {
						t.Error(err)
					}
					_ = w.Stats()
				}
			}
		})
	}
	wg.Wait()
	closeT(t, w)
	got := loadClean(t, dir)
	if len(got) != 600 {
		t.Fatalf("%d entries, want 600", len(got))
	}
	assertContinuous(t, got, 1)
}

func TestWriter_AfterClose(t *testing.T) {
	w, _ := openT(t, t.TempDir(), journal.Options{})
	closeT(t, w)
	e := entryN(0)
	if err := w.Append(&e); err != journal.ErrClosed {
		t.Fatalf("Append after Close: %v, want ErrClosed", err)
	}
	if err := w.Sync(); err != journal.ErrClosed {
		t.Fatalf("Sync after Close: %v, want ErrClosed", err)
	}
	if err := w.Close(); err != journal.ErrClosed {
		t.Fatalf("second Close: %v, want ErrClosed", err)
	}
}

func TestWriter_InvalidEntryGetsNoSeq(t *testing.T) {
	dir := t.TempDir()
	w, _ := openT(t, dir, journal.Options{FsyncInterval: hour})
	good := appendN(t, w, 0, 2)
	bad := entryN(2)
	bad.State = monitor.State(42)
	if err := w.Append(&bad); err == nil || !strings.Contains(err.Error(), "field state") {
		t.Fatalf("Append of a bad state: %v", err)
	}
	if bad.Seq != 0 {
		t.Fatalf("refused entry got seq %d", bad.Seq)
	}
	good = append(good, appendN(t, w, 3, 2)...)
	closeT(t, w)
	got := loadClean(t, dir)
	assertEntries(t, got, good)
	assertContinuous(t, got, 1)
	if bytes.Contains(readFile(t, segmentFiles(t, dir)[0]), []byte("state(42)")) {
		t.Fatal("refused entry was written")
	}
}

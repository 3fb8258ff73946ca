package journal_test

import (
	"errors"
	"os"
	"strings"
	"syscall"
	"testing"
	"time"

	"taut/monitor"
	"taut/monitor/journal"
	"taut/monitor/journal/journaltest"
)

// faultOpts retries quickly and never commits on its own, so tests drive every step.
func faultOpts(fsys *journaltest.FS) journal.Options {
	return journal.Options{FsyncInterval: hour, RetryMin: time.Millisecond, RetryMax: 4 * time.Millisecond, FS: fsys}
}

func TestWriter_DiskFullThenSpace(t *testing.T) {
	dir := t.TempDir()
	fsys := &journaltest.FS{}
	w, _ := openT(t, dir, faultOpts(fsys))
	want := appendN(t, w, 0, 5)

	// The 3rd write from now and the next 3 fail with ENOSPC.
	fsys.Inject(journaltest.Fault{Op: journaltest.OpWrite, After: 2, Times: 4, Err: syscall.ENOSPC})
	var held int
	for i := 5; i < 15; i++ {
		e := entryN(i)
		err := w.Append(&e)
		want = append(want, e)
		if err != nil {
			held++
			if !errors.Is(err, syscall.ENOSPC) || !errors.Is(err, journal.ErrHeld) {
				t.Fatalf("append %d: %v, want ErrHeld wrapping ENOSPC", i, err)
			}
		}
		time.Sleep(5 * time.Millisecond) // past the backoff, so the next Append retries
	}
	if held == 0 {
		t.Fatal("no Append reported the full disk")
	}
	st := w.Stats()
	if st.WriteErrors != 4 || st.Dropped != 0 {
		t.Fatalf("stats after the disk filled: %+v", st)
	}
	if err := w.Sync(); err != nil {
		t.Fatalf("sync after space came back: %v", err)
	}
	if st := w.Stats(); st.Backlog != 0 || st.LastError != nil || st.SyncedSeq != 15 {
		t.Fatalf("stats after recovery: %+v", st)
	}
	closeT(t, w)
	got := loadClean(t, dir)
	assertEntries(t, got, want)
	assertContinuous(t, got, 1)
}

func TestWriter_BackgroundRetryDrainsBacklog(t *testing.T) {
	dir := t.TempDir()
	fsys := &journaltest.FS{}
	opts := faultOpts(fsys)
	opts.FsyncInterval = 20 * time.Millisecond
	w, _ := openT(t, dir, opts)
	fsys.Inject(journaltest.Fault{Op: journaltest.OpWrite, Times: 5, Err: syscall.EIO})
	e := entryN(0)
	if err := w.Append(&e); !errors.Is(err, syscall.EIO) {
		t.Fatalf("append: %v, want EIO", err)
	}
	// No more Appends: the background goroutine alone must write and commit it.
	waitFor(t, "the backlog to drain", func() bool { st := w.Stats(); return st.Backlog == 0 && st.SyncedSeq == 1 })
	closeT(t, w)
	assertEntries(t, loadClean(t, dir), []monitor.Entry{e})
}

func TestWriter_ShortWriteIsCutBack(t *testing.T) {
	tests := []struct {
		name  string
		fault journaltest.Fault
	}{
		{"ShortNoError", journaltest.Fault{Op: journaltest.OpWrite, Keep: 37}},
		{"ShortWithENOSPC", journaltest.Fault{Op: journaltest.OpWrite, Keep: 100, Err: syscall.ENOSPC}},
		{"ShortThenTruncateFails", journaltest.Fault{Op: journaltest.OpWrite, Keep: 5, Err: syscall.EIO}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			fsys := &journaltest.FS{}
			w, _ := openT(t, dir, faultOpts(fsys))
			want := appendN(t, w, 0, 3)
			fsys.Inject(tc.fault)
			if tc.name == "ShortThenTruncateFails" {
				fsys.Inject(journaltest.Fault{Op: journaltest.OpTruncate, Err: syscall.EIO})
			}
			e := entryN(3)
			if err := w.Append(&e); !errors.Is(err, journal.ErrHeld) {
				t.Fatalf("append after a short write: %v, want ErrHeld", err)
			}
			want = append(want, e)
			time.Sleep(5 * time.Millisecond)
			want = append(want, appendN(t, w, 4, 3)...)
			closeT(t, w)
			got := loadClean(t, dir) // a fragment left in the file would show as a bad line
			assertEntries(t, got, want)
			assertContinuous(t, got, 1)
		})
	}
}

func TestWriter_FailedFsyncRewritesLines(t *testing.T) {
	dir := t.TempDir()
	fsys := &journaltest.FS{}
	w, _ := openT(t, dir, faultOpts(fsys))
	want := appendN(t, w, 0, 4)
	if err := w.Sync(); err != nil {
		t.Fatal(err)
	}
	want = append(want, appendN(t, w, 4, 6)...)
	fsys.Inject(journaltest.Fault{Op: journaltest.OpSync, Err: syscall.EIO})
	if err := w.Sync(); !errors.Is(err, syscall.EIO) {
		t.Fatalf("sync: %v, want EIO", err)
	}
	st := w.Stats()
	if st.FsyncErrors != 1 || st.Rewrites != 6 || st.Backlog != 6 || st.SyncedSeq != 4 {
		t.Fatalf("after a failed fsync: %+v", st)
	}
	if err := w.Sync(); err != nil {
		t.Fatalf("second sync: %v", err)
	}
	if st := w.Stats(); st.Backlog != 0 || st.SyncedSeq != 10 || st.LastError != nil {
		t.Fatalf("after the retry: %+v", st)
	}
	closeT(t, w)
	got := loadClean(t, dir)
	assertEntries(t, got, want)
	assertContinuous(t, got, 1)
}

func TestWriter_BacklogOverflowDropsOldestReadingNotAlarm(t *testing.T) {
	dir := t.TempDir()
	fsys := &journaltest.FS{}
	opts := faultOpts(fsys)
	opts.BacklogEntries = 4
	opts.RetryMin, opts.RetryMax = hour, hour // no retries until Sync
	w, _ := openT(t, dir, opts)
	fsys.Inject(journaltest.Fault{Op: journaltest.OpWrite, Times: -1, Err: syscall.ENOSPC})

	alarm := entryN(0)
	alarm.State = monitor.Alarm
	if err := w.Append(&alarm); !errors.Is(err, journal.ErrHeld) {
		t.Fatalf("alarm append on a full disk: %v", err)
	}
	var kept []monitor.Entry
	var dropped []error
	for i := 1; i <= 6; i++ {
		e := entryN(i)
		err := w.Append(&e)
		if errors.Is(err, journal.ErrDropped) {
			dropped = append(dropped, err)
		}
		kept = append(kept, e)
	}
	kept = kept[len(kept)-3:] // seqs 5, 6, 7 stay with the alarm (seq 1); 2, 3, 4 are dropped
	if len(dropped) != 3 || !strings.Contains(dropped[0].Error(), "seq 2 lost") {
		t.Fatalf("drops reported: %v", dropped)
	}
	if st := w.Stats(); st.Dropped != 3 || st.Backlog != 4 {
		t.Fatalf("stats: %+v", st)
	}
	fsys.Clear()
	if err := w.Sync(); err != nil {
		t.Fatal(err)
	}
	closeT(t, w)
	got, rep, err := journal.Load(dir)
	if err != nil {
		t.Fatal(err)
	}
	assertEntries(t, got, append([]monitor.Entry{alarm}, kept...))
	if rep.Gaps != 1 || rep.Missing != 3 || rep.Bad != 0 || rep.Torn != 0 {
		t.Fatalf("report should show exactly the dropped seqs as a gap: %s", rep)
	}
}

func TestWriter_CloseReportsUnwritten(t *testing.T) {
	fsys := &journaltest.FS{}
	w, _ := openT(t, t.TempDir(), faultOpts(fsys))
	fsys.Inject(journaltest.Fault{Op: journaltest.OpWrite, Times: -1, Err: syscall.ENOSPC})
	appendOrHeld := func(i int) {
		e := entryN(i)
		if err := w.Append(&e); !errors.Is(err, journal.ErrHeld) {
			t.Fatal(err)
		}
	}
	appendOrHeld(0)
	appendOrHeld(1)
	err := w.Close()
	if err == nil || !strings.Contains(err.Error(), "2 entries (seq 1 to 2)") || !errors.Is(err, syscall.ENOSPC) {
		t.Fatalf("close with a backlog: %v", err)
	}
}

func TestOpen_ReadOnlyDirectory(t *testing.T) {
	t.Run("InjectedEROFS", func(t *testing.T) {
		dir := t.TempDir()
		fsys := &journaltest.FS{}
		fsys.Inject(journaltest.Fault{Op: journaltest.OpOpen, Err: syscall.EROFS})
		_, _, err := journal.Open(dir, journal.Options{FS: fsys})
		if err == nil || !strings.Contains(err.Error(), "directory "+dir+" is not writable") || !errors.Is(err, syscall.EROFS) {
			t.Fatalf("Open on a read-only file system: %v", err)
		}
	})
	t.Run("Permissions", func(t *testing.T) {
		if os.Geteuid() == 0 {
			t.Skip("root ignores directory permissions; InjectedEROFS covers the message")
		}
		dir := t.TempDir()
		if err := os.Chmod(dir, 0o555); err != nil {
			t.Fatal(err)
		}
		defer os.Chmod(dir, 0o755)
		_, _, err := journal.Open(dir, journal.Options{})
		if err == nil || !strings.Contains(err.Error(), dir) || !errors.Is(err, os.ErrPermission) {
			t.Fatalf("Open on a read-only directory: %v", err)
		}
	})
	t.Run("RepairNeedsWrite", func(t *testing.T) {
		dir := t.TempDir()
		w, _ := openT(t, dir, journal.Options{})
		appendN(t, w, 0, 2)
		closeT(t, w)
		seg := segmentFiles(t, dir)[0]
		f, err := os.OpenFile(seg, os.O_WRONLY|os.O_APPEND, 0)
		if err != nil {
			t.Fatal(err)
		}
		f.WriteString(`{"seq":3,"ki`)
		f.Close()
		fsys := &journaltest.FS{}
		fsys.Inject(journaltest.Fault{Op: journaltest.OpOpen, Err: syscall.EROFS})
		_, _, err = journal.Open(dir, journal.Options{FS: fsys})
		if err == nil || !strings.Contains(err.Error(), seg) {
			t.Fatalf("Open needing a repair on a read-only file system: %v", err)
		}
	})
}

func TestWriter_RotationFailureKeepsWriting(t *testing.T) {
	dir := t.TempDir()
	fsys := &journaltest.FS{}
	opts := faultOpts(fsys)
	opts.SegmentBytes = 1000
	w, _ := openT(t, dir, opts)
	fsys.Inject(journaltest.Fault{Op: journaltest.OpSyncDir, Err: syscall.EIO})
	want := appendN(t, w, 0, 20) // the first rotation fails, and is retried after RetryMax
	if st := w.Stats(); st.WriteErrors != 1 {
		t.Fatalf("stats: %+v", st)
	}
	time.Sleep(10 * time.Millisecond)
	want = append(want, appendN(t, w, 20, 20)...)
	closeT(t, w)
	assertEntries(t, loadClean(t, dir), want)
	w, rec := openT(t, dir, opts)
	defer closeT(t, w)
	if rec.LastSeq != 40 {
		t.Fatalf("recovered last seq %d, want 40", rec.LastSeq)
	}
}

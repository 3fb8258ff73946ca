package journal

import (
	"fmt"
	"path/filepath"
	"time"
)

// run is the background goroutine: it commits on the group-commit interval (only when
// something was written since the last commit, sparing the SD card), when woken early,
// and retries failed writes and fsyncs with capped exponential backoff.
func (w *Writer) run() {
	defer close(w.done)
	t := time.NewTimer(w.opts.FsyncInterval)
	defer t.Stop()
	for {
		select {
		case <-w.stop:
			return
		case <-t.C:
		case <-w.kick:
		}
		w.syncMu.Lock()
		w.commit(false) // errors are in Stats and reach Append's callers
		w.syncMu.Unlock()
		t.Reset(w.nextWake())
	}
}

// nextWake is how long the background goroutine sleeps: until the next retry when one
// is pending, else the group-commit interval.
func (w *Writer) nextWake() time.Duration {
	w.mu.Lock()
	defer w.mu.Unlock()
	if w.retryAt.IsZero() {
		return w.opts.FsyncInterval
	}
	return max(time.Until(w.retryAt), time.Millisecond)
}

// Sync writes the backlog and commits everything appended so far to stable storage. It
// returns nil only when every appended entry is written and fsynced.
func (w *Writer) Sync() error {
	w.syncMu.Lock()
	defer w.syncMu.Unlock()
	return w.commit(true)
}

// commit writes the backlog and fsyncs the segment. With force false it respects the
// retry backoff. syncMu held; mu is released during the fsync so Append can go on.
func (w *Writer) commit(force bool) error {
	w.mu.Lock()
	if w.f == nil {
		w.mu.Unlock()
		return ErrClosed
	}
	if !force && !w.retryDue() {
		w.mu.Unlock()
		return nil
	}
	if w.held.len() > 0 {
		if err := w.flushHeld(); err != nil {
			n := w.held.len()
			w.mu.Unlock()
			return fmt.Errorf("journal: sync: %w: %d entries: %w", ErrHeld, n, err)
		}
	}
	if w.size == w.syncedSize {
		w.recovered()
		w.mu.Unlock()
		return nil
	}
	f, path, size, seq, covered := w.f, w.path, w.size, w.writtenSeq, len(w.unsynced)
	w.mu.Unlock()

	start := time.Now()
	err := f.Sync()
	d := time.Since(start)
	if w.opts.OnFsync != nil {
		w.opts.OnFsync(d, err)
	}

	w.mu.Lock()
	defer w.mu.Unlock()
	w.stats.LastFsyncDuration = d
	if err != nil {
		w.stats.FsyncErrors++
		w.fsyncFailed(err)
		return fmt.Errorf("journal: fsync %s: %w", path, err)
	}
	w.stats.Fsyncs++
	w.synced(size, seq, covered)
	return nil
}

// synced records a successful fsync that covered the first size bytes of the segment.
// mu held.
func (w *Writer) synced(size int64, seq uint64, covered int) {
	w.syncedSize = size
	w.stats.SyncedSeq = seq
	if w.unsyncLost {
		if size == w.size {
			w.unsynced, w.unsyncLost = w.unsynced[:0], false
		}
	} else {
		w.unsynced = w.unsynced[:copy(w.unsynced, w.unsynced[covered:])]
	}
	if w.size == w.syncedSize && w.held.len() == 0 {
		w.recovered()
	}
}

// recovered clears the error state once everything is written and committed. mu held.
func (w *Writer) recovered() {
	if w.held.len() == 0 {
		w.stats.LastError, w.backoff, w.retryAt = nil, 0, time.Time{}
	}
}

// fsyncFailed handles a failed fsync. Linux may have dropped the dirty pages and marked
// them clean, so a later fsync would report success without writing them. Cut the file
// back to the last good fsync and put the lines written since into the backlog, to be
// written again. If the copy of those lines overflowed, they cannot be rewritten: the
// error stays in Stats and a reader will see the seq gap if they were lost. mu held.
func (w *Writer) fsyncFailed(err error) {
	w.noteRetry(fmt.Errorf("fsync %s: %w", w.path, err))
	if w.unsyncLost {
		return
	}
	if terr := w.f.Truncate(w.syncedSize); terr != nil {
		w.failed(fmt.Errorf("cut %s back to %d after failed fsync: %w", w.path, w.syncedSize, terr))
		return // the lines stay in the file; the next fsync retries them
	}
	again := splitLines(w.unsynced)
	w.stats.Rewrites += uint64(len(again))
	for _, h := range w.held.pushFront(again) {
		w.stats.Dropped++
		w.stats.LastError = fmt.Errorf("%w: seq %d lost (limit %d) after: %w", ErrDropped, h.seq, w.held.limit, err)
	}
	w.stats.Backlog = w.held.len()
	w.size, w.writtenSeq = w.syncedSize, w.stats.SyncedSeq
	w.unsynced = w.unsynced[:0]
}

// rotate commits the full segment and moves to a new one named for the next seq. On any
// failure the writer stays on the current segment and tries again after the next Append.
func (w *Writer) rotate() error {
	w.syncMu.Lock()
	defer w.syncMu.Unlock()
	if err := w.commit(true); err != nil {
		return err
	}
	w.mu.Lock()
	defer w.mu.Unlock()
	if w.f == nil || w.size < w.opts.SegmentBytes || w.held.len() > 0 || w.size != w.syncedSize {
		return nil // closed, or something changed while committing
	}
	path := filepath.Join(w.dir, segmentName(w.nextSeq))
	f, err := w.opts.FS.OpenFile(path)
	if err == nil {
		if err = w.syncNew(f, path); err != nil {
			f.Close()
		}
	}
	if err != nil {
		// Keep writing to the full segment; it only grows past its limit. Try again
		// later, not on every Append.
		err = fmt.Errorf("journal: new segment %s: %w", path, err)
		w.stats.WriteErrors++
		w.stats.LastError = err
		w.rotateAt = time.Now().Add(w.opts.RetryMax)
		return err
	}
	old := w.f
	w.f, w.path, w.size, w.syncedSize = f, path, 0, 0
	w.unsynced, w.unsyncLost = w.unsynced[:0], false
	w.stats.Segment = path
	old.Close() // committed above; a close error loses nothing
	return nil
}

package journal

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"sync"
	"syscall"
	"time"

	"taut/monitor"
)

// Errors callers can branch on. Append and Sync wrap them together with the cause (a
// *fs.PathError carrying syscall.ENOSPC, say), so errors.Is works for both.
var (
	ErrClosed  = errors.New("journal: writer closed")
	ErrInvalid = errors.New("journal: invalid entry")
	ErrHeld    = errors.New("journal: entry held in memory, not yet written")
	ErrDropped = errors.New("journal: backlog full, entry dropped")
)

// Writer appends entries to a journal directory. Its methods are safe for concurrent use;
// entries get their seq in the order Append is called. A background goroutine commits
// (fsyncs) on the group-commit interval and retries failed writes.
//
// Locking: syncMu serialises fsyncs and segment changes and is taken before mu; mu guards
// the state and is never held across an fsync of the segment, so Append does not wait for
// a slow SD card except when it rotates segments or commits an urgent entry itself.
type Writer struct {
	dir  string
	opts Options
	lock *os.File // the directory, flock-ed while the writer is open

	syncMu sync.Mutex
	mu     sync.Mutex

	f          File
	path       string
	size       int64  // bytes of complete lines in f
	syncedSize int64  // bytes of f covered by the last successful fsync
	unsynced   []byte // f's bytes past syncedSize, to write again if an fsync fails
	unsyncLost bool   // unsynced overflowed unsyncedKeep and is incomplete
	torn       bool   // a failed write may have left bytes past size; cut before writing
	nextSeq    uint64
	writtenSeq uint64 // seq of the last line in f
	buf        []byte
	held       backlog
	backoff    time.Duration
	retryAt    time.Time // zero unless a write or fsync failed and a retry is pending
	rotateAt   time.Time // after a failed rotation, when to try again
	stats      Stats
	closed     bool

	kick chan struct{}
	stop chan struct{}
	done chan struct{}
}

// Open recovers the journal in dir (creating the directory if needed), repairs a torn
// tail, and returns a Writer that appends to a new segment, with what was recovered.
func Open(dir string, opts Options) (*Writer, *Recovery, error) {
	opts = opts.withDefaults()
	if err := ensureDir(dir, opts.FS); err != nil {
		return nil, nil, fmt.Errorf("open journal: %w", err)
	}
	lock, err := lockDir(dir)
	if err != nil {
		return nil, nil, fmt.Errorf("open journal: %w", err)
	}
	rec, err := recoverDir(dir, opts)
	if err == nil && rec.LastSeq == math.MaxUint64 {
		err = fmt.Errorf("last seq %d in %s leaves no seq for new entries", rec.LastSeq, dir)
	}
	if err != nil {
		lock.Close()
		return nil, rec, fmt.Errorf("open journal: %w", err)
	}
	w := &Writer{
		dir: dir, opts: opts, lock: lock, nextSeq: rec.LastSeq + 1, writtenSeq: rec.LastSeq,
		held: backlog{limit: opts.BacklogEntries},
		kick: make(chan struct{}, 1), stop: make(chan struct{}), done: make(chan struct{}),
	}
	w.stats.Repairs = rec.Repairs
	w.stats.LastSeq, w.stats.SyncedSeq = rec.LastSeq, rec.LastSeq
	if err := w.startSegment(rec.reuse); err != nil {
		lock.Close()
		return nil, rec, fmt.Errorf("open journal: %w", err)
	}
	go w.run()
	return w, rec, nil
}

// ensureDir creates dir if it is missing and fsyncs its parent, so that the directory
// itself survives a power cut along with the segments in it.
func ensureDir(dir string, fsys FS) error {
	if _, err := os.Stat(dir); err == nil {
		return nil
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("create directory %s: %w", dir, err)
	}
	if err := fsys.SyncDir(filepath.Dir(dir)); err != nil {
		return fmt.Errorf("fsync directory %s: %w", filepath.Dir(dir), err)
	}
	return nil
}

// startSegment opens the segment new entries go to: the newest one if it is empty and
// named for the next seq, else a new file made durable with a file and directory fsync.
func (w *Writer) startSegment(reuse string) error {
	path := filepath.Join(w.dir, segmentName(w.nextSeq))
	f, err := w.opts.FS.OpenFile(path)
	if err != nil {
		if errors.Is(err, fs.ErrPermission) || errors.Is(err, syscall.EROFS) {
			return fmt.Errorf("directory %s is not writable: %w", w.dir, err)
		}
		return fmt.Errorf("create segment %s: %w", path, err)
	}
	if path != reuse {
		if err := w.syncNew(f, path); err != nil {
			f.Close()
			return err
		}
	}
	w.f, w.path, w.size, w.syncedSize = f, path, 0, 0
	w.stats.Segment = path
	return nil
}

// syncNew makes a newly created segment and its name durable.
func (w *Writer) syncNew(f File, path string) error {
	if err := f.Sync(); err != nil {
		return fmt.Errorf("fsync new segment %s: %w", path, err)
	}
	if err := w.opts.FS.SyncDir(w.dir); err != nil {
		return fmt.Errorf("fsync directory %s: %w", w.dir, err)
	}
	return nil
}

// Append assigns e.Seq and writes e as one line with a single write. The line reaches
// stable storage within Options.FsyncInterval; an entry in alarm, or of kind fault or
// stop, is committed before Append returns.
//
// If the write fails (disk full, I/O error, read-only file system) the entry is kept in
// the bounded backlog and the error wraps ErrHeld and the cause; the backlog is written,
// in seq order, by later Appends and by the background retry. A write cut short is cut
// back off the file, so no partial line remains. An entry that cannot be encoded
// faithfully (NaN, an unnamed state) is refused with ErrInvalid and gets no seq.
func (w *Writer) Append(e *monitor.Entry) error {
	w.mu.Lock()
	if w.closed {
		w.mu.Unlock()
		return ErrClosed
	}
	seq, old := w.nextSeq, e.Seq
	e.Seq = seq
	line, err := appendEntry(w.buf[:0], e)
	if err != nil {
		e.Seq = old
		w.mu.Unlock()
		return fmt.Errorf("%w: %w", ErrInvalid, err)
	}
	w.buf = line[:0]
	w.nextSeq++
	w.stats.Appends++
	w.stats.LastSeq = seq
	urgent := isUrgent(e)
	err = w.writeOrHold(line, seq, urgent)
	rotate := err == nil && w.size >= w.opts.SegmentBytes && w.retryDue() &&
		!time.Now().Before(w.rotateAt)
	early := w.size-w.syncedSize >= earlySyncBytes
	w.mu.Unlock()

	var serr error
	if urgent {
		// Commit now. Sync also writes the backlog, so a held urgent entry that can be
		// written now is written and committed, and Append reports success.
		if serr = w.Sync(); serr == nil {
			err = nil
		}
	}
	if rotate {
		w.rotate() // a failure is in Stats; the entry is written and rotation is retried
	} else if early {
		w.wake()
	}
	if serr != nil {
		return fmt.Errorf("journal: append: seq %d not committed: %w", seq, serr)
	}
	return err
}

// writeOrHold writes line after anything held, or holds it. Called with mu held.
func (w *Writer) writeOrHold(line []byte, seq uint64, urgent bool) error {
	if w.held.len() > 0 {
		if !w.retryDue() {
			return w.hold(line, seq, urgent, w.stats.LastError)
		}
		if err := w.flushHeld(); err != nil {
			return w.hold(line, seq, urgent, err)
		}
	}
	if err := w.writeLine(line, seq); err != nil {
		return w.hold(line, seq, urgent, err)
	}
	return nil
}

// hold copies line into the backlog and returns the error Append reports.
func (w *Writer) hold(line []byte, seq uint64, urgent bool, cause error) error {
	h := held{line: append([]byte(nil), line...), seq: seq, urgent: urgent}
	dropped, overflow := w.held.push(h)
	w.stats.Backlog = w.held.len()
	if overflow {
		w.stats.Dropped++
		return fmt.Errorf("%w: seq %d (%d waiting); %w: seq %d lost (limit %d): %w",
			ErrHeld, seq, w.held.len(), ErrDropped, dropped.seq, w.held.limit, cause)
	}
	return fmt.Errorf("%w: seq %d (%d waiting): %w", ErrHeld, seq, w.held.len(), cause)
}

// flushHeld writes the backlog in order and stops at the first failure. mu held.
func (w *Writer) flushHeld() error {
	for w.held.len() > 0 {
		h := w.held.front()
		if err := w.writeLine(h.line, h.seq); err != nil {
			return err
		}
		w.held.pop()
		w.stats.Backlog = w.held.len()
	}
	return nil
}

// writeLine writes one complete line with one Write. On any failure it cuts the file back
// to the last complete line, so that the next line is never glued to a fragment. mu held.
func (w *Writer) writeLine(line []byte, seq uint64) error {
	if w.torn {
		if err := w.f.Truncate(w.size); err != nil {
			w.failed(err)
			return fmt.Errorf("cut partial line off %s at %d: %w", w.path, w.size, err)
		}
		w.torn = false
	}
	n, err := w.f.Write(line)
	if err == nil && n < len(line) {
		err = io.ErrShortWrite
	}
	if err != nil {
		err = fmt.Errorf("write %s: %w", w.path, err)
		if terr := w.f.Truncate(w.size); terr != nil {
			w.torn = true
			err = fmt.Errorf("%w; cut back to %d: %w", err, w.size, terr)
		}
		w.failed(err)
		return err
	}
	w.size += int64(n)
	w.writtenSeq = seq
	w.stats.Written++
	w.stats.Bytes += uint64(n)
	w.keepUnsynced(line)
	return nil
}

// failed records a write or fsync failure and schedules the next retry. mu held.
func (w *Writer) failed(err error) {
	w.stats.WriteErrors++
	w.noteRetry(err)
}

func (w *Writer) noteRetry(err error) {
	w.stats.LastError = err
	w.backoff = min(max(2*w.backoff, w.opts.RetryMin), w.opts.RetryMax)
	w.retryAt = time.Now().Add(w.backoff)
}

func (w *Writer) retryDue() bool {
	return w.retryAt.IsZero() || !time.Now().Before(w.retryAt)
}

// keepUnsynced remembers written bytes until they are fsynced. mu held.
func (w *Writer) keepUnsynced(line []byte) {
	if w.unsyncLost {
		return
	}
	if len(w.unsynced)+len(line) > unsyncedKeep {
		w.unsynced, w.unsyncLost = w.unsynced[:0], true
		return
	}
	w.unsynced = append(w.unsynced, line...)
}

// wake asks the background goroutine to commit now.
func (w *Writer) wake() {
	select {
	case w.kick <- struct{}{}:
	default:
	}
}

// Stats returns a snapshot of the counters.
func (w *Writer) Stats() Stats {
	w.mu.Lock()
	defer w.mu.Unlock()
	return w.stats
}

// Close writes what it can of the backlog, commits, stops the background goroutine and
// closes the segment. Entries it could not write are lost, and the error says how many.
func (w *Writer) Close() error {
	w.mu.Lock()
	if w.closed {
		w.mu.Unlock()
		return ErrClosed
	}
	w.closed = true
	w.mu.Unlock()
	close(w.stop)
	<-w.done

	w.syncMu.Lock()
	defer w.syncMu.Unlock()
	err := w.commit(true)
	w.mu.Lock()
	defer w.mu.Unlock()
	if n := w.held.len(); n > 0 {
		err = fmt.Errorf("journal: close: %d entries (seq %d to %d) could not be written and are lost: %w",
			n, w.held.items[0].seq, w.held.items[n-1].seq, err)
	}
	cerr := w.f.Close()
	w.f = nil
	w.lock.Close()
	return errors.Join(err, cerr)
}

package journal

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"slices"

	"taut/monitor"
)

// Recovery is what Open found in the journal directory.
type Recovery struct {
	LastSeq  uint64 // highest seq in the journal; the next Append gets LastSeq+1
	Segments int    // segment files found
	Repairs  int    // torn tails cut off
	Cuts     []Cut  // what each repair cut
	// Entries is the recent history for resuming state, in seq order: for each string its
	// latest Options.RecoverReadings readings and its latest entry of another kind (a
	// state change), plus the latest 16 entries without a string. At most
	// strings × (RecoverReadings+1) + 16 entries: about 11 000, some 3 MB, for a
	// 230-string piano with the default 48.
	Entries []monitor.Entry
	// Report describes the segments read for the history (the newest
	// Options.RecoverSegments): skipped lines, seq gaps.
	Report *ReadReport

	reuse string // newest segment if empty and named for LastSeq+1
}

// Cut is one repair: bytes cut off the end of a segment.
type Cut struct {
	File   string
	Offset int64 // new size of the file: the end of its last complete line
	Bytes  int64 // bytes removed
	NUL    bool  // the removed bytes were all NUL (a power cut on some file systems)
}

func (c Cut) String() string {
	what := "torn line"
	if c.NUL {
		what = "NUL bytes"
	}
	return fmt.Sprintf("%s: cut %d bytes (%s) after offset %d", c.File, c.Bytes, what, c.Offset)
}

// recoverDir repairs the newest segments' tails and reads the recent history.
func recoverDir(dir string, opts Options) (*Recovery, error) {
	rec := &Recovery{Report: &ReadReport{}}
	segs, err := listSegments(dir)
	if err != nil {
		return rec, fmt.Errorf("list %s: %w", dir, err)
	}
	rec.Segments = len(segs)
	if len(segs) == 0 {
		return rec, nil
	}
	if err := repairTails(segs, opts.FS, rec); err != nil {
		return rec, err
	}
	h := newHistory(opts.RecoverReadings)
	s := &scanner{rep: rec.Report, fn: h.add}
	for _, sg := range segs[max(0, len(segs)-opts.RecoverSegments):] {
		if err := s.file(sg.path); err != nil {
			return rec, err
		}
	}
	newest := segs[len(segs)-1]
	rec.LastSeq = max(rec.Report.LastSeq, newest.firstSeq-1)
	rec.Entries = h.entries()
	if fi, err := os.Stat(newest.path); err == nil && fi.Size() == 0 && newest.firstSeq == rec.LastSeq+1 {
		rec.reuse = newest.path
	}
	return rec, nil
}

// repairTails cuts a torn tail off the newest segment, and off older ones while the newer
// are empty (a crash right after creating a segment).
func repairTails(segs []segment, fsys FS, rec *Recovery) error {
	for i := len(segs) - 1; i >= 0; i-- {
		size, err := repairTail(segs[i].path, fsys, rec)
		if err != nil {
			return err
		}
		if size > 0 {
			return nil
		}
	}
	return nil
}

// repairTail cuts path back to its last newline if it ends otherwise, fsyncs it, and
// returns the size left.
func repairTail(path string, fsys FS, rec *Recovery) (int64, error) {
	keep, size, nul, err := lastLineEnd(path)
	if err != nil {
		return 0, fmt.Errorf("check tail of %s: %w", path, err)
	}
	if keep == size {
		return size, nil
	}
	f, err := fsys.OpenFile(path)
	if err != nil {
		return 0, fmt.Errorf("repair %s: %w", path, err)
	}
	if err := f.Truncate(keep); err != nil {
		f.Close()
		return 0, fmt.Errorf("repair %s: cut to %d: %w", path, keep, err)
	}
	if err := f.Sync(); err != nil {
		f.Close()
		return 0, fmt.Errorf("repair %s: fsync: %w", path, err)
	}
	if err := f.Close(); err != nil {
		return 0, fmt.Errorf("repair %s: %w", path, err)
	}
	rec.Repairs++
	rec.Cuts = append(rec.Cuts, Cut{File: path, Offset: keep, Bytes: size - keep, NUL: nul})
	return keep, nil
}

// lastLineEnd returns the offset just past the last newline of path (0 if none), the
// file size, and whether every byte after that newline is NUL. It reads backwards in
// blocks, so a long garbage tail costs little memory.
func lastLineEnd(path string) (keep, size int64, nul bool, err error) {
	f, err := os.Open(path)
	if err != nil {
		return 0, 0, false, err
	}
	defer f.Close()
	fi, err := f.Stat()
	if err != nil {
		return 0, 0, false, err
	}
	size, nul = fi.Size(), true
	buf := make([]byte, 32<<10)
	for end := size; end > 0; {
		start := max(0, end-int64(len(buf)))
		b := buf[:end-start]
		if _, err := f.ReadAt(b, start); err != nil && err != io.EOF {
			return 0, 0, false, err
		}
		i := bytes.LastIndexByte(b, '\n')
		nul = nul && isAllNUL(b[i+1:])
		if i >= 0 {
			return start + int64(i) + 1, size, nul, nil
		}
		end = start
	}
	return 0, size, nul, nil
}

// history keeps the bounded recent past that Recovery.Entries returns.
type history struct {
	perString map[string]*stringHistory
	other     ring
	readings  int
}

type stringHistory struct {
	readings ring
	last     *monitor.Entry // latest entry of another kind (state change)
}

func newHistory(readings int) *history {
	return &history{perString: map[string]*stringHistory{}, other: ring{max: recoverOther}, readings: readings}
}

func (h *history) add(e *monitor.Entry) error {
	if e.String == "" {
		h.other.push(*e)
		return nil
	}
	sh := h.perString[e.String]
	if sh == nil {
		sh = &stringHistory{readings: ring{max: h.readings}}
		h.perString[e.String] = sh
	}
	if e.Kind == monitor.KindReading {
		sh.readings.push(*e)
	} else {
		c := *e
		sh.last = &c
	}
	return nil
}

// entries returns everything kept, in seq order.
func (h *history) entries() []monitor.Entry {
	out := h.other.appendTo(nil)
	for _, sh := range h.perString {
		out = sh.readings.appendTo(out)
		if sh.last != nil {
			out = append(out, *sh.last)
		}
	}
	slices.SortStableFunc(out, func(a, b monitor.Entry) int {
		switch {
		case a.Seq < b.Seq:
			return -1
		case a.Seq > b.Seq:
			return 1
		}
		return 0
	})
	return out
}

// ring keeps the latest max entries.
type ring struct {
	buf  []monitor.Entry
	next int
	max  int
}

func (r *ring) push(e monitor.Entry) {
	if len(r.buf) < r.max {
		r.buf = append(r.buf, e)
		return
	}
	r.buf[r.next] = e
	r.next = (r.next + 1) % r.max
}

// appendTo appends the kept entries, oldest first.
func (r *ring) appendTo(dst []monitor.Entry) []monitor.Entry {
	dst = append(dst, r.buf[r.next:]...)
	return append(dst, r.buf[:r.next]...)
}

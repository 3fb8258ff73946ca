package journal

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"

	"taut/monitor"
)

// maxLineBytes is the longest line the reader will decode. The writer's lines are a few
// hundred bytes; anything longer is garbage (a run of NULs without a newline, say) and is
// skipped without holding it all in memory.
const maxLineBytes = 1 << 20

// Load reads a segment file, or every segment of a journal directory in sequence order,
// and returns the entries with a report of what was skipped. A damaged journal is never an
// error: a torn final line and bad interior lines are skipped and described in the report.
// Only I/O errors (the path does not exist, cannot be read) return an error, naming the path.
func Load(path string) ([]monitor.Entry, *ReadReport, error) {
	var entries []monitor.Entry
	rep, err := Scan(path, func(e *monitor.Entry) error {
		entries = append(entries, *e)
		return nil
	})
	return entries, rep, err
}

// Scan is the streaming form of Load for journals too big to hold: it calls fn for each
// entry in order. The entry is reused after fn returns; copy it to keep it. An error from
// fn stops the scan and is returned as is.
func Scan(path string, fn func(e *monitor.Entry) error) (*ReadReport, error) {
	s := &scanner{rep: &ReadReport{}, fn: fn}
	fi, err := os.Stat(path)
	if err != nil {
		return s.rep, fmt.Errorf("journal: read %s: %w", path, err)
	}
	if !fi.IsDir() {
		return s.rep, s.file(path)
	}
	segs, err := listSegments(path)
	if err != nil {
		return s.rep, fmt.Errorf("journal: read %s: %w", path, err)
	}
	for _, sg := range segs {
		if err := s.file(sg.path); err != nil {
			return s.rep, err
		}
	}
	return s.rep, nil
}

// scanner carries the report and the seq order checks across segments.
type scanner struct {
	rep     *ReadReport
	fn      func(e *monitor.Entry) error
	entry   monitor.Entry
	line    []byte
	prevSeq uint64
}

// errStop is returned by fn wrappers inside the package to end a scan early.
var errStop = errors.New("journal: stop scan")

func (s *scanner) file(path string) error {
	f, err := os.Open(path)
	if err != nil {
		return fmt.Errorf("journal: read %s: %w", path, err)
	}
	defer f.Close()
	s.rep.Files = append(s.rep.Files, path)
	r := bufio.NewReaderSize(f, 64<<10)
	var offset int64
	for lineNo := 1; ; lineNo++ {
		line, n, terminated, err := s.readLine(r)
		if err != nil {
			return fmt.Errorf("journal: read %s: %w", path, err)
		}
		if n == 0 {
			return nil
		}
		s.rep.Lines++
		p := Problem{File: path, Line: lineNo, Offset: offset, Bytes: n}
		offset += int64(n)
		if terminated {
			offset++
			p.Bytes--
		}
		if err := s.handle(p, line, terminated); err != nil {
			return err
		}
	}
}

// handle decodes one line and either delivers it or records why it was skipped.
func (s *scanner) handle(p Problem, line []byte, terminated bool) error {
	if !terminated {
		p.Reason = "unterminated final line (torn write or power cut)"
		if isAllNUL(line) {
			p.Reason = "NUL-filled tail (power cut)"
		}
		s.rep.skip(p, true)
		return nil
	}
	if reason := s.decode(line, p.Bytes); reason != "" {
		p.Reason = reason
		s.rep.skip(p, false)
		return nil
	}
	s.order(p)
	s.rep.Entries++
	return s.fn(&s.entry)
}

// decode parses line (with its newline) into s.entry and returns why it is not an entry,
// or "" if it is one.
func (s *scanner) decode(line []byte, n int) string {
	switch {
	case n > maxLineBytes:
		return fmt.Sprintf("line longer than %d bytes", maxLineBytes)
	case n == 0:
		return "empty line"
	case bytes.IndexByte(line, 0) >= 0:
		return "NUL bytes in line (power-cut garbage)"
	}
	s.entry = monitor.Entry{}
	if err := json.Unmarshal(line, &s.entry); err != nil {
		return "not a journal entry: " + err.Error()
	}
	if s.entry.Seq == 0 {
		return `not a journal entry: no "seq"`
	}
	if s.entry.Kind == "" {
		return `not a journal entry: no "kind"`
	}
	return ""
}

// order checks the entry's seq against the previous one and records gaps and disorder.
func (s *scanner) order(p Problem) {
	seq, rep := s.entry.Seq, s.rep
	switch {
	case rep.Entries == 0:
		rep.FirstSeq = seq
	case seq <= s.prevSeq:
		rep.Disordered++
		if len(rep.Disorder) < maxListed {
			p.Reason = fmt.Sprintf("seq %d after seq %d", seq, s.prevSeq)
			rep.Disorder = append(rep.Disorder, p)
		}
	case seq > s.prevSeq+1:
		rep.Gaps++
		rep.Missing += seq - s.prevSeq - 1
		if len(rep.GapsList) < maxListed {
			rep.GapsList = append(rep.GapsList, Gap{After: s.prevSeq, Before: seq})
		}
	}
	if seq > s.prevSeq || rep.Entries == 0 {
		s.prevSeq = seq
	}
	rep.LastSeq = s.prevSeq
}

// readLine returns the next line (with its newline if terminated), its length in the file
// and whether it ended with a newline. Lines over maxLineBytes are counted but not kept.
// n == 0 means end of file.
func (s *scanner) readLine(r *bufio.Reader) (line []byte, n int, terminated bool, err error) {
	s.line = s.line[:0]
	for {
		chunk, err := r.ReadSlice('\n')
		n += len(chunk)
		if len(s.line)+len(chunk) <= maxLineBytes+1 {
			s.line = append(s.line, chunk...)
		}
		switch {
		case err == nil:
			return s.line, n, true, nil
		case errors.Is(err, bufio.ErrBufferFull):
			continue
		case errors.Is(err, io.EOF):
			return s.line, n, false, nil
		default:
			return nil, 0, false, err
		}
	}
}

func isAllNUL(b []byte) bool {
	for _, c := range b {
		if c != 0 {
			return false
		}
	}
	return true
}

package journal_test

import (
	"bytes"
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"taut/monitor"
	"taut/monitor/journal"
	"taut/monitor/journal/journaltest"
)

// writeSegment writes a segment file by hand.
func writeSegment(t testing.TB, dir string, first uint64, body string) string {
	t.Helper()
	path := filepath.Join(dir, "journal-"+strings.Repeat("0", 19)+"1.jsonl")
	if first != 1 {
		path = filepath.Join(dir, filepathName(first))
	}
	if err := os.WriteFile(path, []byte(body), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

func filepathName(first uint64) string {
	s := strings.Repeat("0", 20) + itoa(first)
	return "journal-" + s[len(s)-20:] + ".jsonl"
}

func itoa(u uint64) string {
	if u == 0 {
		return "0"
	}
	var b []byte
	for ; u > 0; u /= 10 {
		b = append([]byte{byte('0' + u%10)}, b...)
	}
	return string(b)
}

func TestLoad_ReportsBadLines(t *testing.T) {
	good := func(seq int) string {
		var buf bytes.Buffer
		dir := t.TempDir()
		w, _ := openT(t, dir, journal.Options{FsyncInterval: hour})
		for range seq {
			e := entryN(0)
			w.Append(&e)
		}
		closeT(t, w)
		lines := bytes.SplitAfter(readFile(t, segmentFiles(t, dir)[0]), []byte("\n"))
		buf.Write(lines[seq-1])
		return buf.String()
	}
	l1, l2, l3, l4 := good(1), good(2), good(3), good(4)
	tests := []struct {
		name    string
		body    string
		seqs    []uint64
		line    int // line of the first problem
		reason  string
		bad     int
		torn    int
		missing uint64
	}{
		{"Clean", l1 + l2 + l3, []uint64{1, 2, 3}, 0, "", 0, 0, 0},
		{"GarbageLine", l1 + "}{ not json\n" + l2, []uint64{1, 2}, 2, "not a journal entry", 1, 0, 0},
		{"GluedLines", l1 + strings.TrimSuffix(l2, "\n") + l3 + l4, []uint64{1, 4}, 2, "not a journal entry", 1, 0, 2},
		{"NULLine", l1 + "\x00\x00\x00\n" + l2, []uint64{1, 2}, 2, "NUL bytes", 1, 0, 0},
		{"EmptyLine", l1 + "\n" + l2, []uint64{1, 2}, 2, "empty line", 1, 0, 0},
		{"NoSeq", l1 + `{"kind":"reading"}` + "\n" + l2, []uint64{1, 2}, 2, `no "seq"`, 1, 0, 0},
		{"NoKind", l1 + `{"seq":9}` + "\n" + l2, []uint64{1, 2}, 2, `no "kind"`, 1, 0, 0},
		{"UnknownState", l1 + strings.Replace(l2, `"settling"`, `"wobbly"`, 1) + l3, []uint64{1, 3}, 2, "unknown state", 1, 0, 1},
		{"TornTail", l1 + l2 + l3[:40], []uint64{1, 2}, 3, "unterminated final line", 0, 1, 0},
		{"CompleteButUnterminated", l1 + strings.TrimSuffix(l2, "\n"), []uint64{1}, 2, "unterminated", 0, 1, 0},
		{"NULTail", l1 + l2 + strings.Repeat("\x00", 4096), []uint64{1, 2}, 3, "NUL-filled tail", 0, 1, 0},
		{"HugeLine", l1 + strings.Repeat("x", 3<<20) + "\n" + l2, []uint64{1, 2}, 2, "line longer than", 1, 0, 0},
		{"Gap", l1 + l4, []uint64{1, 4}, 0, "", 0, 0, 2},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			path := writeSegment(t, t.TempDir(), 1, tc.body)
			got, rep, err := journal.Load(path)
			if err != nil {
				t.Fatalf("load: %v", err)
			}
			var seqs []uint64
			for _, e := range got {
				seqs = append(seqs, e.Seq)
			}
			if !equalSeqs(seqs, tc.seqs) || rep.Bad != tc.bad || rep.Torn != tc.torn || rep.Missing != tc.missing {
				t.Fatalf("seqs %v, report %s; want seqs %v, %d bad, %d torn, %d missing", seqs, rep, tc.seqs, tc.bad, tc.torn, tc.missing)
			}
			if tc.reason == "" {
				return
			}
			p := rep.Problems[0]
			if p.File != path || p.Line != tc.line || !strings.Contains(p.Reason, tc.reason) {
				t.Fatalf("first problem %s, want %s:%d: %s", p, path, tc.line, tc.reason)
			}
			if s := rep.String(); !strings.Contains(s, path+":"+itoa(uint64(tc.line))+":") {
				t.Fatalf("report does not name file:line:\n%s", s)
			}
		})
	}
}

func equalSeqs(a, b []uint64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

func TestLoad_Errors(t *testing.T) {
	missing := filepath.Join(t.TempDir(), "nope")
	_, _, err := journal.Load(missing)
	if !errors.Is(err, fs.ErrNotExist) || !strings.Contains(err.Error(), missing) {
		t.Fatalf("load of a missing path: %v", err)
	}
	empty := t.TempDir()
	got, rep, err := journal.Load(empty)
	if err != nil || len(got) != 0 || len(rep.Files) != 0 {
		t.Fatalf("load of an empty directory: %v, %d entries, %s", err, len(got), rep)
	}
}

func TestScan_StopsOnCallbackError(t *testing.T) {
	dir := t.TempDir()
	w, _ := openT(t, dir, journal.Options{FsyncInterval: hour})
	appendN(t, w, 0, 10)
	closeT(t, w)
	stop := errors.New("enough")
	n := 0
	_, err := journal.Scan(dir, func(e *monitor.Entry) error {
		if n++; n == 3 {
			return stop
		}
		return nil
	})
	if err != stop || n != 3 {
		t.Fatalf("scan returned %v after %d entries, want the callback's error after 3", err, n)
	}
}

// FuzzLoad feeds arbitrary bytes as a segment: Load must not fail or panic, and Open must
// repair the file so that it then ends on a line boundary and takes new entries.
func FuzzLoad(f *testing.F) {
	line := `{"seq":1,"kind":"reading","time":"2025-11-03T01:00:00Z","mono_s":0,"run":"r","string":"A0","cents":-2.5,"rate_cents_per_hour":0.8,"state":"settling"}` + "\n"
	f.Add([]byte(line))
	f.Add([]byte(line + line[:30]))
	f.Add([]byte(line + "\x00\x00\x00"))
	f.Add([]byte("\n\n{}\n"))
	f.Add([]byte(strings.Replace(line, `"seq":1`, `"seq":18446744073709551615`, 1)))
	f.Fuzz(func(t *testing.T, data []byte) {
		dir := t.TempDir()
		path := writeSegment(t, dir, 1, string(data))
		_, rep, err := journal.Load(path)
		if err != nil {
			t.Fatalf("load: %v", err)
		}
		_ = rep.String()
		w, rec, err := journal.Open(dir, journal.Options{FsyncInterval: hour, FS: &journaltest.FS{NoSync: true}})
		if err != nil {
			if rec != nil && rec.LastSeq == ^uint64(0) && strings.Contains(err.Error(), "no seq for new entries") {
				return // seq space exhausted
			}
			t.Fatalf("open: %v", err)
		}
		e := entryN(1)
		err = w.Append(&e)
		closeT(t, w)
		if err != nil || e.Seq != rec.LastSeq+1 {
			t.Fatalf("append: %v, seq %d after recovered %d", err, e.Seq, rec.LastSeq)
		}
		_, rep, err = journal.Load(dir)
		if err != nil || rep.Torn != 0 {
			t.Fatalf("after repair: %v, %s", err, rep)
		}
	})
}

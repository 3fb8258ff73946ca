package journal_test

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"taut/monitor"
	"taut/monitor/journal"
	"taut/monitor/journal/journaltest"
)

// TestTruncatedAtEveryOffset cuts a two-segment journal of 20 entries at every byte
// offset, as a power cut can, plain and with the cut file padded with NULs back to its
// old length (a zero-filled tail), then checks the reader and recovery: nothing fails,
// every complete line before the cut is still there, the torn part is reported and cut,
// and seq continues.
func TestTruncatedAtEveryOffset(t *testing.T) {
	src := t.TempDir()
	w, _ := openT(t, src, journal.Options{FsyncInterval: hour, SegmentBytes: 3100})
	sample := appendN(t, w, 0, 20)
	closeT(t, w)
	segs := segmentFiles(t, src)
	if len(segs) != 2 {
		t.Fatalf("sample has %d segments, want 2", len(segs))
	}
	files := [][]byte{readFile(t, segs[0]), readFile(t, segs[1])}
	names := []string{filepath.Base(segs[0]), filepath.Base(segs[1])}
	total := len(files[0]) + len(files[1])

	step := 1
	if testing.Short() || raceEnabled {
		step = 7 // a prime, so every position within a line is still visited across lines
	}
	for _, pad := range []bool{false, true} {
		name := map[bool]string{false: "Plain", true: "NULPadded"}[pad]
		t.Run(name, func(t *testing.T) {
			dir := t.TempDir()
			tried := 0
			for cut := 0; cut <= total; cut += step {
				c := writeCut(t, dir, names, files, cut, pad)
				checkCut(t, dir, c, sample)
				tried++
				if t.Failed() {
					t.Fatalf("cut at offset %d of %d", cut, total)
				}
			}
			t.Logf("tried %d of the %d byte offsets of a %d-byte, 20-entry, 2-segment journal", tried, total+1, total)
		})
	}
}

// cutCase describes one damaged copy of the sample.
type cutCase struct {
	complete int    // complete lines before the cut
	tornFile string // path of the file with a torn tail, "" if the cut fell on a line end and no padding
	tornLen  int    // bytes after its last newline
	tornLine int    // line number of the torn fragment in tornFile
}

// writeCut fills dir with the sample cut at offset cut: the segment holding the cut is
// truncated there (and padded with NULs to its old length if pad), later segments absent.
func writeCut(t *testing.T, dir string, names []string, files [][]byte, cut int, pad bool) cutCase {
	t.Helper()
	clearDir(t, dir)
	var c cutCase
	for i, data := range files {
		if cut <= 0 && i > 0 {
			break
		}
		keep := data[:min(cut, len(data))]
		cut -= len(data)
		body := keep
		if pad {
			body = append(bytes.Clone(keep), make([]byte, len(data)-len(keep))...)
		}
		path := filepath.Join(dir, names[i])
		if err := os.WriteFile(path, body, 0o644); err != nil {
			t.Fatal(err)
		}
		lines := bytes.Count(keep, []byte{'\n'})
		c.complete += lines
		if tail := len(body) - (bytes.LastIndexByte(keep, '\n') + 1); tail > 0 {
			c.tornFile, c.tornLen, c.tornLine = path, tail, lines+1
		}
	}
	return c
}

func checkCut(t *testing.T, dir string, c cutCase, sample []monitor.Entry) {
	t.Helper()
	torn := 0
	if c.tornFile != "" {
		torn = 1
	}
	got, rep, err := journal.Load(dir)
	if err != nil {
		t.Errorf("load: %v", err)
		return
	}
	assertEntries(t, got, sample[:c.complete])
	if rep.Torn != torn || rep.Bad != 0 || rep.Gaps != 0 {
		t.Errorf("load report: %s", rep)
		return
	}
	if torn == 1 {
		p := rep.Problems[0]
		if p.File != c.tornFile || p.Line != c.tornLine || p.Bytes != c.tornLen || !strings.Contains(rep.String(), p.Reason) {
			t.Errorf("torn line reported as %+v, want %s:%d with %d bytes", p, c.tornFile, c.tornLine, c.tornLen)
		}
	}

	w, rec, err := journal.Open(dir, journal.Options{FsyncInterval: hour, FS: &journaltest.FS{NoSync: true}})
	if err != nil {
		t.Errorf("open: %v", err)
		return
	}
	if rec.LastSeq != uint64(c.complete) || rec.Repairs != torn {
		t.Errorf("recovered last seq %d with %d repairs (%v), want %d and %d", rec.LastSeq, rec.Repairs, rec.Cuts, c.complete, torn)
	}
	if torn == 1 && (rec.Cuts[0].File != c.tornFile || rec.Cuts[0].Bytes != int64(c.tornLen)) {
		t.Errorf("repair %v, want %d bytes cut from %s", rec.Cuts[0], c.tornLen, c.tornFile)
	}
	next := entryN(100)
	if err := w.Append(&next); err != nil {
		t.Errorf("append after repair: %v", err)
	}
	closeT(t, w)
	if next.Seq != uint64(c.complete)+1 {
		t.Errorf("next seq %d, want %d", next.Seq, c.complete+1)
	}
	got = loadClean(t, dir)
	assertEntries(t, got, append(sample[:c.complete:c.complete], next))
}

func clearDir(t *testing.T, dir string) {
	t.Helper()
	des, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	for _, de := range des {
		if err := os.Remove(filepath.Join(dir, de.Name())); err != nil {
			t.Fatal(err)
		}
	}
}

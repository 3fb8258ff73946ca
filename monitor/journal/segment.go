package journal

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
)

// Segment file names carry the seq of their first entry, zero padded to the 20 digits of
// the largest uint64, so that names sort in sequence order and never depend on the wall
// clock (boards without a real-time clock boot in the past and jump forward later).
const (
	segmentPrefix = "journal-"
	segmentSuffix = ".jsonl"
	seqDigits     = 20
)

// segment is one journal file and the seq its name says it starts at.
type segment struct {
	path     string
	firstSeq uint64
}

// segmentName returns the file name of the segment whose first entry has seq first.
func segmentName(first uint64) string {
	return fmt.Sprintf("%s%0*d%s", segmentPrefix, seqDigits, first, segmentSuffix)
}

// parseSegmentName returns the first seq of a segment file name, or false if name is not
// a segment (other files in the directory are ignored).
func parseSegmentName(name string) (uint64, bool) {
	digits, ok := strings.CutPrefix(name, segmentPrefix)
	if !ok {
		return 0, false
	}
	digits, ok = strings.CutSuffix(digits, segmentSuffix)
	if !ok || len(digits) != seqDigits {
		return 0, false
	}
	seq, err := strconv.ParseUint(digits, 10, 64)
	if err != nil {
		return 0, false
	}
	return seq, true
}

// listSegments returns the segments in dir in sequence order.
func listSegments(dir string) ([]segment, error) {
	des, err := os.ReadDir(dir)
	if err != nil {
		return nil, err
	}
	var segs []segment
	for _, de := range des {
		if !de.Type().IsRegular() {
			continue
		}
		if seq, ok := parseSegmentName(de.Name()); ok {
			segs = append(segs, segment{path: filepath.Join(dir, de.Name()), firstSeq: seq})
		}
	}
	slices.SortFunc(segs, func(a, b segment) int {
		switch {
		case a.firstSeq < b.firstSeq:
			return -1
		case a.firstSeq > b.firstSeq:
			return 1
		}
		return 0
	})
	return segs, nil
}

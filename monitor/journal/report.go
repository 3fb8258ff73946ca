package journal

import (
	"fmt"
	"strings"
)

// maxListed bounds how many problems and gaps a ReadReport lists one by one; the counts
// are always complete.
const maxListed = 100

// Problem is one line the reader skipped, or kept with a remark.
type Problem struct {
	File   string // path of the segment
	Line   int    // 1-based line number in File
	Offset int64  // byte offset of the start of the line
	Bytes  int    // length of the line without its newline
	Reason string // what was wrong
}

func (p Problem) String() string {
	return fmt.Sprintf("%s:%d: %s (%d bytes at offset %d)", p.File, p.Line, p.Reason, p.Bytes, p.Offset)
}

// Gap is a jump in seq: entries After and Before were read and none in between.
type Gap struct {
	After, Before uint64
}

// Missing is the number of seqs absent in the gap.
func (g Gap) Missing() uint64 { return g.Before - g.After - 1 }

// ReadReport says what the reader found besides the entries. A damaged journal is
// described here, never turned into an error.
type ReadReport struct {
	Files    []string // segments read, in sequence order
	Lines    int      // lines seen, good or bad (a torn final fragment counts as one)
	Entries  int      // entries delivered
	FirstSeq uint64   // seq of the first entry delivered (0 if none)
	LastSeq  uint64   // highest seq delivered (0 if none)

	Bad      int       // complete lines skipped: not JSON, not an entry, NUL bytes, too long
	Torn     int       // unterminated final fragments skipped (a cut write or a power cut)
	Problems []Problem // the first skipped lines, bad and torn, in reading order

	Disordered int       // entries kept although their seq did not exceed the previous one
	Disorder   []Problem // the first of them

	Gaps     int    // jumps in seq (a lost or unwritten entry shows up here)
	Missing  uint64 // seqs absent across all gaps
	GapsList []Gap  // the first gaps
}

func (r *ReadReport) skip(p Problem, torn bool) {
	if torn {
		r.Torn++
	} else {
		r.Bad++
	}
	if len(r.Problems) < maxListed {
		r.Problems = append(r.Problems, p)
	}
}

// Clean reports whether nothing was skipped, disordered or missing.
func (r *ReadReport) Clean() bool {
	return r.Bad == 0 && r.Torn == 0 && r.Disordered == 0 && r.Gaps == 0
}

// String is a summary for people: counts first, then the listed problems and gaps.
func (r *ReadReport) String() string {
	var b strings.Builder
	fmt.Fprintf(&b, "%d segment(s), %d line(s), %d entries", len(r.Files), r.Lines, r.Entries)
	if r.Entries > 0 {
		fmt.Fprintf(&b, " (seq %d to %d)", r.FirstSeq, r.LastSeq)
	}
	if r.Clean() {
		b.WriteString("; nothing skipped, no seq gaps")
		return b.String()
	}
	fmt.Fprintf(&b, "; skipped %d bad line(s) and %d torn final line(s); %d seq gap(s) with %d missing; %d out of order",
		r.Bad, r.Torn, r.Gaps, r.Missing, r.Disordered)
	for _, p := range r.Problems {
		fmt.Fprintf(&b, "\n  skipped %s", p)
	}
	if n := r.Bad + r.Torn - len(r.Problems); n > 0 {
		fmt.Fprintf(&b, "\n  ... and %d more skipped", n)
	}
	for _, p := range r.Disorder {
		fmt.Fprintf(&b, "\n  kept %s", p)
	}
	for _, g := range r.GapsList {
		fmt.Fprintf(&b, "\n  gap: seq %d then %d (%d missing)", g.After, g.Before, g.Missing())
	}
	if n := r.Gaps - len(r.GapsList); n > 0 {
		fmt.Fprintf(&b, "\n  ... and %d more gaps", n)
	}
	return b.String()
}

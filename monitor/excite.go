package monitor

import "sync"

// maxExcites bounds the pending exciter windows (a round drives strings one at a time,
// so a handful is plenty; the oldest is forgotten first).
const maxExcites = 64

// exciteLog remembers which strings were driven recently, for matching onsets to them.
type exciteLog struct {
	mu   sync.Mutex
	list []excite
}

type excite struct {
	idx        int
	from, till int64 // onsets in [from, till) belong to the driven string
}

func (x *exciteLog) add(idx int, from, till int64) {
	x.mu.Lock()
	defer x.mu.Unlock()
	if len(x.list) == maxExcites {
		x.list = append(x.list[:0], x.list[1:]...)
	}
	x.list = append(x.list, excite{idx: idx, from: from, till: till})
}

// take returns the strings (among allowed, when allowed is not nil) driven in a window
// that contains frame, appended to dst, and forgets them and every window that ended
// before frame.
func (x *exciteLog) take(dst []int, frame int64, allowed func(int) bool) []int {
	x.mu.Lock()
	defer x.mu.Unlock()
	keep := x.list[:0]
	for _, e := range x.list {
		switch {
		case e.till <= frame:
			// expired
		case e.from <= frame && (allowed == nil || allowed(e.idx)):
			dst = append(dst, e.idx)
		default:
			keep = append(keep, e)
		}
	}
	x.list = keep
	return dst
}

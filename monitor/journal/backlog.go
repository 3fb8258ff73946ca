package journal

import (
	"bytes"
	"slices"
	"strconv"

	"taut/monitor"
)

// held is an encoded line waiting to be written.
type held struct {
	line   []byte // one complete line with its newline; owned by the backlog
	seq    uint64
	urgent bool // alarm, fault or stop: dropped last
}

// backlog is the bounded queue of lines that could not be written yet, oldest first.
type backlog struct {
	items []held
	limit int
}

func (b *backlog) len() int { return len(b.items) }

// push adds h at the end. If that overflows the limit it drops one entry (see drop) and
// returns it with true.
func (b *backlog) push(h held) (held, bool) {
	b.items = append(b.items, h)
	if len(b.items) <= b.limit {
		return held{}, false
	}
	return b.drop(), true
}

// pushFront puts hs (older than everything held) in front and returns what overflowed.
func (b *backlog) pushFront(hs []held) []held {
	b.items = append(slices.Clone(hs), b.items...)
	var dropped []held
	for len(b.items) > b.limit {
		dropped = append(dropped, b.drop())
	}
	return dropped
}

// drop removes the oldest entry that is not urgent, or the oldest of all if every held
// entry is urgent: the newest readings say where each string is now, and alarms are the
// entries people must see.
func (b *backlog) drop() held {
	i := slices.IndexFunc(b.items, func(h held) bool { return !h.urgent })
	if i < 0 {
		i = 0
	}
	h := b.items[i]
	b.items = slices.Delete(b.items, i, i+1)
	return h
}

func (b *backlog) front() held { return b.items[0] }

func (b *backlog) pop() {
	b.items[0] = held{}
	b.items = b.items[1:]
	if len(b.items) == 0 {
		b.items = nil
	}
}

// isUrgent reports whether e must be on stable storage before Append returns.
func isUrgent(e *monitor.Entry) bool {
	return e.State == monitor.Alarm || e.Kind == monitor.KindFault || e.Kind == monitor.KindStop
}

// Keys as they appear in an encoded line. JSON strings escape their quotes, so these byte
// sequences can only be keys and values written by appendEntry, never text inside a value.
var (
	keySeq        = []byte(`{"seq":`)
	keyStateAlarm = []byte(`,"state":"alarm"`)
	keyKindFault  = []byte(`,"kind":"fault"`)
	keyKindStop   = []byte(`,"kind":"stop"`)
)

// splitLines turns written bytes (complete lines) back into held entries, for writing
// them again after a failed fsync.
func splitLines(p []byte) []held {
	var hs []held
	for len(p) > 0 {
		i := bytes.IndexByte(p, '\n')
		if i < 0 {
			i = len(p) - 1
		}
		line := slices.Clone(p[:i+1])
		p = p[i+1:]
		hs = append(hs, held{line: line, seq: lineSeq(line), urgent: lineUrgent(line)})
	}
	return hs
}

func lineSeq(line []byte) uint64 {
	rest, ok := bytes.CutPrefix(line, keySeq)
	if !ok {
		return 0
	}
	end := bytes.IndexByte(rest, ',')
	if end < 0 {
		return 0
	}
	seq, _ := strconv.ParseUint(string(rest[:end]), 10, 64)
	return seq
}

func lineUrgent(line []byte) bool {
	return bytes.Contains(line, keyStateAlarm) || bytes.Contains(line, keyKindFault) ||
		bytes.Contains(line, keyKindStop)
}

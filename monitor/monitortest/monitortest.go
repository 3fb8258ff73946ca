// Package monitortest provides fakes for testing code around the monitor: a Recorder
// sink, an in-memory Journal with fault injection, a scripted audio Source and fixed
// clocks.
package monitortest

import (
	"slices"
	"sync"
	"time"

	"github.com/jonboulle/clockwork"

	"taut/monitor"
)

// Recorder is a monitor.Sink that keeps every entry it receives. Safe for concurrent use.
type Recorder struct {
	mu      sync.Mutex
	entries []monitor.Entry
}

// Publish keeps e.
func (r *Recorder) Publish(e monitor.Entry) {
	r.mu.Lock()
	defer r.mu.Unlock()
	r.entries = append(r.entries, e)
}

// Entries returns a copy of everything published so far, in order.
func (r *Recorder) Entries() []monitor.Entry {
	r.mu.Lock()
	defer r.mu.Unlock()
	return slices.Clone(r.entries)
}

// Kind returns the entries of one kind.
func (r *Recorder) Kind(k monitor.Kind) []monitor.Entry {
	return Filter(r.Entries(), func(e *monitor.Entry) bool { return e.Kind == k })
}

// Readings returns the readings of string id.
func (r *Recorder) Readings(id string) []monitor.Entry {
	return Filter(r.Entries(), func(e *monitor.Entry) bool { return e.Kind == monitor.KindReading && e.String == id })
}

// States returns the sequence of states string id changed to.
func (r *Recorder) States(id string) []monitor.State {
	var s []monitor.State
	for _, e := range r.Entries() {
		if e.Kind == monitor.KindState && e.String == id {
			s = append(s, e.State)
		}
	}
	return s
}

// Filter returns the entries for which keep is true.
func Filter(entries []monitor.Entry, keep func(*monitor.Entry) bool) []monitor.Entry {
	var out []monitor.Entry
	for i := range entries {
		if keep(&entries[i]) {
			out = append(out, entries[i])
		}
	}
	return out
}

// Journal is an in-memory monitor.Journal. Append assigns consecutive Seq numbers
// (from Next, default 1). While a failure is set, appends are held and return it; the
// held entries are written first by the next append that succeeds, like the real
// journal's backlog.
type Journal struct {
	mu      sync.Mutex
	Next    uint64
	entries []monitor.Entry
	held    []monitor.Entry
	fail    error
}

// Append records e.
func (j *Journal) Append(e *monitor.Entry) error {
	j.mu.Lock()
	defer j.mu.Unlock()
	if j.Next == 0 {
		j.Next = 1
	}
	e.Seq = j.Next
	j.Next++
	if j.fail != nil {
		j.held = append(j.held, *e)
		return j.fail
	}
	j.entries = append(j.entries, j.held...)
	j.held = j.held[:0]
	j.entries = append(j.entries, *e)
	return nil
}

// SetFailure makes appends fail with err; nil heals the journal.
func (j *Journal) SetFailure(err error) {
	j.mu.Lock()
	defer j.mu.Unlock()
	j.fail = err
}

// Entries returns the entries written (not those held), in order.
func (j *Journal) Entries() []monitor.Entry {
	j.mu.Lock()
	defer j.mu.Unlock()
	return slices.Clone(j.entries)
}

// Held returns how many entries wait for the failure to heal.
func (j *Journal) Held() int {
	j.mu.Lock()
	defer j.mu.Unlock()
	return len(j.held)
}

// Evening is the fixed wall time test runs start at: 21:00 UTC on an invented date.
var Evening = time.Date(2031, time.March, 14, 21, 0, 0, 0, time.UTC)

// Clock returns a fake clock set to Evening.
func Clock() *clockwork.FakeClock { return clockwork.NewFakeClockAt(Evening) }

// JumpClock is a fake clock whose wall time (Now) can jump while elapsed time (Since,
// After, timers) does not: a board whose clock is set by NTP after boot. Like a
// time.Time read from time.Now, which carries a monotonic reading, every time Now
// returned remembers the elapsed time at which it was read, so Since measures elapsed
// time across jumps.
type JumpClock struct {
	*clockwork.FakeClock
	mu     sync.Mutex
	offset time.Duration
	mono   map[int64]time.Time // wall time returned by Now (UnixNano) → fake time then
}

// NewJumpClock returns a JumpClock at Evening.
func NewJumpClock() *JumpClock { return &JumpClock{FakeClock: Clock(), mono: map[int64]time.Time{}} }

// Jump moves the wall clock by d.
func (c *JumpClock) Jump(d time.Duration) {
	c.mu.Lock()
	defer c.mu.Unlock()
	c.offset += d
}

// Now returns the wall time, including the jumps.
func (c *JumpClock) Now() time.Time {
	c.mu.Lock()
	defer c.mu.Unlock()
	fake := c.FakeClock.Now()
	wall := fake.Add(c.offset)
	c.mono[wall.UnixNano()] = fake
	return wall
}

// Since returns the elapsed time since t without the jumps, as Go's monotonic clock
// does for a time.Time read from time.Now. A t this clock did not return is taken as
// a wall time read after the latest jump.
func (c *JumpClock) Since(t time.Time) time.Duration {
	c.mu.Lock()
	defer c.mu.Unlock()
	if fake, ok := c.mono[t.UnixNano()]; ok {
		return c.FakeClock.Now().Sub(fake)
	}
	return c.FakeClock.Now().Sub(t.Add(-c.offset))
}

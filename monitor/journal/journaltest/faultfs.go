// Package journaltest provides a fault-injecting file system for testing code that writes
// a journal: a full disk, an I/O error, a short write or a failed fsync on command.
package journaltest

import (
	"sync"

	"taut/monitor/journal"
)

// Op names a file-system operation that can fail.
type Op int

// The operations of journal.FS and journal.File.
const (
	OpOpen Op = iota
	OpWrite
	OpSync
	OpTruncate
	OpSyncDir
	numOps
)

var opNames = [...]string{"open", "write", "sync", "truncate", "syncdir"}

func (o Op) String() string { return opNames[o] }

// Fault makes an operation fail.
type Fault struct {
	Op    Op
	After int   // let this many calls of Op succeed first
	Times int   // fail this many calls in a row; 0 means once, -1 until Clear
	Err   error // the error returned; the caller wraps it like *os.File does
	Keep  int   // OpWrite: bytes really written before failing (a short write)
}

// FS is a journal.FS over the operating system's files that fails on command and counts
// every call. It is safe for concurrent use.
type FS struct {
	mu     sync.Mutex
	faults []Fault
	counts [numOps]int
	// NoSync skips the real fsyncs (they still count and can fail), for tests that run
	// recovery thousands of times and do not test durability.
	NoSync bool
}

var (
	_ journal.FS   = (*FS)(nil)
	_ journal.File = (*file)(nil)
)

// Inject adds a fault. Faults for the same Op apply in the order injected.
func (fs *FS) Inject(f Fault) {
	fs.mu.Lock()
	defer fs.mu.Unlock()
	if f.Times == 0 {
		f.Times = 1
	}
	fs.faults = append(fs.faults, f)
}

// Clear removes every pending fault.
func (fs *FS) Clear() {
	fs.mu.Lock()
	defer fs.mu.Unlock()
	fs.faults = nil
}

// Count returns how many times op was called, failed or not.
func (fs *FS) Count(op Op) int {
	fs.mu.Lock()
	defer fs.mu.Unlock()
	return fs.counts[op]
}

// check counts a call of op and returns the fault to apply, if any.
func (fs *FS) check(op Op) (Fault, bool) {
	fs.mu.Lock()
	defer fs.mu.Unlock()
	fs.counts[op]++
	for i := range fs.faults {
		f := &fs.faults[i]
		if f.Op != op {
			continue
		}
		if f.After > 0 {
			f.After--
			return Fault{}, false
		}
		hit := *f
		if f.Times > 0 {
			f.Times--
			if f.Times == 0 {
				fs.faults = append(fs.faults[:i], fs.faults[i+1:]...)
			}
		}
		return hit, true
	}
	return Fault{}, false
}

func (fs *FS) noSync() bool {
	fs.mu.Lock()
	defer fs.mu.Unlock()
	return fs.NoSync
}

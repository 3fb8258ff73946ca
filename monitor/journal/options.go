package journal

import (
	"time"
)

// Defaults for the zero Options.
const (
	DefaultSegmentBytes    = 16 << 20
	DefaultFsyncInterval   = 5 * time.Second
	DefaultBacklogEntries  = 4096
	DefaultRetryMin        = 500 * time.Millisecond
	DefaultRetryMax        = 30 * time.Second
	DefaultRecoverReadings = 48
	DefaultRecoverSegments = 4
)

// Bounds that need no option.
const (
	// recoverOther is how many of the latest entries without a string (start, stop, gap,
	// clock, fault) Open returns in Recovery.Entries.
	recoverOther = 16
	// unsyncedKeep bounds the copy of written-but-not-fsynced bytes kept to write them
	// again if the fsync fails.
	unsyncedKeep = 4 << 20
	// earlySyncBytes wakes the syncer before its interval when this much is unsynced, so
	// that the copy stays small and a burst is committed promptly.
	earlySyncBytes = 1 << 20
)

// Options configure a Writer. The zero value gives the defaults.
type Options struct {
	// SegmentBytes starts a new segment once the current one has reached this size
	// (default 16 MiB). A segment may exceed it by one entry.
	SegmentBytes int64
	// FsyncInterval is the group-commit period (default 5 s): entries written since the
	// last fsync are committed together. Shorter loses less on a power cut; every fsync
	// forces an ext4 journal commit, so shorter also wears an SD card faster. Alarm, fault
	// and stop entries are committed at once whatever the interval.
	FsyncInterval time.Duration
	// BacklogEntries bounds the entries held in memory while writes fail (default 4096,
	// about 1.2 MB at ~300 bytes a line, three hours of a 230-string piano read every ten
	// minutes). Past it the oldest held entry that is not an alarm, fault or stop is
	// dropped, counted in Stats.Dropped and named in Append's error.
	BacklogEntries int
	// RetryMin and RetryMax bound the exponential backoff between retries of failed
	// writes (defaults 500 ms and 30 s).
	RetryMin, RetryMax time.Duration
	// RecoverReadings is how many of each string's latest readings Open returns in
	// Recovery.Entries (default 48: eight hours at one reading per ten minutes).
	RecoverReadings int
	// RecoverSegments is how many of the newest segments Open reads for the history
	// (default 4, at most 64 MiB with the default segment size); strings silent for
	// longer than that start without history.
	RecoverSegments int
	// OnFsync, if set, is called after every fsync of a segment with its duration and
	// error, from the goroutine that did it (for a latency histogram). It must not call
	// the Writer.
	OnFsync func(d time.Duration, err error)
	// FS opens files; nil means the operating system. Tests inject faults here.
	FS FS
}

func (o Options) withDefaults() Options {
	setDefault(&o.SegmentBytes, DefaultSegmentBytes)
	setDefault(&o.FsyncInterval, DefaultFsyncInterval)
	setDefault(&o.BacklogEntries, DefaultBacklogEntries)
	setDefault(&o.RetryMin, DefaultRetryMin)
	setDefault(&o.RetryMax, DefaultRetryMax)
	setDefault(&o.RecoverReadings, DefaultRecoverReadings)
	setDefault(&o.RecoverSegments, DefaultRecoverSegments)
	if o.RetryMax < o.RetryMin {
		o.RetryMax = o.RetryMin
	}
	if o.FS == nil {
		o.FS = OSFS{}
	}
	return o
}

func setDefault[T int | int64 | time.Duration](v *T, def T) {
	if *v <= 0 {
		*v = def
	}
}

// Stats are the writer's counters, for metrics and health checks.
type Stats struct {
	Appends           uint64        // entries accepted by Append (written or held)
	Written           uint64        // entries written to a segment
	Bytes             uint64        // bytes written to segments
	Fsyncs            uint64        // successful fsyncs of segments
	FsyncErrors       uint64        // failed fsyncs
	WriteErrors       uint64        // failed or short writes (and failed truncates after them)
	Rewrites          uint64        // entries written again after a failed fsync
	LastFsyncDuration time.Duration // duration of the latest fsync, good or bad
	Backlog           int           // entries held in memory, not yet written
	Dropped           uint64        // entries lost because the backlog overflowed
	Repairs           int           // torn tails cut at Open
	Segment           string        // path of the segment being written
	LastSeq           uint64        // seq of the latest entry accepted
	SyncedSeq         uint64        // every entry up to this seq is on stable storage
	LastError         error         // latest write or fsync error; nil once all is written and synced again
}

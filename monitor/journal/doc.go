// Package journal is the durable record of a listening run: append-only JSON lines, one
// monitor.Entry per line, in segment files that survive kill -9 and power cuts without a
// corrupt line and without reordering.
//
// # Format
//
// A journal is a directory of segments named journal-<seq of first entry, 20 digits>.jsonl.
// Names sort in sequence order and never depend on the wall clock, which on a board
// without a real-time clock may start in 1970 or jump after NTP. Each line is one JSON
// object whose field names are those of monitor.Entry, encoded exactly as encoding/json
// would (time in RFC 3339 with nanoseconds, floats in the shortest form that reads back to
// the same bits) by an allocation-free encoder. Entries that cannot round-trip (NaN,
// infinities, an unnamed state, a year outside 0–9999) are refused, not written. Every
// entry has a seq one above the previous one, across segments and runs; a gap in seq
// means lost entries and the reader reports it. Ordering is by seq, never by time.
//
// Open starts a new segment for each run (unless the newest segment is still empty) and
// a new one when the current segment reaches Options.SegmentBytes. A new segment is
// fsynced and so is the directory, or the new name could vanish in a power cut.
//
// # Durability
//
// Append encodes the entry into a reused buffer and writes it with one write call: no
// user-space buffering, so kill -9 loses nothing that Append has returned from (the bytes
// are in the kernel). A power cut loses what is not yet fsynced. The writer fsyncs:
//
//   - on a group-commit timer, Options.FsyncInterval (default 5 s), from a background
//     goroutine and only if something was written since the last fsync;
//   - before Append returns, for an entry in alarm or of kind fault or stop;
//   - on Sync and Close;
//   - early, when 1 MiB is waiting, to bound the loss window and memory during bursts.
//
// The interval is a trade-off: each fsync forces a file-system journal commit, which
// costs SD-card wear and, on a slow card, hundreds of milliseconds; a longer interval
// means more readings lost in a power cut. At one reading per string every ten minutes a
// 230-string piano writes about 23 entries a minute, so the default 5 s risks at most two
// or three readings, while an idle journal costs no fsyncs at all. ext4's own commit
// interval is also 5 s by default. Stats.SyncedSeq says what is already safe.
//
// After a failed fsync Linux may drop the dirty pages and report the next fsync as a
// success, so the writer keeps a copy of the lines written since the last good fsync (up
// to 4 MiB), cuts the file back to that point and writes them again.
//
// # Faults
//
// A failed or short write (disk full, I/O error, read-only remount) never leaves a
// partial line: the file is cut back to the end of the last complete line before anything
// else is written. The entry stays in a bounded in-memory backlog (Options.BacklogEntries,
// default 4096) and Append returns an error wrapping ErrHeld and the cause. Later Appends
// and the background goroutine retry with capped exponential backoff (Options.RetryMin to
// RetryMax), writing the backlog in seq order. When the backlog overflows, the oldest
// entry that is not an alarm, fault or stop is dropped; the drop is counted in
// Stats.Dropped, named in Append's error (ErrDropped), and shows as a seq gap to readers.
// Close reports entries it could not write.
//
// The file system is reached through the FS and File interfaces, so tests (see package
// journaltest) can fail the Nth write, cut writes short, or fail fsyncs.
//
// # Recovery
//
// Open takes an advisory lock on the directory (a second writer fails), then looks at the
// newest segment: if it does not end in a newline (a torn write, or NUL bytes left by a
// power cut) it is cut back to its last newline and fsynced, and the repair is counted
// and described in Recovery. Without that, the next line would be glued to the fragment
// and become unreadable. Open then reads the newest Options.RecoverSegments segments
// (default 4) to find the last seq and the recent history in Recovery.Entries: each
// string's latest Options.RecoverReadings readings (default 48) and latest state change,
// and the latest 16 entries without a string. That is at most strings × 49 + 16 entries
// (about 3 MB for a 230-string piano) whatever the journal's size.
//
// # Reading
//
// Load and Scan read one segment or a whole directory in sequence order. They never fail
// on damage: an unterminated final line is skipped as torn, bad interior lines (not JSON,
// not an entry, NUL bytes, over 1 MiB) are skipped, and the ReadReport lists them by
// file:line with the reason, together with seq gaps and disorder. Only I/O errors are
// returned, naming the path.
//
// # Concurrency
//
// All Writer methods are safe for concurrent use; seqs follow the order of Append calls.
// The background goroutine fsyncs without holding the lock Append needs, so a slow fsync
// delays Append only when Append itself commits (an urgent entry) or changes segment.
package journal

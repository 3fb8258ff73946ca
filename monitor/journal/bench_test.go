package journal_test

import (
	"os"
	"testing"
	"time"

	"taut/monitor"
	"taut/monitor/journal"
)

// benchDir is a tmpfs directory when there is one, so that the benchmark measures the
// writer, not the disk.
func benchDir(b *testing.B) string {
	if fi, err := os.Stat("/dev/shm"); err == nil && fi.IsDir() {
		dir, err := os.MkdirTemp("/dev/shm", "journal-bench-")
		if err == nil {
			b.Cleanup(func() { os.RemoveAll(dir) })
			return dir
		}
	}
	return b.TempDir()
}

func benchAppend(b *testing.B, dir string) {
	w, _ := openT(b, dir, journal.Options{})
	defer closeT(b, w)
	e := entryN(3)
	b.ReportAllocs()
	b.SetBytes(330)
	for b.Loop() {
		if err := w.Append(&e); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkAppend is the cost of one reading on a tmpfs, background commits included.
func BenchmarkAppend(b *testing.B) { benchAppend(b, benchDir(b)) }

// BenchmarkAppendDisk is the same on the disk holding the test's temporary directory.
func BenchmarkAppendDisk(b *testing.B) { benchAppend(b, b.TempDir()) }

// BenchmarkAppendSync commits every entry: one write and one fsync on the disk, so its
// ns/op is the fsync latency of this machine's disk.
func BenchmarkAppendSync(b *testing.B) {
	var fsyncs []time.Duration
	w, _ := openT(b, b.TempDir(), journal.Options{FsyncInterval: hour, OnFsync: func(d time.Duration, err error) {
		fsyncs = append(fsyncs, d)
	}})
	defer closeT(b, w)
	e := entryN(3)
	b.ReportAllocs()
	for b.Loop() {
		if err := w.Append(&e); err != nil {
			b.Fatal(err)
		}
		if err := w.Sync(); err != nil {
			b.Fatal(err)
		}
	}
	var worst time.Duration
	for _, d := range fsyncs {
		worst = max(worst, d)
	}
	b.ReportMetric(float64(worst.Microseconds()), "max-fsync-µs")
}

// BenchmarkScan is the reading cost per entry, for the report and Open's recovery.
func BenchmarkScan(b *testing.B) {
	dir := benchDir(b)
	w, _ := openT(b, dir, journal.Options{})
	appendN(b, w, 0, 10000)
	closeT(b, w)
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		n := 0
		if _, err := journal.Scan(dir, func(*monitor.Entry) error { n++; return nil }); err != nil || n != 10000 {
			b.Fatal(n, err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/10000, "ns/entry")
}

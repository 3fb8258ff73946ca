package journal

import (
	"os"
)

// File is what the writer needs from an open segment. *os.File implements it. It is the
// seam tests use to inject a full disk, an I/O error or a short write.
type File interface {
	// Write appends p to the end of the file (the file is opened in append mode).
	Write(p []byte) (int, error)
	// Sync commits the file's data to stable storage (fsync).
	Sync() error
	// Truncate cuts the file to size bytes.
	Truncate(size int64) error
	// Close releases the file.
	Close() error
}

// FS opens segment files for appending and makes new names durable.
// The zero Options use the operating system (see OSFS).
type FS interface {
	// OpenFile opens path for appending, creating it with mode 0644 if it does not exist.
	OpenFile(path string) (File, error)
	// SyncDir fsyncs a directory so that a newly created name in it survives a power cut.
	SyncDir(dir string) error
}

// OSFS is the operating-system FS.
type OSFS struct{}

// OpenFile opens path with O_WRONLY|O_APPEND|O_CREATE. Append mode matters: after a
// Truncate the next Write lands at the new end, never leaving a hole.
func (OSFS) OpenFile(path string) (File, error) {
	return os.OpenFile(path, os.O_WRONLY|os.O_APPEND|os.O_CREATE, 0o644)
}

// SyncDir opens the directory read-only (opening a directory for writing fails with
// "is a directory" on Linux) and fsyncs it.
func (OSFS) SyncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	if err := d.Sync(); err != nil {
		d.Close()
		return err
	}
	return d.Close()
}

var (
	_ FS   = OSFS{}
	_ File = (*os.File)(nil)
)

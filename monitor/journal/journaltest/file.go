package journaltest

import (
	"io/fs"
	"os"

	"taut/monitor/journal"
)

// OpenFile opens path like journal.OSFS unless an OpOpen fault applies.
func (fsys *FS) OpenFile(path string) (journal.File, error) {
	if f, ok := fsys.check(OpOpen); ok {
		return nil, &fs.PathError{Op: "open", Path: path, Err: f.Err}
	}
	f, err := journal.OSFS{}.OpenFile(path)
	if err != nil {
		return nil, err
	}
	return &file{f: f.(*os.File), fs: fsys}, nil
}

// SyncDir fsyncs dir like journal.OSFS unless an OpSyncDir fault applies.
func (fsys *FS) SyncDir(dir string) error {
	if f, ok := fsys.check(OpSyncDir); ok {
		return &fs.PathError{Op: "sync", Path: dir, Err: f.Err}
	}
	if fsys.noSync() {
		return nil
	}
	return journal.OSFS{}.SyncDir(dir)
}

// file is an *os.File whose calls can fail.
type file struct {
	f  *os.File
	fs *FS
}

func (f *file) Write(p []byte) (int, error) {
	if ft, ok := f.fs.check(OpWrite); ok {
		n := 0
		if ft.Keep > 0 {
			n, _ = f.f.Write(p[:min(ft.Keep, len(p))])
		}
		if ft.Err == nil {
			return n, nil // a short write without an error
		}
		return n, &fs.PathError{Op: "write", Path: f.f.Name(), Err: ft.Err}
	}
	return f.f.Write(p)
}

func (f *file) Sync() error {
	if ft, ok := f.fs.check(OpSync); ok {
		return &fs.PathError{Op: "sync", Path: f.f.Name(), Err: ft.Err}
	}
	if f.fs.noSync() {
		return nil
	}
	return f.f.Sync()
}

func (f *file) Truncate(size int64) error {
	if ft, ok := f.fs.check(OpTruncate); ok {
		return &fs.PathError{Op: "truncate", Path: f.f.Name(), Err: ft.Err}
	}
	return f.f.Truncate(size)
}

func (f *file) Close() error { return f.f.Close() }

package report

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// File names written by WriteDir.
const (
	HTMLName    = "report.html"
	CSVName     = "readings.csv"
	SummaryName = "summary.json"
)

// WriteDir writes report.html, readings.csv and summary.json into dir (created if
// needed) and returns their paths. Each file is written durably: to a temporary file
// in dir, synced, renamed over the old one, and the directory synced, so a power cut
// leaves either the old file or the new one, never a torn one.
func (r *Report) WriteDir(dir string) ([]string, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("write report: %w", err)
	}
	files := []struct {
		name  string
		write func(io.Writer) error
	}{{HTMLName, r.WriteHTML}, {CSVName, r.WriteCSV}, {SummaryName, r.WriteJSON}}
	var paths []string
	for _, f := range files {
		var buf bytes.Buffer
		if err := f.write(&buf); err != nil {
			return paths, fmt.Errorf("write report %s: %w", f.name, err)
		}
		p := filepath.Join(dir, f.name)
		if err := WriteFileDurable(p, buf.Bytes()); err != nil {
			return paths, err
		}
		paths = append(paths, p)
	}
	return paths, nil
}

// WriteFileDurable replaces path with data: tmp file, fsync, rename, fsync the directory.
func WriteFileDurable(path string, data []byte) error {
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	defer os.Remove(tmp.Name()) // no-op after the rename
	if _, err := tmp.Write(data); err != nil {
		tmp.Close()
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err := tmp.Sync(); err != nil {
		tmp.Close()
		return fmt.Errorf("sync %s: %w", path, err)
	}
	if err := tmp.Close(); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err := os.Chmod(tmp.Name(), 0o644); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err := os.Rename(tmp.Name(), path); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	d, err := os.Open(dir)
	if err != nil {
		return fmt.Errorf("sync directory %s: %w", dir, err)
	}
	defer d.Close()
	if err := d.Sync(); err != nil {
		return fmt.Errorf("sync directory %s: %w", dir, err)
	}
	return nil
}

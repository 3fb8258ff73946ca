//go:build unix

package journal

import (
	"errors"
	"fmt"
	"os"
	"syscall"
)

// lockDir takes an exclusive advisory lock on the journal directory so that a second
// writer (the daemon started twice) fails at Open instead of interleaving seqs. The
// kernel drops the lock when the process dies, kill -9 included.
func lockDir(dir string) (*os.File, error) {
	d, err := os.Open(dir)
	if err != nil {
		return nil, err
	}
	if err := syscall.Flock(int(d.Fd()), syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
		d.Close()
		if errors.Is(err, syscall.EWOULDBLOCK) {
			return nil, fmt.Errorf("%s is in use by another journal writer", dir)
		}
		return nil, fmt.Errorf("lock %s: %w", dir, err)
	}
	return d, nil
}

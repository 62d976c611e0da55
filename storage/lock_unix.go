//go:build !windows && !plan9 && !solaris && !aix && !android

package storage

import (
	"errors"
	"os"
	"syscall"
	"time"
)

// lockFile takes the same exclusive advisory lock bbolt takes on its file
// (flock), without reading the file: restore must hold the lock of a
// store that may be damaged beyond bbolt's opening.
func lockFile(path string, timeout time.Duration) (unlock func(), err error) {
	f, err := os.OpenFile(path, os.O_RDWR, 0)
	if err != nil {
		return nil, err
	}
	deadline := time.Now().Add(timeout)
	for {
		err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB)
		if err == nil {
			return func() { f.Close() }, nil
		}
		if !errors.Is(err, syscall.EWOULDBLOCK) || time.Now().After(deadline) {
			f.Close()
			if errors.Is(err, syscall.EWOULDBLOCK) {
				return nil, &lockedError{cause: err}
			}
			return nil, err
		}
		time.Sleep(50 * time.Millisecond)
	}
}

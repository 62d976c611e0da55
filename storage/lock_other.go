//go:build windows || plan9 || solaris || aix || android

package storage

import (
	"errors"
	"time"

	bolt "go.etcd.io/bbolt"
	berrors "go.etcd.io/bbolt/errors"
)

// lockFile holds the store's lock through bbolt where flock is not the
// lock bbolt uses.
func lockFile(path string, timeout time.Duration) (unlock func(), err error) {
	b, err := bolt.Open(path, 0o600, &bolt.Options{Timeout: timeout})
	if err != nil {
		if errors.Is(err, berrors.ErrTimeout) {
			return nil, &lockedError{cause: err}
		}
		return nil, err
	}
	return func() { b.Close() }, nil
}

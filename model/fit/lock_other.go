//go:build !unix

package fit

import (
	"errors"
	"os"
)

// tryLock reports that advisory locks are not available; the lock file's content decides.
func tryLock(f *os.File) (bool, error) { return false, errors.ErrUnsupported }

// processAlive cannot tell on this system and assumes the holder is alive.
func processAlive(pid int) bool { return true }

//go:build unix

package fit

import (
	"errors"
	"os"
	"syscall"
)

// tryLock takes the exclusive advisory lock of f without waiting. It reports false if
// another process holds it, and an error if the file system offers no such locks.
func tryLock(f *os.File) (bool, error) {
	for {
		err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB)
		switch {
		case err == nil:
			return true, nil
		case errors.Is(err, syscall.EWOULDBLOCK):
			return false, nil
		case errors.Is(err, syscall.EINTR):
			continue
		}
		return false, err
	}
}

// processAlive reports whether a process with the given id runs on this host.
func processAlive(pid int) bool {
	if pid <= 0 {
		return false
	}
	err := syscall.Kill(pid, 0)
	return err == nil || errors.Is(err, syscall.EPERM)
}

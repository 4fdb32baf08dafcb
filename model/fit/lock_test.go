//go:build unix

package fit

import (
	"encoding/json"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestLockDir: a held lock refuses a second holder, naming it; a released lock is free
// again; the lock of a dead process on this host is taken over; the lock of a process on
// another host is refused with a way to break it.
func TestLockDir(t *testing.T) {
	dir := t.TempDir()
	l, took, err := lockDir(dir)
	if err != nil || took != nil {
		t.Fatalf("first lock: %v, took %v", err, took)
	}
	host, _ := os.Hostname()
	_, _, err = lockDir(dir)
	if !errors.Is(err, ErrLocked) || !strings.Contains(err.Error(), "process "+strconv.Itoa(os.Getpid())) || !strings.Contains(err.Error(), host) {
		t.Errorf("second lock: %v, want a refusal naming process %d on %s", err, os.Getpid(), host)
	}
	if h, _ := ReadLock(dir); h == nil || h.PID != os.Getpid() || h.Started == "" {
		t.Errorf("lock file names %+v", h)
	}
	l.release()
	l, took, err = lockDir(dir)
	if err != nil || took != nil {
		t.Fatalf("lock after release: %v, took %v", err, took)
	}
	l.release()

	// A process that has ended left its lock file behind (as kill -9 does).
	cmd := exec.Command("true")
	if err := cmd.Run(); err != nil {
		t.Skip("no true command:", err)
	}
	dead := cmd.Process.Pid
	write := func(h LockHolder) {
		data, _ := json.Marshal(h)
		if err := os.WriteFile(filepath.Join(dir, LockFile), data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	write(LockHolder{Host: host, PID: dead, Started: "2026-01-02T03:04:05Z"})
	l, took, err = lockDir(dir)
	if err != nil || took == nil || took.PID != dead {
		t.Fatalf("stale lock: %v, took %+v; want it taken over from process %d", err, took, dead)
	}
	l.release()

	write(LockHolder{Host: "elsewhere.invalid", PID: 1234, Started: "2026-01-02T03:04:05Z"})
	_, _, err = lockDir(dir)
	if !errors.Is(err, ErrLocked) || !strings.Contains(err.Error(), "elsewhere.invalid") || !strings.Contains(err.Error(), "delete "+filepath.Join(dir, LockFile)) {
		t.Errorf("lock of another host: %v, want a refusal saying how to break it", err)
	}
}

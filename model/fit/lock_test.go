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

// TestDiscardDir checks --force's removal of a run directory: the run is moved aside in
// one rename and deleted, and the remains of a deletion killed earlier (a hidden .old-
// folder) go too, while other files beside the run are left alone.
func TestDiscardDir(t *testing.T) {
	parent := t.TempDir()
	dir := filepath.Join(parent, "run")
	for _, p := range []string{dir, filepath.Join(dir, "sub"), filepath.Join(parent, ".run.old-12345", "run")} {
		if err := os.MkdirAll(p, 0o755); err != nil {
			t.Fatal(err)
		}
	}
	for _, p := range []string{filepath.Join(dir, "chain.npy"), filepath.Join(dir, "sub", "x"), filepath.Join(parent, "notes.txt")} {
		if err := os.WriteFile(p, []byte("x"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if err := discardDir(dir); err != nil {
		t.Fatal(err)
	}
	entries, err := os.ReadDir(parent)
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, e := range entries {
		names = append(names, e.Name())
	}
	if len(names) != 1 || names[0] != "notes.txt" {
		t.Errorf("after discarding, the parent holds %v, want only notes.txt", names)
	}
}

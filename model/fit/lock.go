package fit

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/mirabilis-astro/mirabilis/internal/atomicfile"
)

// LockFile is the run directory's lock: while a fit works in the directory it holds the
// file's advisory lock (flock) and the file names it (host, process id, start time).
// The file stays when the fit ends, emptied.
const LockFile = "run.lock"

// LockHolder is what a run directory's lock file says about the fit that holds it.
type LockHolder struct {
	Host    string `json:"host"`
	PID     int    `json:"pid"`
	Started string `json:"started"` // RFC 3339, UTC
}

func (h LockHolder) String() string {
	return fmt.Sprintf("process %d on host %s, started %s", h.PID, h.Host, h.Started)
}

// ErrLocked is wrapped by the error of a fit refused because another fit holds the run
// directory.
var ErrLocked = errors.New("run directory in use")

// dirLock is a held run-directory lock.
type dirLock struct {
	f    *os.File
	path string
}

// lockDir takes the lock of the run directory dir. A lock held by a live fit is refused
// with an error naming it; the lock of a fit that died on this host (its advisory lock
// went with it) is taken over, and took names the dead holder. A lock file naming
// another host is refused even when no advisory lock is held, since such locks do not
// reach across every network file system: the error says how to break it.
func lockDir(dir string) (l *dirLock, took *LockHolder, err error) {
	path := filepath.Join(dir, LockFile)
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE, atomicfile.Mode)
	if err != nil {
		return nil, nil, fmt.Errorf("locking run directory %s: %w", dir, err)
	}
	f.Chmod(atomicfile.Mode)
	fail := func(err error) (*dirLock, *LockHolder, error) {
		f.Close()
		return nil, nil, err
	}
	host, _ := os.Hostname()
	held, lerr := tryLock(f)
	prev := readHolder(f)
	switch {
	case lerr != nil && prev != nil && prev.Host == host && processAlive(prev.PID):
		// Advisory locks do not work here; judge by the process.
		return fail(fmt.Errorf("%w: %s is used by another fit (%s); wait for it to end or stop it", ErrLocked, dir, prev))
	case lerr == nil && !held:
		if prev != nil {
			return fail(fmt.Errorf("%w: %s is used by another fit (%s); wait for it to end or stop it", ErrLocked, dir, prev))
		}
		return fail(fmt.Errorf("%w: %s is used by another fit", ErrLocked, dir))
	case prev != nil && prev.Host != host:
		return fail(fmt.Errorf("%w: %s is locked by a fit on another host (%s); if no fit runs there any more, delete %s and start again",
			ErrLocked, dir, prev, path))
	}
	if prev != nil {
		took = prev
	}
	me := LockHolder{Host: host, PID: os.Getpid(), Started: time.Now().UTC().Format(time.RFC3339)}
	data, _ := json.Marshal(me)
	if err := f.Truncate(0); err != nil {
		return fail(fmt.Errorf("locking run directory %s: %w", dir, err))
	}
	if _, err := f.WriteAt(append(data, '\n'), 0); err != nil {
		return fail(fmt.Errorf("locking run directory %s: %w", dir, err))
	}
	if err := f.Sync(); err != nil {
		return fail(fmt.Errorf("locking run directory %s: %w", dir, err))
	}
	return &dirLock{f: f, path: path}, took, nil
}

// readHolder returns the holder named in the lock file, nil if it names none.
func readHolder(f *os.File) *LockHolder {
	data, err := io.ReadAll(io.NewSectionReader(f, 0, 1<<16))
	if err != nil || strings.TrimSpace(string(data)) == "" {
		return nil
	}
	var h LockHolder
	if json.Unmarshal(data, &h) != nil {
		return &LockHolder{Host: "?", Started: "?"}
	}
	return &h
}

// ReadLock returns the holder named in dir's lock file, nil if none.
func ReadLock(dir string) (*LockHolder, error) {
	f, err := os.Open(filepath.Join(dir, LockFile))
	if errors.Is(err, os.ErrNotExist) {
		return nil, nil
	}
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return readHolder(f), nil
}

// release empties the lock file and lets go of the lock. The file is kept: removing it
// would let a fit that opened it before the removal lock a file no one else sees.
func (l *dirLock) release() {
	if l == nil || l.f == nil {
		return
	}
	l.f.Truncate(0)
	l.f.Sync()
	l.f.Close() // closing the descriptor lets go of the advisory lock
	l.f = nil
}

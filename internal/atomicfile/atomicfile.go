// Package atomicfile replaces files so that a reader, or a run resumed after a crash, sees
// either the old content or the new, never a mixture: the new content goes to a temporary
// file in the same directory, is forced to stable storage, renamed over the target, and the
// directory itself is then synced so that the rename survives a power cut.
//
// Files written here are readable by everyone (Mode, 0644) whatever the process's umask;
// directories made here are 0755 (DirMode), so that collaborators on a shared machine can
// read results.
package atomicfile

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"syscall"
)

// Mode is the permission of every file written by Write and WriteWith: read-write for the
// owner, read-only for the group and others.
const Mode os.FileMode = 0o644

// DirMode is the permission of directories made by MkdirAll and MkdirTemp.
const DirMode os.FileMode = 0o755

// Write replaces the file at path with data atomically (see the package documentation).
// On error path is left as it was and no temporary file remains.
func Write(path string, data []byte) error {
	return WriteWith(path, func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	})
}

// WriteWith replaces the file at path atomically with what write writes to the writer it
// is given. If write returns an error, path is left as it was and the error is returned.
func WriteWith(path string, write func(w io.Writer) error) (err error) {
	dir := filepath.Dir(path)
	f, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	tmp := f.Name()
	defer func() {
		if err != nil {
			f.Close()
			os.Remove(tmp)
		}
	}()
	if err = f.Chmod(Mode); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err = write(f); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err = f.Sync(); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err = f.Close(); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err = os.Rename(tmp, path); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	return SyncDir(dir)
}

// RemoveTemps removes the temporary files that writes to dir interrupted by a crash or
// kill -9 left behind. Call it only while no one else writes in dir.
func RemoveTemps(dir string) error {
	temps, err := filepath.Glob(filepath.Join(dir, ".*.tmp-*"))
	if err != nil {
		return err
	}
	for _, t := range temps {
		if err := os.Remove(t); err != nil && !errors.Is(err, os.ErrNotExist) {
			return err
		}
	}
	return nil
}

// SyncDir forces the directory entries of dir (new names, renames) to stable storage.
// File systems that cannot sync a directory are not an error.
func SyncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return fmt.Errorf("syncing directory %s: %w", dir, err)
	}
	err = d.Sync()
	if cerr := d.Close(); err == nil {
		err = cerr
	}
	if err != nil && !errors.Is(err, syscall.EINVAL) && !errors.Is(err, syscall.ENOTSUP) && !errors.Is(err, syscall.EBADF) {
		return fmt.Errorf("syncing directory %s: %w", dir, err)
	}
	return nil
}

// Create creates (or truncates) the file at path for writing with permission Mode,
// whatever the umask, for files that grow in place such as logs and chains.
func Create(path string) (*os.File, error) {
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE|os.O_TRUNC, Mode)
	if err != nil {
		return nil, err
	}
	if err := f.Chmod(Mode); err != nil {
		f.Close()
		return nil, err
	}
	return f, nil
}

// OpenAppend opens the file at path for appending, creating it with permission Mode if
// it does not exist.
func OpenAppend(path string) (*os.File, error) {
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_APPEND, Mode)
	if err != nil {
		return nil, err
	}
	if err := f.Chmod(Mode); err != nil {
		f.Close()
		return nil, err
	}
	return f, nil
}

// MkdirAll makes dir and any missing parents with permission DirMode, whatever the umask.
// Directories that exist already keep their permissions.
func MkdirAll(dir string) error {
	var missing []string
	for d := filepath.Clean(dir); ; d = filepath.Dir(d) {
		if _, err := os.Stat(d); err == nil {
			break
		}
		missing = append(missing, d)
		if filepath.Dir(d) == d {
			break
		}
	}
	if err := os.MkdirAll(dir, DirMode); err != nil {
		return err
	}
	for _, d := range missing {
		if err := os.Chmod(d, DirMode); err != nil {
			return err
		}
	}
	return nil
}

// MkdirTemp makes a new directory in parent, named from pattern as os.MkdirTemp does, with
// permission DirMode (os.MkdirTemp alone gives 0700).
func MkdirTemp(parent, pattern string) (string, error) {
	dir, err := os.MkdirTemp(parent, pattern)
	if err != nil {
		return "", err
	}
	if err := os.Chmod(dir, DirMode); err != nil {
		os.Remove(dir)
		return "", err
	}
	return dir, nil
}

package atomicfile

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"syscall"
	"testing"
)

// withUmask runs the test body under a restrictive umask, as on clusters that default to
// 077, and restores the old one.
func withUmask(t *testing.T, mask int) {
	old := syscall.Umask(mask)
	t.Cleanup(func() { syscall.Umask(old) })
}

func TestWriteReplacesWithMode(t *testing.T) {
	withUmask(t, 0o077)
	dir := t.TempDir()
	path := filepath.Join(dir, "run.json")
	if err := os.WriteFile(path, []byte("old"), 0o600); err != nil {
		t.Fatal(err)
	}
	if err := Write(path, []byte("new content")); err != nil {
		t.Fatal(err)
	}
	got, err := os.ReadFile(path)
	if err != nil || string(got) != "new content" {
		t.Fatalf("content %q, %v; want %q", got, err, "new content")
	}
	info, err := os.Stat(path)
	if err != nil {
		t.Fatal(err)
	}
	// Files in run directories are 0644 whatever the umask (the project's rule for
	// results shared on a cluster).
	if info.Mode().Perm() != 0o644 {
		t.Errorf("mode %v, want 0644", info.Mode().Perm())
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("directory holds %d entries, want only the file", len(entries))
	}
}

func TestWriteWithFailureLeavesOld(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "summary.txt")
	if err := os.WriteFile(path, []byte("old"), 0o644); err != nil {
		t.Fatal(err)
	}
	boom := errors.New("boom")
	err := WriteWith(path, func(w io.Writer) error {
		w.Write([]byte("half"))
		return boom
	})
	if !errors.Is(err, boom) {
		t.Fatalf("error %v, want one wrapping %v", err, boom)
	}
	got, _ := os.ReadFile(path)
	if string(got) != "old" {
		t.Errorf("content %q after a failed write, want the old one", got)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("a failed write left %d entries, want 1 (no temporary file)", len(entries))
	}
}

func TestCreateAndDirModes(t *testing.T) {
	withUmask(t, 0o077)
	parent := t.TempDir()
	dir, err := MkdirTemp(parent, ".run-*")
	if err != nil {
		t.Fatal(err)
	}
	if err := MkdirAll(filepath.Join(dir, "figures", "pairs")); err != nil {
		t.Fatal(err)
	}
	for _, d := range []string{dir, filepath.Join(dir, "figures"), filepath.Join(dir, "figures", "pairs")} {
		info, err := os.Stat(d)
		if err != nil {
			t.Fatal(err)
		}
		if info.Mode().Perm() != 0o755 {
			t.Errorf("%s: mode %v, want 0755", d, info.Mode().Perm())
		}
	}
	for _, open := range []func(string) (*os.File, error){Create, OpenAppend} {
		path := filepath.Join(dir, "f")
		os.Remove(path)
		f, err := open(path)
		if err != nil {
			t.Fatal(err)
		}
		f.Close()
		info, _ := os.Stat(path)
		if info.Mode().Perm() != 0o644 {
			t.Errorf("mode %v, want 0644", info.Mode().Perm())
		}
	}
}

func TestRemoveTemps(t *testing.T) {
	dir := t.TempDir()
	keep := filepath.Join(dir, "checkpoint.bin")
	os.WriteFile(keep, []byte("k"), 0o644)
	os.WriteFile(filepath.Join(dir, ".checkpoint.bin.tmp-123"), []byte("half"), 0o644)
	if err := RemoveTemps(dir); err != nil {
		t.Fatal(err)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 || entries[0].Name() != "checkpoint.bin" {
		t.Errorf("left %v, want only checkpoint.bin", entries)
	}
}

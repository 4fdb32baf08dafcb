package mcmc

import (
	"bufio"
	"bytes"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// The reference for the .npy chain file is NumPy itself (numpy.lib.format, NEP 1):
// testdata/npy/npy_reference.py writes arrays in the chain layout with NumPy and reads
// back the file the Go code writes; CI does not run Python, so the script's files are
// committed.
const npyRef = "../testdata/npy"

// goldenNames and goldenValue define the chain of go_chain.npy: awkward names (a quote
// that the header must escape) and values (thirds, negative zero, a subnormal, the
// largest float) that survive only an exact round trip.
var goldenNames = []string{"R0", "Theta0", "o'clock"}

func goldenValue(t, k, j int) float64 {
	switch (t + k + j) % 5 {
	case 0:
		return float64(t+1) / 3
	case 1:
		return math.Copysign(0, -1)
	case 2:
		return 5e-324 * float64(k+1)
	case 3:
		return -math.MaxFloat64
	}
	return 8.15 + float64(t)*0.1 - float64(k)
}

// writeGolden writes the chain of go_chain.npy (4 kept steps of 3 walkers) through the
// sampler's writer, syncing after each step as checkpoints do.
func writeGolden(t *testing.T, path string) {
	t.Helper()
	cw, err := createChainFile(path, goldenNames, 3)
	if err != nil {
		t.Fatal(err)
	}
	for s := range 4 {
		pos := make([][]float64, 3)
		lp := make([]float64, 3)
		for k := range pos {
			lp[k] = -float64(s*3+k) / 7
			for j := range goldenNames {
				pos[k] = append(pos[k], goldenValue(s, k, j))
			}
		}
		if err := cw.writeStep(2*(s+1), pos, lp); err != nil {
			t.Fatal(err)
		}
		if err := cw.sync(); err != nil {
			t.Fatal(err)
		}
	}
	if err := cw.close(); err != nil {
		t.Fatal(err)
	}
}

// TestNpyGolden: the writer's bytes are those committed as go_chain.npy, which NumPy read
// (TestNpyReadByNumPy). Set MIRABILIS_UPDATE_NPY=1 to rewrite the file, then run the
// script again.
func TestNpyGolden(t *testing.T) {
	path := filepath.Join(t.TempDir(), "chain.npy")
	writeGolden(t, path)
	got := readFile(t, path)
	golden := filepath.Join(npyRef, "go_chain.npy")
	if os.Getenv("MIRABILIS_UPDATE_NPY") != "" {
		if err := os.WriteFile(golden, got, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if want := readFile(t, golden); !bytes.Equal(got, want) {
		t.Errorf("chain file (%d bytes) differs from %s (%d bytes)", len(got), golden, len(want))
	}
	// Layout facts of the format documentation: magic, version 1.0, a header whose
	// total length is a multiple of 64 and which ends in a newline.
	hlen := int(got[8]) | int(got[9])<<8
	if string(got[:6]) != "\x93NUMPY" || got[6] != 1 || got[7] != 0 || (10+hlen)%64 != 0 || got[10+hlen-1] != '\n' {
		t.Errorf("header %q", got[:min(len(got), 10+hlen)])
	}
	if len(got) != 10+hlen+4*3*8*(3+len(goldenNames)) {
		t.Errorf("%d bytes, want the header and 12 records", len(got))
	}
}

// TestNpyReadByNumPy: what numpy.load(go_chain.npy, mmap_mode="r") saw, as the script
// recorded it, equals the chain the Go code wrote, bit for bit.
func TestNpyReadByNumPy(t *testing.T) {
	f, err := os.Open(filepath.Join(npyRef, "go_chain_read.txt"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	var lines []string
	for sc.Scan() {
		if !strings.HasPrefix(sc.Text(), "#") {
			lines = append(lines, sc.Text())
		}
	}
	want := []string{"version 1.0", "shape 4 3",
		"fields step:<i8 walker:<i8 log_density:<f8 R0:<f8 Theta0:<f8 o'clock:<f8"}
	if len(lines) != 3+12 {
		t.Fatalf("%d lines, want 15", len(lines))
	}
	for i, w := range want {
		if lines[i] != w {
			t.Errorf("NumPy saw %q, want %q", lines[i], w)
		}
	}
	for i, line := range lines[3:] {
		s, k := i/3, i%3
		f := strings.Fields(line)
		if len(f) != 3+len(goldenNames) || f[0] != strconv.Itoa(2*(s+1)) || f[1] != strconv.Itoa(k) {
			t.Fatalf("record %d: %q", i, line)
		}
		vals := []float64{-float64(s*3+k) / 7}
		for j := range goldenNames {
			vals = append(vals, goldenValue(s, k, j))
		}
		for j, v := range vals {
			got, err := strconv.ParseFloat(f[2+j], 64)
			if err != nil || math.Float64bits(got) != math.Float64bits(v) {
				t.Errorf("step %d walker %d field %d: NumPy read %s, the writer wrote %v", 2*(s+1), k, j, f[2+j], v)
			}
		}
	}
}

// TestOpenNumPyFiles: files NumPy wrote in the chain layout (format 1.0, and 3.0 for a
// non-ASCII field name) read back with the values the script put in.
func TestOpenNumPyFiles(t *testing.T) {
	for _, c := range []struct {
		file           string
		names          []string
		steps, walkers int
	}{
		{"numpy_chain.npy", []string{"R0", "o'clock"}, 5, 4},
		{"numpy_unicode.npy", []string{"Θ0"}, 2, 2},
	} {
		ch, err := OpenChain(filepath.Join(npyRef, c.file))
		if err != nil {
			t.Errorf("%s: %v", c.file, err)
			continue
		}
		if !slices.Equal(ch.Names, c.names) || ch.Len() != c.steps || ch.Walkers() != c.walkers {
			t.Errorf("%s: names %q, %d steps of %d walkers", c.file, ch.Names, ch.Len(), ch.Walkers())
		}
		for s := range ch.Len() {
			for k := range ch.Walkers() {
				x := ch.Position(s, k, nil)
				ok := ch.Step(s) == 3*(s+1) && ch.LogDensity(s, k) == -float64(4*s+k)/8 &&
					x[0] == 8+float64(s)/4+float64(k)/16
				if len(x) > 1 {
					ok = ok && x[1] == math.Pow(-1, float64(k))*math.Pow(2, -float64(s+k))
				}
				if !ok {
					t.Errorf("%s: step %d walker %d: %d %v %v", c.file, s, k, ch.Step(s), ch.LogDensity(s, k), x)
				}
			}
		}
		ch.Close()
	}
}

// TestNpyHeaderKeepsLength: the header is rewritten in place as rows are added, so its
// length may not depend on the row count; it switches to format 3.0 for non-ASCII names.
func TestNpyHeaderKeepsLength(t *testing.T) {
	names := []string{"a", "b"}
	n := len(npyHeader(names, 0, 8))
	for _, rows := range []int{1, 99, 123456789, math.MaxInt64} {
		if h := npyHeader(names, rows, 8); len(h) != n || len(h)%64 != 0 {
			t.Errorf("%d rows: header of %d bytes, want %d", rows, len(h), n)
		}
	}
	if h := npyHeader([]string{"Θ0"}, 0, 2); h[6] != 3 {
		t.Errorf("non-ASCII name: format %d.%d, want 3.0", h[6], h[7])
	}
}

func TestOpenChainErrors(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "chain.npy")
	writeGolden(t, path)
	good := readFile(t, path)
	for _, c := range []struct {
		name string
		data []byte
		want string
	}{
		{"cut short", good[:len(good)-9], "cut short"},
		{"not npy", []byte("step,walker\n"), "not a .npy"},
		{"fortran order", bytes.Replace(good, []byte("False"), []byte("True "), 1), "fortran_order"},
		{"wrong field", bytes.Replace(good, []byte("'walker'"), []byte("'walked'"), 1), `"walked"`},
		{"wrong type", bytes.Replace(good, []byte("'<f8'"), []byte("'<f4'"), 1), "<f4"},
	} {
		p := filepath.Join(dir, c.name+".npy")
		os.WriteFile(p, c.data, 0o644)
		_, err := OpenChain(p)
		if err == nil || !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), p) {
			t.Errorf("%s: %v, want an error naming the file and saying %s", c.name, err, c.want)
		}
	}
}

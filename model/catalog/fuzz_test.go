package catalog

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// FuzzRead checks that Read never panics, that a refused catalog comes with
// an *Error and no catalog, and that an accepted catalog keeps the format's
// promises and comes back unchanged through Write and Read. The seeds are
// the catalogs of testdata/catalog and a few small texts; found failures
// live in testdata/fuzz/FuzzRead.
func FuzzRead(f *testing.F) {
	entries, err := os.ReadDir(dataDir)
	if err != nil {
		f.Fatal(err)
	}
	for _, e := range entries {
		if !strings.HasSuffix(e.Name(), ".csv") {
			continue
		}
		b, err := os.ReadFile(filepath.Join(dataDir, e.Name()))
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	for _, s := range []string{
		"name,ra,dec,parallax,parallax_err\nx,1,2,3,4\n",
		"name,l,b,parallax,parallax_err,pml,pml_err,arm\n\"a,\"\"b\",-360,0,-0,1e-300,,,?\n",
		"NAME , Ra,DEC,Parallax,Parallax_Error\r\n#c\r\ny,23h59m59.999s,-89d59m59.999,0,1\r\n",
		"name,ra,dec,l,b,parallax,parallax_err,vlsr,vlsr_err,vhelio,vhelio_err\nz,,,1,2,3,4,,,5,6\n",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		cat, err := Read(bytes.NewReader(data), "fuzz.csv")
		if err != nil {
			var ce *Error
			if !errors.As(err, &ce) || len(ce.Problems) == 0 || len(ce.Problems) > MaxProblems {
				t.Fatalf("refused with %T %v", err, err)
			}
			if cat != nil {
				t.Fatal("catalog returned with an error")
			}
			for _, p := range ce.Problems {
				if p.Reason == "" || p.Line < 0 || p.Column < 0 {
					t.Fatalf("malformed problem %+v", p)
				}
			}
			if err.Error() == "" {
				t.Fatal("empty error text")
			}
			return
		}
		if len(cat.Sources) == 0 {
			t.Fatal("accepted a catalog without sources")
		}
		names := map[string]bool{}
		for _, s := range cat.Sources {
			checkPromises(t, s)
			if names[s.Name] {
				t.Fatalf("duplicate name %q accepted", s.Name)
			}
			names[s.Name] = true
		}
		var buf bytes.Buffer
		if err := Write(&buf, cat.Sources); err != nil {
			t.Fatalf("writing an accepted catalog: %v", err)
		}
		back, err := Read(bytes.NewReader(buf.Bytes()), "rewritten.csv")
		if err != nil {
			t.Fatalf("reading back:\n%s\n%v", buf.String(), err)
		}
		got, want := withoutLines(back.Sources), withoutLines(cat.Sources)
		if len(got) != len(want) {
			t.Fatalf("%d sources read back, want %d", len(got), len(want))
		}
		for i := range want {
			if !sameBits(got[i], want[i]) {
				t.Fatalf("source %d changed:\n got %+v\nwant %+v", i, got[i], want[i])
			}
		}
	})
}

// checkPromises checks a source against the guarantees of the Source and
// Measurement documentation.
func checkPromises(t *testing.T, s Source) {
	t.Helper()
	if s.Name == "" || strings.TrimSpace(s.Name) != s.Name || s.Arm == "?" || strings.TrimSpace(s.Arm) != s.Arm {
		t.Fatalf("name %q or arm %q not trimmed", s.Name, s.Arm)
	}
	if !(s.Lon >= 0 && s.Lon < 360 && s.Lat >= -90 && s.Lat <= 90) {
		t.Fatalf("%s: position (%v, %v) out of range", s.Name, s.Lon, s.Lat)
	}
	if s.Frame != Equatorial && s.Frame != Galactic {
		t.Fatalf("%s: frame %v", s.Name, s.Frame)
	}
	if !s.Parallax.OK {
		t.Fatalf("%s: no parallax", s.Name)
	}
	for _, m := range []Measurement{s.Parallax, s.PM1, s.PM2, s.Vel} {
		if !m.OK {
			if m != (Measurement{}) {
				t.Fatalf("%s: absent measurement %+v not zero", s.Name, m)
			}
			continue
		}
		if math.IsNaN(m.Value) || math.IsInf(m.Value, 0) || !(m.Err > 0) || math.IsInf(m.Err, 0) {
			t.Fatalf("%s: measurement %+v", s.Name, m)
		}
	}
	if !s.PM1.OK && !s.PM2.OK && s.PMFrame != Equatorial {
		t.Fatalf("%s: proper-motion frame %v without proper motions", s.Name, s.PMFrame)
	}
	if !s.Vel.OK && s.VelLSR {
		t.Fatalf("%s: VelLSR without a velocity", s.Name)
	}
}

// sameBits reports whether two sources are equal, floats bit for bit.
func sameBits(a, b Source) bool {
	fa := []float64{a.Lon, a.Lat, a.Parallax.Value, a.Parallax.Err, a.PM1.Value, a.PM1.Err, a.PM2.Value, a.PM2.Err, a.Vel.Value, a.Vel.Err}
	fb := []float64{b.Lon, b.Lat, b.Parallax.Value, b.Parallax.Err, b.PM1.Value, b.PM1.Err, b.PM2.Value, b.PM2.Err, b.Vel.Value, b.Vel.Err}
	for i := range fa {
		if math.Float64bits(fa[i]) != math.Float64bits(fb[i]) {
			return false
		}
	}
	return a.Name == b.Name && a.Line == b.Line && a.Frame == b.Frame && a.PMFrame == b.PMFrame &&
		a.VelLSR == b.VelLSR && a.Arm == b.Arm &&
		a.Parallax.OK == b.Parallax.OK && a.PM1.OK == b.PM1.OK && a.PM2.OK == b.PM2.OK && a.Vel.OK == b.Vel.OK
}

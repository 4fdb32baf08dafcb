package catalog

import (
	"bytes"
	"errors"
	"math"
	"strings"
	"testing"
)

// withoutLines returns a copy of sources with Line cleared.
func withoutLines(sources []Source) []Source {
	out := make([]Source, len(sources))
	for i, s := range sources {
		s.Line = 0
		out[i] = s
	}
	return out
}

func roundTrip(t *testing.T, sources []Source) []Source {
	t.Helper()
	var buf bytes.Buffer
	if err := Write(&buf, sources); err != nil {
		t.Fatal(err)
	}
	cat, err := Read(&buf, "written.csv")
	if err != nil {
		t.Fatalf("reading back: %v\n%s", err, buf.String())
	}
	return cat.Sources
}

func TestWriteReadRoundTripFiles(t *testing.T) {
	for _, f := range []string{"decimal.csv", "sexagesimal.csv", "galactic.csv", "mixed.csv", "bom_crlf.csv"} {
		t.Run(f, func(t *testing.T) {
			cat, err := readTestFile(t, f)
			if err != nil {
				t.Fatal(err)
			}
			back := roundTrip(t, cat.Sources)
			sameSources(t, withoutLines(back), withoutLines(cat.Sources), 0)
		})
	}
}

func TestWriteReadRoundTripEdgeValues(t *testing.T) {
	g := Galactic
	sources := []Source{
		{Name: "Lantern, east knot", Lon: 0, Lat: -90, Parallax: m(5e-324, math.MaxFloat64)},
		{Name: `say "Vireo"`, Lon: math.Nextafter(360, 0), Lat: 90, Parallax: m(-math.MaxFloat64, 5e-324)},
		{Name: "#mock-0001", Frame: g, Lon: 359.99999999999994, Lat: math.Copysign(0, -1),
			Parallax: m(math.Copysign(0, -1), 0.1), PMFrame: g, PM1: m(-0.1, 0.2)},
		{Name: "Halcyon Δ–7 ☉", Lon: 1.0 / 3, Lat: -2.0 / 3, Parallax: m(0.1+0.2, 1e-10),
			PM2: m(1e21, 3), VelLSR: true, Vel: m(-1e-7, 12345.678), Arm: "Corvid, inner"},
		{Name: `"quoted"`, Frame: g, Lon: 12, Lat: 3, Parallax: m(1, 1), Vel: m(2, 3), Arm: "#Tamarisk"},
	}
	back := roundTrip(t, sources)
	sameSources(t, withoutLines(back), sources, 0)
	if !math.Signbit(back[2].Lat) || !math.Signbit(back[2].Parallax.Value) {
		t.Error("negative zero lost its sign")
	}
}

func TestWriteCanonicalText(t *testing.T) {
	// The canonical form of the package documentation: only the columns
	// in use, in the fixed order, shortest decimals, blanks for absent
	// values, quotes for a comma.
	sources := []Source{
		{Name: "Corvid-1", Lon: 10, Lat: -5.5, Parallax: m(0.5, 0.1), PM1: m(1.25, 0.05)},
		{Name: "Corvid, b", Frame: Galactic, Lon: 300, Lat: 0.25, Parallax: m(-0.1, 0.2),
			VelLSR: true, Vel: m(40, 2), Arm: "Corvid"},
	}
	var buf bytes.Buffer
	if err := Write(&buf, sources); err != nil {
		t.Fatal(err)
	}
	want := "name,ra,dec,l,b,parallax,parallax_err,pmra,pmra_err,vlsr,vlsr_err,arm\n" +
		"Corvid-1,10,-5.5,,,0.5,0.1,1.25,0.05,,,\n" +
		`"Corvid, b",,,300,0.25,-0.1,0.2,,,40,2,Corvid` + "\n"
	if buf.String() != want {
		t.Errorf("wrote\n%s\nwant\n%s", buf.String(), want)
	}
}

func TestWriteRefuses(t *testing.T) {
	good := Source{Name: "mock-1", Lon: 10, Lat: 20, Parallax: m(0.5, 0.1)}
	for _, tc := range []struct {
		what   string
		change func(*Source)
	}{
		{"empty name", func(s *Source) { s.Name = "" }},
		{"name with spaces around it", func(s *Source) { s.Name = " mock-1" }},
		{"name with a newline", func(s *Source) { s.Name = "mock\n1" }},
		{"name not UTF-8", func(s *Source) { s.Name = "mock\xff" }},
		{"arm ?", func(s *Source) { s.Arm = "?" }},
		{"arm with a tab", func(s *Source) { s.Arm = "Cor\tvid" }},
		{"unknown frame", func(s *Source) { s.Frame = 7 }},
		{"ra 360", func(s *Source) { s.Lon = 360 }},
		{"l -1", func(s *Source) { s.Frame, s.Lon = Galactic, -1 }},
		{"dec 91", func(s *Source) { s.Lat = 91 }},
		{"NaN latitude", func(s *Source) { s.Lat = math.NaN() }},
		{"no parallax", func(s *Source) { s.Parallax = Measurement{} }},
		{"parallax error zero", func(s *Source) { s.Parallax.Err = 0 }},
		{"infinite proper motion", func(s *Source) { s.PM1 = m(math.Inf(1), 1) }},
		{"infinite proper-motion error", func(s *Source) { s.PM2 = m(1, math.Inf(1)) }},
		{"NaN velocity error", func(s *Source) { s.Vel = m(1, math.NaN()) }},
		{"unknown proper-motion frame", func(s *Source) { s.PMFrame, s.PM1 = 3, m(1, 1) }},
	} {
		s := good
		tc.change(&s)
		var buf bytes.Buffer
		if err := Write(&buf, []Source{good, s}); err == nil {
			t.Errorf("%s: written:\n%s", tc.what, buf.String())
		} else if buf.Len() > 0 {
			t.Errorf("%s: refused after writing %d bytes", tc.what, buf.Len())
		}
	}
	if err := Write(&bytes.Buffer{}, []Source{good, good}); err == nil || !strings.Contains(err.Error(), "duplicate") {
		t.Errorf("duplicate names: error %v", err)
	}
	if err := Write(&bytes.Buffer{}, nil); err == nil {
		t.Error("no sources: no error")
	}
	// Absent measurements keep no stray values, so they need no check.
	s := good
	s.PM1 = Measurement{Value: math.NaN(), Err: -1}
	if err := Write(&bytes.Buffer{}, []Source{s}); err != nil {
		t.Errorf("absent measurement with stray fields: %v", err)
	}
}

type failWriter struct{}

func (failWriter) Write([]byte) (int, error) { return 0, errors.New("disk full") }

func TestWriteError(t *testing.T) {
	err := Write(failWriter{}, []Source{{Name: "mock-1", Parallax: m(1, 1)}})
	if err == nil || !strings.Contains(err.Error(), "disk full") {
		t.Errorf("error %v", err)
	}
}

package catalog

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// TestReadPlaces checks a places file read with the catalog's rules: sexagesimal angles
// (18:30:00 = 18.5 h = 277.5°, −05:30:00 = −5.5°, worked by hand), l wrapped into [0, 360),
// comments and an optional name.
func TestReadPlaces(t *testing.T) {
	in := "# places\nname,ra,dec,distance\nA,18:30:00,-05:30:00,4\n\nB,100.5,20,0.25\n"
	ps, err := ReadPlaces(strings.NewReader(in), "p.csv")
	if err != nil {
		t.Fatal(err)
	}
	want := []Place{
		{Name: "A", Line: 3, Frame: Equatorial, Lon: 277.5, Lat: -5.5, Distance: 4},
		{Name: "B", Line: 5, Frame: Equatorial, Lon: 100.5, Lat: 20, Distance: 0.25},
	}
	if len(ps) != len(want) {
		t.Fatalf("got %d places, want %d", len(ps), len(want))
	}
	for i, w := range want {
		g := ps[i]
		if g.Name != w.Name || g.Line != w.Line || g.Frame != w.Frame || math.Abs(g.Lon-w.Lon) > 1e-12 ||
			math.Abs(g.Lat-w.Lat) > 1e-12 || g.Distance != w.Distance {
			t.Errorf("place %d = %+v, want %+v", i, g, w)
		}
	}
	ps, err = ReadPlaces(strings.NewReader("l,b,distance\n-10,1,3\n"), "g.csv")
	if err != nil {
		t.Fatal(err)
	}
	if p := ps[0]; p.Name != "" || p.Frame != Galactic || p.Lon != 350 || p.Lat != 1 {
		t.Errorf("galactic place %+v, want l = 350, b = 1, no name", p)
	}
}

// TestReadPlacesErrors checks that every problem is named by line, column and value, all
// at once, and that catalog columns are not taken for places.
func TestReadPlacesErrors(t *testing.T) {
	for _, c := range []struct {
		in   string
		want []string
	}{
		{"l,b,distance\n10,0,-4\n400,0,abc\n", []string{
			`p.csv:2:3 (distance): value "-4": distance must be positive`,
			`p.csv:3:1 (l): value "400": l must be in [-360, 360]`,
			`p.csv:3:3 (distance): value "abc": expected a number (kpc)`}},
		{"l,b,distnce\n10,0,4\n", []string{`p.csv:1:3: value "distnce": unknown column (did you mean "distance"?)`, "missing required column distance"}},
		{"name,ra,dec,parallax,distance\nA,10,0,1,3\n", []string{`p.csv:1:4: value "parallax": unknown column`}},
		{"ra,dec,l,b,distance\n", []string{"one position pair"}},
		{"l,b,distance\n", []string{"no places: the header on line 1 is followed by no rows"}},
	} {
		_, err := ReadPlaces(strings.NewReader(c.in), "p.csv")
		var e *Error
		if !errors.As(err, &e) {
			t.Errorf("%q: error %v, want an *Error", c.in, err)
			continue
		}
		for _, w := range c.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%q: error\n%v\nlacks %q", c.in, err, w)
			}
		}
	}
	// A catalog does not take a distance column.
	_, err := Read(strings.NewReader("name,ra,dec,parallax,parallax_err,distance\nA,10,0,1,0.1,3\n"), "c.csv")
	if err == nil || !strings.Contains(err.Error(), `value "distance": unknown column`) {
		t.Errorf("catalog with a distance column: %v", err)
	}
}

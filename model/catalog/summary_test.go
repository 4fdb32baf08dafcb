package catalog

import (
	"reflect"
	"strings"
	"testing"
)

func TestSummary(t *testing.T) {
	g := Galactic
	cat := &Catalog{Sources: []Source{
		{Name: "A", Lon: 350, Lat: -10, Parallax: m(1.0, 0.1), PM1: m(1, 1), PM2: m(1, 1),
			VelLSR: true, Vel: m(1, 1), Arm: "Corvid"},
		{Name: "B", Lon: 10, Lat: 20, Parallax: m(-0.2, 0.1), PM1: m(1, 1), Vel: m(1, 1)},
		{Name: "C", Lon: 5, Lat: 0, Parallax: m(0.3, 0.1), VelLSR: true, Vel: m(1, 1), Arm: "Corvid"},
		{Name: "D", Frame: g, Lon: 100, Lat: 1, Parallax: m(0.5, 0.25), PMFrame: g, PM1: m(1, 1), PM2: m(1, 1),
			Arm: "Lantern"},
		{Name: "E", Frame: g, Lon: 300, Lat: -2, Parallax: m(0, 0.5), PMFrame: g, PM2: m(1, 1),
			VelLSR: true, Vel: m(1, 1)},
	}}
	// By hand: ϖ/σ = 10, −2, 3, 2, 0 → sorted −2, 0, 2, 3, 10.
	// Equatorial longitudes 5, 10, 350: gaps 5, 340, 15 (across 0); the
	// widest (10 → 350) is left out, so the arc runs 350 → 10, 20° long.
	// Galactic longitudes 100, 300: gaps 200 (100 → 300) and 160 (across 0);
	// the arc runs 300 → 100 through 0, 160° long.
	want := Summary{
		Sources:    5,
		Equatorial: Coverage{Sources: 3, LonMin: 350, LonMax: 10, LonSpan: 20, LatMin: -10, LatMax: 20},
		Galactic:   Coverage{Sources: 2, LonMin: 300, LonMax: 100, LonSpan: 160, LatMin: -2, LatMax: 1},
		PMRA:       2, PMDec: 1, PML: 1, PMB: 2,
		VLSR: 3, VHelio: 1,
		Arms:             []ArmCount{{"Corvid", 2}, {"Lantern", 1}},
		Labelled:         3,
		NegativeParallax: 1,
		MinSignificance:  -2, MedianSignificance: 2, MaxSignificance: 10,
	}
	got := cat.Summary()
	// 0.3/0.1 and 1.0/0.1 are not exact in binary; compare them loosely.
	if d := got.MaxSignificance - 10; d > 1e-12 || d < -1e-12 {
		t.Errorf("max significance %v, want 10", got.MaxSignificance)
	}
	got.MaxSignificance = 10
	if !reflect.DeepEqual(got, want) {
		t.Errorf("summary\n got %+v\nwant %+v", got, want)
	}
	text := got.String()
	for _, s := range []string{"5 sources (3 with ra/dec, 2 with l/b)", "Corvid 2", "350.00 to 10.00 deg through 0", "negative parallaxes: 1"} {
		if !strings.Contains(text, s) {
			t.Errorf("summary text lacks %q:\n%s", s, text)
		}
	}
}

func TestSummaryEvenMedianAndTies(t *testing.T) {
	cat := &Catalog{Sources: []Source{
		{Name: "A", Lon: 0, Parallax: m(1, 1)},
		{Name: "B", Lon: 180, Parallax: m(4, 1)},
		{Name: "C", Lon: 180, Parallax: m(2, 1)},
		{Name: "D", Lon: 0, Parallax: m(8, 1)},
	}}
	s := cat.Summary()
	// Median of 1, 2, 4, 8 is (2 + 4)/2 = 3. Longitudes 0 and 180 leave
	// two equal gaps; the arc is then reported without wrapping.
	if s.MedianSignificance != 3 || s.MinSignificance != 1 || s.MaxSignificance != 8 {
		t.Errorf("significance %v %v %v, want 1 3 8", s.MinSignificance, s.MedianSignificance, s.MaxSignificance)
	}
	if c := s.Equatorial; c.LonMin != 0 || c.LonMax != 180 || c.LonSpan != 180 {
		t.Errorf("coverage %+v", c)
	}
	if s.Galactic != (Coverage{}) {
		t.Errorf("galactic coverage %+v, want zero", s.Galactic)
	}
	if s := (&Catalog{}).Summary(); s.Sources != 0 || s.MedianSignificance != 0 {
		t.Errorf("empty summary %+v", s)
	}
}

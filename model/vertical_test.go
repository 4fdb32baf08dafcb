package model

import (
	"math"
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/param"
)

// TestLogSpatialPriorFactors checks the spatial factor against its closed forms: the
// layer's factor over the in-plane one is N(d sin b + z⊙; 0, H) d / cos b (volume element
// d³ cos b against (d cos b)²), the completeness multiplies it by 1/(1 + exp((d − D)/s));
// and the log-integrand is the spatial factor plus the parallax and kinematic terms.
func TestLogSpatialPriorFactors(t *testing.T) {
	flat := testSpec(t, ErrorsGaussian)
	layer := *flat
	layer.Vertical = true
	sel := layer
	sel.Selection = Selection{DecMin: -40 * deg, DecMax: 90 * deg, HalfDistance: 7, Softness: 1.3}
	v := testValues()
	v[param.ScaleHeight], v[param.ZSun] = 0.06, 0.018
	pf, err := flat.NewParams(v)
	if err != nil {
		t.Fatal(err)
	}
	pl, err := layer.NewParams(v)
	if err != nil {
		t.Fatal(err)
	}
	comp := make([]float64, flat.NumComponents())
	for _, s := range testSources() {
		for _, d := range []float64{0.2, 1.1, 4.7, 9.3, 17} {
			z := d*s.Sight.SinB + 0.018
			gauss := -0.5*(z/0.06)*(z/0.06) - math.Log(0.06) - 0.5*math.Log(2*math.Pi)
			want := gauss + math.Log(d) - math.Log(s.Sight.CosB)
			got := s.LogSpatialPrior(&layer, pl, d) - s.LogSpatialPrior(flat, pf, d)
			if math.Abs(got-want) > 1e-12*math.Max(1, math.Abs(want)) {
				t.Errorf("%s at %g kpc: layer over plane %.15g, want %.15g", s.Name, d, got, want)
			}
			comp1 := 1 / (1 + math.Exp((d-7)/1.3))
			if got, want := s.LogSpatialPrior(&sel, pl, d)-s.LogSpatialPrior(&layer, pl, d), math.Log(comp1); math.Abs(got-want) > 1e-12 {
				t.Errorf("%s at %g kpc: completeness factor %.15g, want %.15g", s.Name, d, got, want)
			}
			zp := (s.Plx - 1/d) / s.PlxErr
			plx := -0.5*zp*zp - math.Log(s.PlxErr) - 0.5*math.Log(2*math.Pi)
			lk, _ := s.logKinematic(&sel, pl, d)
			if got, want := s.LogIntegrand(&sel, pl, math.Log(d), comp), plx+lk+s.LogSpatialPrior(&sel, pl, d); math.Abs(got-want) > 1e-12*math.Max(1, math.Abs(want)) {
				t.Errorf("%s at %g kpc: log-integrand %.15g, parts %.15g", s.Name, d, got, want)
			}
		}
	}
	// Without a layer the parameters are not needed; with one, scale_height is.
	delete(v, param.ScaleHeight)
	if _, err := layer.NewParams(v); err == nil || !strings.Contains(err.Error(), param.ScaleHeight) {
		t.Errorf("layer without scale_height: error %v", err)
	}
	if _, err := flat.NewParams(v); err != nil {
		t.Errorf("in-plane model: %v", err)
	}
}

// TestNewSourcesRefusesUnseen checks that a source in a direction the selection does not
// see is refused, naming the catalog line, the source and its (l, b).
func TestNewSourcesRefusesUnseen(t *testing.T) {
	csv := "name,l,b,parallax,parallax_err\nA,30,0.1,0.2,0.02\nB,330,-0.5,0.1,0.02\nC,5,0,0.1,0.02\n"
	cat, err := catalog.Read(strings.NewReader(csv), "band.csv")
	if err != nil {
		t.Fatal(err)
	}
	spec := testSpec(t, ErrorsGaussian)
	if _, err := NewSources(cat, spec); err != nil {
		t.Fatalf("no selection: %v", err)
	}
	// l = 330°, b = −0.5° lies at δ ≈ −53° (astropy 5.2.1: −52.7928°); l = 5° is excluded.
	spec.Selection = Selection{DecMin: -35 * deg, DecMax: 90 * deg, ExcludeL: [][2]float64{{355 * deg, 10 * deg}}}
	_, err = NewSources(cat, spec)
	if err == nil {
		t.Fatal("sources outside the selection accepted")
	}
	msg := err.Error()
	for _, want := range []string{"2 source(s)", "band.csv:3: source B at (l, b) = (330.0000°, -0.5000°)", "declination -52.79", "band.csv:4: source C", "longitude"} {
		if !strings.Contains(msg, want) {
			t.Errorf("error %q lacks %q", msg, want)
		}
	}
	if strings.Contains(msg, "source A") {
		t.Errorf("error names a source the selection sees: %q", msg)
	}
}

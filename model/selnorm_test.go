package model

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"slices"
	"testing"

	"github.com/mirabilis-astro/mirabilis/arms"
)

// selCase is one case of testdata/selnorm/selnorm_cases.json: a layout, a layer and a
// selection, in the units of the configuration (deg, kpc).
type selCase struct {
	Name        string  `json:"name"`
	R0          float64 `json:"R0"`
	TauDeg      float64 `json:"tau_deg"`
	DiskScale   float64 `json:"disk_scale"`
	DMin        float64 `json:"d_min"`
	DMax        float64 `json:"d_max"`
	WidthSlope  float64 `json:"width_slope"`
	ZSun        float64 `json:"z_sun"`
	ScaleHeight float64 `json:"scale_height"`
	Vertical    string  `json:"vertical"`
	Arms        []struct {
		Name                string
		RRef                float64 `json:"rref"`
		BetaRef             float64 `json:"beta_ref"`
		Pitch, Pitch2, Kink float64
		Kinked              bool
		Start, End, Width   float64
	} `json:"arms"`
	Selection struct {
		Declination  [2]float64   `json:"declination"`
		Exclude      [][2]float64 `json:"exclude_longitude"`
		Completeness *struct {
			HalfDistance float64 `json:"half_distance"`
			Softness     float64 `json:"softness"`
		} `json:"completeness"`
	} `json:"selection"`
}

func (c *selCase) layout(t testing.TB) (*arms.Density, Selection) {
	l := arms.Layout{R0: c.R0, WidthSlope: c.WidthSlope, EdgeSoftening: c.TauDeg * deg, DiskScale: c.DiskScale}
	for _, a := range c.Arms {
		l.Arms = append(l.Arms, arms.Arm{Name: a.Name, RRef: a.RRef, BetaRef: a.BetaRef * deg, Pitch: a.Pitch * deg,
			Kinked: a.Kinked, Pitch2: a.Pitch2 * deg, BetaKink: a.Kink * deg, BetaStart: a.Start * deg, BetaEnd: a.End * deg, Width: a.Width})
	}
	d, err := arms.NewDensity(l)
	if err != nil {
		t.Fatal(err)
	}
	sel := Selection{DecMin: c.Selection.Declination[0] * deg, DecMax: c.Selection.Declination[1] * deg}
	for _, e := range c.Selection.Exclude {
		sel.ExcludeL = append(sel.ExcludeL, [2]float64{e[0] * deg, e[1] * deg})
	}
	if cc := c.Selection.Completeness; cc != nil {
		sel.HalfDistance, sel.Softness = cc.HalfDistance, cc.Softness
	}
	return d, sel
}

func readSelCases(t testing.TB) []selCase {
	var cases []selCase
	b, err := os.ReadFile(filepath.Join("..", "testdata", "selnorm", "selnorm_cases.json"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &cases); err != nil {
		t.Fatal(err)
	}
	return cases
}

// TestNormalisationWholeSky checks that a selection that sees everything (no band, no
// excluded longitudes, a completeness falling only at 10⁶ kpc) over a distance range that
// holds the whole Galaxy gives each component its whole mass: one, as the densities of
// package model, Arms are normalised (MODEL.md §4; a closed form, ∫ E dβ = Z_k), for the
// layer at several heights and for the plane.
func TestNormalisationWholeSky(t *testing.T) {
	spec := testSpec(t, ErrorsGaussian)
	p, err := spec.NewParams(testValues())
	if err != nil {
		t.Fatal(err)
	}
	sel := Selection{HalfDistance: 1e6, Softness: 1}
	for _, vertical := range []bool{true, false} {
		for _, hz := range [][2]float64{{0.025, 0}, {0.3, 0.02}, {0.1, -0.03}} {
			n := newNormaliser(sel, vertical, 1e-4, 100)
			z := make([]float64, spec.NumComponents())
			n.values(z, p.Density, p.Motion.R0(), hz[0], hz[1], spec.DiskScale)
			for m, v := range z {
				if math.Abs(v-1) > 1e-6 {
					t.Errorf("vertical %v, H = %g, z_sun = %g: Z_%d = %.9f, want 1", vertical, hz[0], hz[1], m, v)
				}
			}
		}
	}
}

// TestNormalisationInactive checks that without a selection nothing changes: every Z_m is 1
// and ln L_i carries no normalisation.
func TestNormalisationInactive(t *testing.T) {
	spec := testSpec(t, ErrorsGaussian)
	p, err := spec.NewParams(testValues())
	if err != nil {
		t.Fatal(err)
	}
	if p.LogNorm != 0 {
		t.Errorf("LogNorm = %g without a selection, want 0", p.LogNorm)
	}
	for m, v := range spec.Normalisation(p, nil) {
		if v != 1 {
			t.Errorf("Z_%d = %g without a selection, want 1", m, v)
		}
	}
}

// TestNormalisationBandAgreesWithSelection checks the normaliser's heights admitted by the
// declination band and its longitude test against Selection.BandLatitudes, which finds the
// latitudes in closed form by angle (sin δ = A sin b + B cos b) and is itself checked against
// astropy: at every longitude and projected distance, the heights s tan b of its intervals'
// ends.
func TestNormalisationBandAgreesWithSelection(t *testing.T) {
	for _, sel := range []Selection{
		{DecMin: -30 * deg, DecMax: 90 * deg, ExcludeL: [][2]float64{{350 * deg, 10 * deg}}},
		{DecMin: -40 * deg, DecMax: 65 * deg, ExcludeL: [][2]float64{{60 * deg, 75 * deg}, {100 * deg, 300 * deg}}},
		{DecMin: -90 * deg, DecMax: -5 * deg},
		{DecMin: 20 * deg, DecMax: 70 * deg},
	} {
		n := newNormaliser(sel, true, 0.05, 30)
		for i := range 720 {
			l := (float64(i) + 0.3) * 0.5 * deg
			want := sel.BandLatitudes(l)
			c, s := math.Cos(l), math.Sin(l)
			if got := n.excluded(c, s); got != (sel.excluded(l)) {
				t.Errorf("%+v: l = %.2f°: excluded %v, Selection says %v", sel, l/deg, got, !got)
				continue
			}
			if want == nil {
				continue
			}
			for _, dist := range []float64{0.3, 4, 17} {
				x, y := dist*c, dist*s
				var iv [3][2]float64
				k := 1
				iv[0] = [2]float64{math.Inf(-1), math.Inf(1)}
				if n.cutLo || n.cutHi {
					k = n.band(n.px*x+n.py*y, dist, &iv)
				}
				if k != len(want) {
					t.Errorf("%+v: l = %.2f°, s = %g: %d intervals, Selection has %d (%v)", sel, l/deg, dist, k, len(want), want)
					continue
				}
				for j, w := range want {
					for e := range 2 {
						wz := dist * math.Tan(w[e])
						if math.Abs(w[e]) > math.Pi/2-1e-12 {
							wz = math.Copysign(math.Inf(1), w[e])
						}
						if g := iv[j][e]; !(g == wz || math.Abs(g-wz) <= 1e-9*math.Max(1, math.Abs(wz))) {
							t.Errorf("%+v: l = %.2f°, s = %g: interval %d end %d at height %g, Selection %g", sel, l/deg, dist, j, e, g, wz)
						}
					}
				}
			}
		}
	}
}

// TestStdNormalUpper checks the normaliser's Q(u) = erfc(u/√2)/2 against math.Erfc (Go's
// port of FreeBSD's s_erf.c, good to 1 ulp) over the layer's range and its tails: within the
// 1.2e-7 of its value that Press et al. (Numerical Recipes, §6.2) state for the fit, and 1 −
// Q exact at −∞, 0 at +∞.
func TestStdNormalUpper(t *testing.T) {
	worst, at := 0.0, 0.0
	for i := range 200001 {
		u := -12 + 24*float64(i)/200000
		want := 0.5 * math.Erfc(u/math.Sqrt2)
		if rel := math.Abs(stdNormalUpper(u)/want - 1); rel > worst {
			worst, at = rel, u
		}
	}
	t.Logf("largest relative difference %.2e at u = %g", worst, at)
	if worst > 1.2e-7 {
		t.Errorf("Q(%g) is %.2e from math.Erfc's value, want ≤ 1.2e-7", at, worst)
	}
	if q := stdNormalUpper(math.Inf(1)); q != 0 {
		t.Errorf("Q(+∞) = %g, want 0", q)
	}
	if q := stdNormalUpper(math.Inf(-1)); q != 1 {
		t.Errorf("Q(−∞) = %g, want 1", q)
	}
}

// TestNormalisationOneEdgeAgreesWithBand checks the shortcut for a plane point near one edge
// of the band against band (itself checked against Selection.BandLatitudes and so against
// astropy): within layerReach·H of the mid-plane, the heights oneEdge admits are those of
// band's intervals, at layers from 5 to 300 pc thick and with the Sun off the mid-plane.
func TestNormalisationOneEdgeAgreesWithBand(t *testing.T) {
	used := 0
	for _, sel := range []Selection{
		{DecMin: -30 * deg, DecMax: 90 * deg},
		{DecMin: -40 * deg, DecMax: 65 * deg},
		{DecMin: -90 * deg, DecMax: -5 * deg},
		{DecMin: 20 * deg, DecMax: 70 * deg},
	} {
		n := newNormaliser(sel, true, 0.05, 30)
		for _, hz := range [][2]float64{{0.005, 0}, {0.03, 0.02}, {0.3, -0.01}} {
			n.h, n.zsun = hz[0], hz[1]
			wlo, whi := -n.zsun-layerReach*n.h, -n.zsun+layerReach*n.h
			for i := range 1440 {
				l := (float64(i) + 0.3) * 0.25 * deg
				for _, s := range []float64{0.02, 0.3, 2, 9, 25} {
					x, y := s*math.Cos(l), s*math.Sin(l)
					P := n.px*x + n.py*y
					fm := (P - n.pz*n.zsun) / math.Hypot(s, n.zsun)
					for _, lower := range []bool{true, false} {
						if (lower && !n.cutLo) || (!lower && !n.cutHi) {
							continue
						}
						var one, all [3][2]float64
						k := n.oneEdge(P, s, fm, lower, &one)
						if k < 0 {
							continue
						}
						used++
						// band with the other edge removed.
						m := *n
						m.cutLo, m.cutHi = lower, !lower
						kb := m.band(P, s, &all)
						var got, want [][2]float64
						clip := func(v [2]float64) ([2]float64, bool) {
							a, b := max(v[0], wlo), min(v[1], whi)
							return [2]float64{a, b}, b > a
						}
						for _, v := range one[:k] {
							if c, ok := clip(v); ok {
								got = append(got, c)
							}
						}
						for _, v := range all[:kb] {
							if c, ok := clip(v); ok {
								want = append(want, c)
							}
						}
						if len(got) != len(want) {
							t.Errorf("%+v, H %g, z⊙ %g, l %.2f°, s %g: oneEdge %v, band %v", sel, n.h, n.zsun, l/deg, s, got, want)
							continue
						}
						for j := range got {
							if math.Abs(got[j][0]-want[j][0]) > 1e-12 || math.Abs(got[j][1]-want[j][1]) > 1e-12 {
								t.Errorf("%+v, H %g, z⊙ %g, l %.2f°, s %g: oneEdge %v, band %v", sel, n.h, n.zsun, l/deg, s, got, want)
							}
						}
					}
				}
			}
		}
	}
	if used == 0 {
		t.Error("oneEdge never answered")
	}
	t.Logf("%d points compared", used)
}

// TestNormalisationReusesField checks that a normaliser that takes the field's share again
// (R0, the disk and the layer unchanged) gives every Z_m bit for bit as a new one does, the
// arms moved or not, and computes it afresh when R0, H or z⊙ changes.
func TestNormalisationReusesField(t *testing.T) {
	cases := readSelCases(t)
	c := cases[1]
	d, sel := c.layout(t)
	moved := c
	moved.Arms = slices.Clone(c.Arms)
	moved.Arms[0].Pitch += 2
	d2, _ := moved.layout(t)
	kept := newNormaliser(sel, true, c.DMin, c.DMax)
	for _, step := range []struct {
		d          *arms.Density
		r0, h, zsn float64
	}{
		{d, c.R0, c.ScaleHeight, c.ZSun},
		{d2, c.R0, c.ScaleHeight, c.ZSun},
		{d2, c.R0 + 0.1, c.ScaleHeight, c.ZSun},
		{d, c.R0 + 0.1, 2 * c.ScaleHeight, c.ZSun},
		{d, c.R0 + 0.1, 2 * c.ScaleHeight, c.ZSun + 0.01},
		{d, c.R0, c.ScaleHeight, c.ZSun},
	} {
		got := make([]float64, d.NumArms()+1)
		want := make([]float64, d.NumArms()+1)
		before := kept.points
		kept.values(got, step.d, step.r0, step.h, step.zsn, c.DiskScale)
		newNormaliser(sel, true, c.DMin, c.DMax).values(want, step.d, step.r0, step.h, step.zsn, c.DiskScale)
		for m := range got {
			if got[m] != want[m] {
				t.Errorf("R0 %g, H %g, z⊙ %g: Z_%d = %v with the kept normaliser, %v with a new one", step.r0, step.h, step.zsn, m, got[m], want[m])
			}
		}
		t.Logf("R0 %g, H %g, z⊙ %g: %d points", step.r0, step.h, step.zsn, kept.points-before)
	}
}

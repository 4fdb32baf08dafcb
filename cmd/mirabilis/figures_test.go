package main

import (
	"bytes"
	"image"
	"image/color"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/internal/mocktest"
	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/fit"
	"github.com/mirabilis-astro/mirabilis/plots"
)

// figTestSurvey and figTestSampler complete the two-armed test galaxy of testdata/mock
// (two-arms.toml, whose fixed parameters are the mock's truth, and two-arms-fit.toml, its
// fit) for a small, short fit.
const (
	figTestSurvey = `
[survey]
sources = 40
seed = 17
fractions = { field = 0.15 }
labelled = 0.3
missing_share = 0.1

[selection]
declination = [-35, 90]
completeness = { half_distance = 8, softness = 0.5 }
`
	figTestSampler = `
[sampler]
walkers = 40
steps = 30
burn = 10
seed = 5
`
)

// TestFiguresOfSmallFit runs a short fit of a mock catalog and draws its figures: all six
// must be PNG files, the map and the rotation curve of their intended sizes, and the map
// must show both arms' colours.
func TestFiguresOfSmallFit(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a short fit")
	}
	dir := t.TempDir()
	cfgPath, _ := mocktest.Catalog(t, dir, figTestSurvey, figTestSampler, fit.SpecFromConfig)
	out := shortFit(t, cfgPath, fit.Options{Steps: 30, Threads: 2})
	if out.Summary == nil {
		t.Fatal("the fit ended without a summary")
	}
	paths, err := writeFigures(out)
	if err != nil {
		t.Fatalf("writeFigures: %v", err)
	}
	var got []string
	for _, p := range paths {
		if filepath.Dir(p) != filepath.Join(out.Dir, figuresDir) {
			t.Errorf("figure %s is outside the run's figures folder", p)
		}
		got = append(got, filepath.Base(p))
	}
	want := []string{"map.png", "rotation.png", "pairs.png", "pairs-arms.png", "trace.png", "membership.png"}
	if !slices.Equal(got, want) {
		t.Fatalf("figures %v, want %v", got, want)
	}
	images := map[string]image.Image{}
	for _, p := range paths {
		data, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		// The PNG signature (ISO/IEC 15948, §5.2; section number from memory).
		if !bytes.HasPrefix(data, []byte("\x89PNG\r\n\x1a\n")) {
			t.Errorf("%s is not a PNG file", p)
			continue
		}
		if len(data) < 20_000 {
			t.Errorf("%s has only %d bytes", p, len(data))
		}
		img, err := png.Decode(bytes.NewReader(data))
		if err != nil {
			t.Errorf("%s: %v", p, err)
			continue
		}
		images[filepath.Base(p)] = img
	}
	// Map and rotation curve: 9 × 9 in and 9 × 6 in at plots.PNGDPI.
	for name, size := range map[string][2]float64{"map.png": {9, 9}, "rotation.png": {9, 6}} {
		img := images[name]
		if img == nil {
			continue
		}
		b := img.Bounds()
		if w, h := size[0]*plots.PNGDPI, size[1]*plots.PNGDPI; math.Abs(float64(b.Dx())-w) > 1 || math.Abs(float64(b.Dy())-h) > 1 {
			t.Errorf("%s is %d × %d pixels, want %.0f × %.0f", name, b.Dx(), b.Dy(), w, h)
		}
	}
	if img := images["map.png"]; img != nil {
		for k := range 2 {
			if n := pixelsNear(img, plots.ArmColor(k), 12); n < 50 {
				t.Errorf("map.png: %d pixels in the colour of arm %d, want the arm drawn", n, k+1)
			}
		}
	}
	// With the survey's selection of figTestSurvey (the fit was not told it, which keeps it
	// short), the map shows its reach: the plane south of δ = −35° and the completeness's
	// half distance.
	spec := *out.Job.Spec
	spec.Selection = model.Selection{DecMin: -35 * math.Pi / 180, DecMax: math.Pi / 2, HalfDistance: 8, Softness: 0.5}
	job := *out.Job
	job.Spec = &spec
	told := *out
	told.Job = &job
	in, err := newFigureInput(&told)
	if err != nil {
		t.Fatal(err)
	}
	if d, err := mapData(in); err != nil {
		t.Error(err)
	} else if len(d.Unseen) != 1 || d.UnseenLabel != "not surveyed (δ < −35°)" || d.HalfDistance != 8 {
		t.Errorf("map of a survey south-limited at δ = −35°, complete to 8 kpc: unseen %v (%q), half distance %g",
			d.Unseen, d.UnseenLabel, d.HalfDistance)
	}
	// The triangles of the globals and of the arms both have 6 free parameters: square, with
	// tiles of at least 1.2 in.
	for _, name := range []string{"pairs.png", "pairs-arms.png"} {
		if img := images[name]; img != nil {
			b := img.Bounds()
			if b.Dx() != b.Dy() || b.Dx() < 6*1.2*plots.PNGDPI {
				t.Errorf("%s of 6 parameters is %d × %d pixels, want a square of at least %.0f", name, b.Dx(), b.Dy(), 6*1.2*plots.PNGDPI)
			}
		}
	}

	// Without the chain the figures that need it are left out; the rotation curve then
	// comes from the summary's draws.
	bare := *out
	bare.Result, bare.Dir = nil, t.TempDir()
	paths, err = writeFigures(&bare)
	if err != nil {
		t.Fatalf("writeFigures without a chain: %v", err)
	}
	got = got[:0]
	for _, p := range paths {
		got = append(got, filepath.Base(p))
	}
	if want := []string{"map.png", "rotation.png", "membership.png"}; !slices.Equal(got, want) {
		t.Errorf("figures without a chain %v, want %v", got, want)
	}
}

// pixelsNear counts the pixels of img within tol (in each 8-bit channel) of colour c.
func pixelsNear(img image.Image, c color.Color, tol int) int {
	r0, g0, b0, _ := c.RGBA()
	b := img.Bounds()
	n := 0
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bl, _ := img.At(x, y).RGBA()
			if abs8(r, r0) <= tol && abs8(g, g0) <= tol && abs8(bl, b0) <= tol {
				n++
			}
		}
	}
	return n
}

func abs8(a, b uint32) int {
	d := int(a>>8) - int(b>>8)
	if d < 0 {
		return -d
	}
	return d
}

// TestMotionScale checks the arrow scale against the rule of its doc comment worked by
// hand: the 80th percentile speed (midpoint definition, Hyndman & Fan 1996, type 5) draws
// 5% of the map's radius.
func TestMotionScale(t *testing.T) {
	for _, c := range []struct {
		speeds []float64
		rMax   float64
		want   float64
	}{
		{[]float64{20, 20, 20}, 10, 0.025},                               // 0.5/20
		{[]float64{10, 20, 30, 40, 50}, 12, 0.6 / 45},                    // 80th percentile of 5 values: 45
		{[]float64{50, 5, 40, 10, 30, 20, 60, 70, 80, 90}, 20, 1.0 / 75}, // sorted 5, 10, 20 … 90: midway between 70 and 80
		{nil, 10, 0},
		{[]float64{0, 0}, 10, 0},
	} {
		if got := motionScale(c.speeds, c.rMax); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("motionScale(%v, %g) = %g, want %g", c.speeds, c.rMax, got, c.want)
		}
	}
}

// TestChainColumns checks how sampled coordinates are sorted among the figures, and that
// the arm triangle keeps only radii and pitch angles beyond maxArmTriangle parameters.
func TestChainColumns(t *testing.T) {
	armNames := []string{"Corvid", "Lantern"}
	names := []string{"R0", "Theta0", "Corvid_Rref", "Corvid_pitch", "Corvid_width", "Vsun",
		"Lantern_Rref", "Lantern_pitch", "Lantern_pitch2", "Lantern_kink", "Lantern_width", "Tamarisk_Rref", "stick_1", "stick_2"}
	g, a, s := chainColumns(names, armNames)
	// Tamarisk is no arm of this model: its name falls among the globals.
	if !slices.Equal(g, []int{0, 1, 5, 11}) || !slices.Equal(a, []int{2, 3, 4, 6, 7, 8, 9, 10}) || !slices.Equal(s, []int{12, 13}) {
		t.Errorf("globals %v, arms %v, reals %v", g, a, s)
	}
	if full, cols := armColumnsToShow(names, armNames); !full || len(cols) != 8 {
		t.Errorf("8 arm parameters: full %v, %d shown; want all", full, len(cols))
	}
	var many, manyNames []string
	for _, arm := range []string{"Corvid", "Lantern", "Tamarisk", "Halcyon", "Vireo", "Ember"} {
		manyNames = append(manyNames, arm)
		for _, suf := range []string{"_Rref", "_pitch", "_width"} {
			many = append(many, arm+suf)
		}
	}
	full, cols := armColumnsToShow(many, manyNames)
	if full || len(cols) != 12 {
		t.Fatalf("18 arm parameters: full %v, %d shown; want the 12 radii and pitch angles", full, len(cols))
	}
	for _, j := range cols {
		if strings.HasSuffix(many[j], "_width") {
			t.Errorf("%s shown among the radii and pitch angles", many[j])
		}
	}
	for name, want := range map[string]string{"R0": "R0 (kpc)", "dTheta_dR": "dTheta_dR (km/s/kpc)", "Vs": "Vs (km/s)",
		"Corvid_pitch2": "Corvid_pitch2 (deg)", "Corvid_width": "Corvid_width (kpc)", "alpha": "alpha", "f_field": "f_field"} {
		if got := paramLabel(name, armNames); got != want {
			t.Errorf("paramLabel(%q) = %q, want %q", name, got, want)
		}
	}
}

// TestUnseenInPlane checks the map's unseen longitudes and their legend words: a band's gap
// that touches an excluded range is drawn as one wedge, named by both; a selection that
// sees the whole plane draws none. The edge at l = 247.1127° is where astropy 5.2.1 puts
// δ = −30° in the plane (testdata/selection/plane_edges.json).
func TestUnseenInPlane(t *testing.T) {
	deg := math.Pi / 180
	sel := model.Selection{DecMin: -30 * deg, DecMax: 90 * deg, ExcludeL: [][2]float64{{350 * deg, 10 * deg}, {60 * deg, 70 * deg}}}
	got, label := unseenInPlane(&sel)
	want := []plots.LongitudeRange{{From: 60 * deg, To: 70 * deg}, {From: 247.1126626 * deg, To: 10 * deg}}
	if len(got) != len(want) {
		t.Fatalf("ranges %v, want %v", got, want)
	}
	for k := range want {
		if math.Abs(got[k].From-want[k].From) > 1e-4*deg || math.Abs(got[k].To-want[k].To) > 1e-9 {
			t.Errorf("range %d: %.5f..%.5f°, want %.5f..%.5f°", k, got[k].From/deg, got[k].To/deg, want[k].From/deg, want[k].To/deg)
		}
	}
	if want := "not surveyed (δ < −30°; l 350°–10°, 60°–70°)"; label != want {
		t.Errorf("label %q, want %q", label, want)
	}
	// A band of δ < 40° cuts the plane on its north side only.
	if _, label := unseenInPlane(&model.Selection{DecMin: -90 * deg, DecMax: 40 * deg}); label != "not surveyed (δ > 40°)" {
		t.Errorf("band [−90°, 40°]: label %q", label)
	}
	for _, s := range []model.Selection{{}, {HalfDistance: 9, Softness: 1}, {DecMin: -70 * deg, DecMax: 90 * deg}} {
		if got, label := unseenInPlane(&s); got != nil || label != "" {
			t.Errorf("selection %+v: ranges %v, label %q; want none", s, got, label)
		}
	}
}

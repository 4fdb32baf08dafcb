package fit

import (
	"bytes"
	"context"
	"encoding/csv"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/internal/mocktest"
	"github.com/mirabilis-astro/mirabilis/mcmc"
	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/config"
	"github.com/mirabilis-astro/mirabilis/model/mock"
)

// kinkGalaxy is the test galaxy (testdata/mock/two-arms.toml) with the Tamarisk arm either
// straight or kinked: pitch 6° up to β = 20°, 24° beyond. Only the arms are free in the
// fits below; the rotation curve, the solar motion and the dispersion are fixed at the
// truth, which keeps the fits short without favouring either arm model.
func kinkGalaxy(t *testing.T, kinked bool) []byte {
	t.Helper()
	desc, err := os.ReadFile(mocktest.File("two-arms.toml"))
	if err != nil {
		t.Fatal(err)
	}
	s := string(desc)
	old := "radius = \"fixed(9.4)\"\npitch = \"fixed(11)\"\n"
	if !strings.Contains(s, old) {
		t.Fatalf("%s: the Tamarisk arm is not as expected", mocktest.File("two-arms.toml"))
	}
	arm := "radius = \"fixed(9.4)\"\npitch = \"fixed(6)\"\n"
	if kinked {
		arm += "pitch2 = \"fixed(24)\"\nkink = \"fixed(20)\"\n"
	}
	return []byte(strings.Replace(s, old, arm, 1))
}

// kinkFit is the fit of kinkGalaxy's catalog with the arms free, kinked or not.
func kinkFit(kinked bool, sampler string) string {
	tamarisk := "pitch = \"uniform(2, 30)\"\n"
	if kinked {
		tamarisk += "pitch2 = \"uniform(2, 30)\"\nkink = \"uniform(-20, 60)\"\n"
	}
	return `catalog = "sources.csv"
output = "run"

[params]
R0 = "fixed(8.2)"
Theta0 = "fixed(232)"
dTheta_dR = "fixed(-0.5)"
Usun = "fixed(10.5)"
Vsun = "fixed(12)"
Wsun = "fixed(7.5)"
Us = "fixed(2)"
Vs = "fixed(-3)"
Ws = "fixed(1)"
sigma_vir = "fixed(6)"

[[arm]]
name = "Corvid"
azimuth_range = [-40, 150]
radius = "uniform(4.2, 6.2)"
pitch = "uniform(4, 25)"
width = "loguniform(0.05, 1)"

[[arm]]
name = "Tamarisk"
azimuth_range = [-60, 110]
radius = "uniform(8.5, 10.5)"
` + tamarisk + `width = "loguniform(0.05, 1)"

` + sampler
}

// writeMock draws n sources from kinkGalaxy into dir/sources.csv.
func writeMock(t *testing.T, dir string, kinked bool, n int, seed int) {
	t.Helper()
	desc := append(kinkGalaxy(t, kinked), strings.Replace(surveyOf(n), "seed = 11", fmt.Sprintf("seed = %d", seed), 1)...)
	desc = bytes.Replace(desc, []byte("labelled = 0.1"), []byte("labelled = 0"), 1)
	m, err := mock.Parse(desc, "galaxy.toml", dir)
	if err != nil {
		t.Fatal(err)
	}
	spec, err := SpecFromConfig(m.Config)
	if err != nil {
		t.Fatal(err)
	}
	data, _, err := m.Render(spec, nil)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "sources.csv"), data, 0o644); err != nil {
		t.Fatal(err)
	}
}

// fitBoth fits the catalog in dir with the straight and the kinked arm and opens the runs.
func fitBoth(t *testing.T, dir, sampler string) (straight, kinked *Run) {
	t.Helper()
	var runs [2]*Run
	for i, k := range []bool{false, true} {
		name := []string{"straight", "kinked"}[i]
		path := filepath.Join(dir, name+".toml")
		if err := os.WriteFile(path, []byte(kinkFit(k, sampler)), 0o644); err != nil {
			t.Fatal(err)
		}
		out := filepath.Join(dir, name)
		if _, err := Fit(context.Background(), load(t, path), Options{Out: out}); err != nil {
			t.Fatal(err)
		}
		r, err := OpenRun(out)
		if err != nil {
			t.Fatal(err)
		}
		t.Cleanup(func() { r.Close() })
		runs[i] = r
	}
	return runs[0], runs[1]
}

const kinkSampler = `
[sampler]
walkers = 24
steps = 400
burn = 200
checkpoint_every = 200
seed = 4
moves = { stretch = 0.3, differential_evolution = 0.7 }
`

// A catalog drawn with a kinked arm is predicted better by the kinked model, by more than
// 2 standard errors of the paired difference; one drawn with a straight arm shows no
// such preference (within 2 standard errors, the usual reading of elpd differences:
// Vehtari, Gelman & Gabry 2017, §5). Seeds fixed; 120 sources, short chains.
func TestCompareFindsKink(t *testing.T) {
	if testing.Short() {
		t.Skip("runs four short fits")
	}
	for _, c := range []struct {
		kinked bool
		seed   int
	}{{true, 21}, {false, 22}} {
		dir := t.TempDir()
		writeMock(t, dir, c.kinked, 120, c.seed)
		straight, kinked := fitBoth(t, dir, kinkSampler)
		cmp, err := Compare([][]*Run{{straight}, {kinked}}, CompareOptions{Draws: 1000})
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("mock kinked=%v:\n%s", c.kinked, cmp.Text())
		second := cmp.Models[1]
		z := -second.Diff.Value / second.Diff.SE
		if c.kinked {
			if cmp.Models[0].Runs[0] != kinked.Dir || z <= 2 {
				t.Errorf("kinked mock: best %s, difference %.1f ± %.1f; want the kinked model ahead by more than 2 SE",
					cmp.Models[0].Label, -second.Diff.Value, second.Diff.SE)
			}
		} else if z > 2 {
			t.Errorf("straight mock: %s ahead by %.1f ± %.1f, more than 2 SE", cmp.Models[0].Label, -second.Diff.Value, second.Diff.SE)
		}
	}
}

// fakeRun is a run with just what CheckComparable reads.
func fakeRun(dir, hash string, dist config.DistancePrior, labels []int, names []string) *Run {
	return fakeRunOf(dir, hash, dist, config.VerticalGaussian, config.Selection{}, labels, names)
}

// fakeRunOf is fakeRun with a vertical mode and a selection.
func fakeRunOf(dir, hash string, dist config.DistancePrior, vert config.VerticalStructure, sel config.Selection, labels []int, names []string) *Run {
	cat := &catalog.Catalog{Path: dir + "/sources.csv"}
	var src []model.Source
	for i, l := range labels {
		src = append(src, model.Source{Name: names[i], Label: l})
		cat.Sources = append(cat.Sources, catalog.Source{Name: names[i], Line: i + 2})
	}
	cfg := &config.Config{Catalog: cat.Path}
	cfg.Likelihood.DistancePrior = dist
	cfg.Likelihood.Vertical = vert
	cfg.Selection = sel
	return &Run{Dir: dir, Manifest: &Manifest{CatalogSHA256: hash},
		Job: &Job{Config: cfg, Catalog: cat, Like: &model.Likelihood{Sources: src}}}
}

// Models are refused, with the reason, when they fit different catalogs (the differing
// sources named), use different distance modes, vertical modes or selections, or tie a
// source to an arm in one model and not in the other (MODEL.md §10).
func TestCheckComparableRefuses(t *testing.T) {
	names := []string{"s1", "s2", "s3"}
	a := fakeRun("a", "h1", config.DistanceGalaxy, []int{0, 1, 0}, names)
	other := fakeRun("b", "h2", config.DistanceGalaxy, []int{0, 1, 0}, []string{"s1", "s2", "s4"})
	band := config.Selection{Declination: []float64{-30, 90}}
	for _, c := range []struct {
		b    *Run
		want []string
	}{
		{fakeRun("b", "h1", config.DistanceGalaxy, []int{0, 1, 0}, names), nil},
		{other, []string{"different catalogs", "only in a/sources.csv: s3", "only in b/sources.csv: s4"}},
		{fakeRun("b", "h1", config.DistanceParallax, []int{0, 1, 0}, names), []string{"different distance modes", `"galaxy" and "parallax"`}},
		{fakeRun("b", "h1", config.DistanceGalaxy, []int{0, 0, 2}, names), []string{"2 source(s)", "s2 (tied to an arm in a, free in b)", "s3 (tied to an arm in b, free in a)"}},
		{fakeRunOf("b", "h1", config.DistanceGalaxy, config.VerticalNone, config.Selection{}, []int{0, 1, 0}, names),
			[]string{"different vertical modes", `vertical = "gaussian" and "none"`}},
		{fakeRunOf("b", "h1", config.DistanceGalaxy, config.VerticalGaussian, band, []int{0, 1, 0}, names),
			[]string{"different survey selections", "no selection; declination = [-30 90]"}},
		{fakeRunOf("b", "h1", config.DistanceGalaxy, config.VerticalGaussian, config.Selection{HalfDistance: 12, Softness: 1.5}, []int{0, 1, 0}, names),
			[]string{"different survey selections", "completeness = { half_distance = 12, softness = 1.5 }"}},
	} {
		err := CheckComparable([][]*Run{{a}, {c.b}})
		if c.want == nil {
			if err != nil {
				t.Errorf("comparable runs refused: %v", err)
			}
			continue
		}
		if err == nil {
			t.Errorf("runs not refused, want %q", c.want)
			continue
		}
		for _, w := range c.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("error %q does not say %q", err, w)
			}
		}
	}
}

// The pointwise CSV reads back to the same numbers with the source names as its header
// (quoted where a name needs it), after its '#' comment lines.
func TestPointwiseCSVRoundTrip(t *testing.T) {
	p := &Pointwise{Label: "run", Sources: []string{"G1", "odd, name"}, Walkers: 4, Rows: 10,
		LogLik: [][]float64{{-1.5, -2.25, -0.1}, {-3, -1e-300, -7.123456789012345}}, Spacing: 2, Tau: 1.5}
	var buf bytes.Buffer
	if err := p.WriteCSV(&buf); err != nil {
		t.Fatal(err)
	}
	r := csv.NewReader(&buf)
	r.Comment = '#'
	rows, err := r.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 4 || !slices.Equal(rows[0], p.Sources) {
		t.Fatalf("read back %q", rows)
	}
	for s, row := range rows[1:] {
		for j, v := range row {
			if got, _ := strconv.ParseFloat(v, 64); got != p.LogLik[j][s] {
				t.Errorf("row %d column %d: %s, wrote %v", s, j, v, p.LogLik[j][s])
			}
		}
	}
}

// The reading in words follows the rule stated beside Reading: a difference below 4 is
// small, above 2 standard errors clear, else not clear.
func TestComparisonReading(t *testing.T) {
	for _, c := range []struct {
		diff, se float64
		want     string
	}{
		{12.3, 4.1, "A is better than B by 12.3 ± 4.1: more than 2 standard errors"},
		{6, 4, "within 2 standard errors"},
		{3, 0.5, "hard to tell apart"},
	} {
		cmp := &Comparison{Models: []*ModelResult{{Label: "A"}, {Label: "B", Diff: mcmc.Estimate{Value: -c.diff, SE: c.se}}}}
		if got := cmp.Reading(1); !strings.Contains(got, c.want) {
			t.Errorf("difference %g ± %g: %q, want it to say %q", c.diff, c.se, got, c.want)
		}
	}
}

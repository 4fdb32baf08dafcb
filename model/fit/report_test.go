package fit

import (
	"context"
	"math"
	"path/filepath"
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/mcmc"
	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
)

// tinyRun fits a 20-source mock for 40 steps and opens the run directory.
func tinyRun(t *testing.T) *Run {
	t.Helper()
	path, _ := setUp(t, 20, "\n[sampler]\nwalkers = 40\nsteps = 40\nburn = 10\nseed = 5\n")
	out := filepath.Join(filepath.Dir(path), "run")
	if _, err := Fit(context.Background(), load(t, path), Options{Out: out, Threads: 2}); err != nil {
		t.Fatal(err)
	}
	r, err := OpenRun(out)
	if err != nil {
		t.Fatal(err)
	}
	return r
}

// shifted returns a copy of c with parameter j moved by delta in every walker and row.
func shifted(t *testing.T, c *mcmc.Chain, j int, delta float64) *mcmc.Chain {
	out := mcmc.NewChain(c.Names, c.Walkers())
	for row := range c.Len() {
		pos := make([][]float64, c.Walkers())
		lp := make([]float64, c.Walkers())
		for k := range pos {
			pos[k] = c.Position(row, k, nil)
			pos[k][j] += delta
			lp[k] = c.LogDensity(row, k)
		}
		if err := out.Append(c.Step(row), pos, lp); err != nil {
			t.Fatal(err)
		}
	}
	return out
}

// TestLayerHeight checks a source's height and its off-plane flag against the closed form
// z = d sin b + z⊙: at b = 2°, d = 5 kpc and z⊙ = 20 pc, z = 0.19450 kpc, beyond three
// scale heights of 50 pc and within three of 70 pc; no height without the layer.
func TestLayerHeight(t *testing.T) {
	src := &model.Source{Sight: model.NewSightline(30, 2)}
	spec := &model.Spec{Galaxy: true, Vertical: true}
	want := 5*math.Sin(2*math.Pi/180) + 0.02
	for _, c := range []struct {
		h   float64
		off bool
	}{{0.05, true}, {0.07, false}} {
		z, off := layerHeight(spec, &model.Params{ScaleHeight: c.h, ZSun: 0.02}, src, 5)
		if math.Abs(z-want) > 1e-15 || off != c.off {
			t.Errorf("H = %g: z = %.17g, off-plane %v; want %.17g, %v", c.h, z, off, want, c.off)
		}
	}
	spec.Vertical = false
	if z, off := layerHeight(spec, &model.Params{ScaleHeight: 0.05}, src, 5); !math.IsNaN(z) || off {
		t.Errorf("in-plane model: z = %g, off-plane %v", z, off)
	}
}

func TestReportMergesRuns(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a short fit")
	}
	r := tinyRun(t)
	draws := r.Draws(50, 0)
	if len(draws) != 50 {
		t.Fatalf("%d draws, want 50", len(draws))
	}
	single, err := NewReport([]*Run{r}, 0)
	if err != nil {
		t.Fatal(err)
	}
	// The same run twice: the pooled sample is every value twice, whose quantiles are
	// those of the single sample (a duplicated sample has the same empirical
	// distribution; common practice, no source).
	twin := *r
	twin.Dir = r.Dir + "-twin"
	double, err := NewReport([]*Run{r, &twin}, 0)
	if err != nil {
		t.Fatal(err)
	}
	for name, q := range single.Parameters {
		if d := double.Parameters[name]; math.Abs(d.Median-q.Median) > 1e-12*math.Max(1, math.Abs(q.Median)) {
			t.Errorf("%s: median %v merged with itself, %v alone", name, d.Median, q.Median)
		}
	}
	if len(double.Runs) != 2 || len(double.Sources) != len(single.Sources) {
		t.Errorf("merged report: %d runs, %d sources", len(double.Runs), len(double.Sources))
	}
	// Two runs stuck in different places: the second's R0 moved by ten posterior
	// spreads. Within each run nothing changes; across them R̂ must exceed 1.01 and be
	// reported.
	j := -1
	for k, n := range r.Chain.Names {
		if n == "R0" {
			j = k
		}
	}
	away := *r
	away.Dir = r.Dir + "-away"
	away.Chain = shifted(t, r.Chain, j, 10*single.Parameters["R0"].SD)
	apart, err := NewReport([]*Run{r, &away}, 0)
	if err != nil {
		t.Fatal(err)
	}
	q := apart.Parameters["R0"]
	if !(q.Rhat > 1.01) {
		t.Errorf("R0: R̂ %.3f across runs ten spreads apart, want above 1.01", q.Rhat)
	}
	if math.Abs(q.RhatWithin-single.Parameters["R0"].RhatWithin) > 1e-12 {
		t.Errorf("R0: R̂ within runs %.4f, %.4f for the run alone", q.RhatWithin, single.Parameters["R0"].RhatWithin)
	}
	if !strings.Contains(strings.Join(apart.Warnings, "\n"), "R0 (") {
		t.Errorf("warnings %q do not name R0", apart.Warnings)
	}
	// A run of another configuration is refused, naming the difference.
	other := *r
	cfg := *r.Job.Config
	cfg.Membership.FieldScale = 3.5
	job := *r.Job
	job.Config = &cfg
	other.Job = &job
	other.Dir = r.Dir + "-other"
	if _, err := NewReport([]*Run{r, &other}, 0); err == nil || !strings.Contains(err.Error(), "3.5") {
		t.Errorf("runs of different configurations: error %v, want one naming the changed setting", err)
	}
	// Report text and tables name every parameter and source.
	text := single.Text()
	for _, want := range []string{"R0", "Omega_sun", "R̂ within", single.Sources[0].Name} {
		if !strings.Contains(text, want) {
			t.Errorf("report text lacks %q", want)
		}
	}
	if lines := strings.Count(string(single.SourcesCSV()), "\n"); lines != len(single.Sources)+1 {
		t.Errorf("sources table: %d lines for %d sources", lines, len(single.Sources))
	}
}

func TestKinematicAgrees(t *testing.T) {
	// A source moving exactly as the truth predicts at 5 kpc: its kinematic distance
	// agrees with a parallax of 0.2 ± 0.01 mas, not with one of 0.4 ± 0.01 mas (5 kpc
	// against 2.5 ± 0.06 kpc; the kinematic distance's own spread, from 3 km/s and
	// σ_vir = 6 km/s, is a few hundred pc at l = 40°). The distance is found by the
	// model's own kinematic-distance search.
	path, m := setUp(t, 10, "")
	cfg := load(t, path)
	cat, err := catalog.ReadFile(cfg.Catalog)
	if err != nil {
		t.Fatal(err)
	}
	job, err := Prepare(cfg, cat)
	if err != nil {
		t.Fatal(err)
	}
	_, truth := truthDraws(t, job, m.Truth, 1)
	src := model.Source{Sight: model.NewSightline(40, 0), Plx: 0.2, PlxErr: 0.01, HasV: true, VLSR: true, VErr: 3}
	src.V = truth.Motion.Predict(&src.Sight, 5).VLSR
	sol, err := truth.Motion.KinematicDistances(&src.Sight, src.V, 30)
	if err != nil || len(sol.Distances) == 0 {
		t.Fatalf("kinematic distances %v, %v", sol.Distances, err)
	}
	near := false
	for _, d := range sol.Distances {
		near = near || kinematicAgrees(truth, &src, d)
	}
	if !near {
		t.Errorf("parallax 0.2 mas: no kinematic distance of %v agrees with 5 kpc", sol.Distances)
	}
	src.Plx = 0.4
	for _, d := range sol.Distances {
		if kinematicAgrees(truth, &src, d) {
			t.Errorf("parallax 0.4 mas (2.5 kpc) agrees with kinematic distance %.2f kpc", d)
		}
	}
}

package main

import (
	"encoding/json"
	"path/filepath"
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/internal/mocktest"
	"github.com/mirabilis-astro/mirabilis/model/batch"
	"github.com/mirabilis-astro/mirabilis/model/fit"
)

// TestReportSideBySide fits one catalog with two models, a linear and a power-law
// rotation curve, which report refuses to merge; with --side-by-side it summarises
// both, each median inside its own 68% interval, each curve's own parameter in its
// column only.
func TestReportSideBySide(t *testing.T) {
	if testing.Short() {
		t.Skip("runs two short fits")
	}
	dir := t.TempDir()
	cfgPath, _ := mocktest.Catalog(t, dir, figTestSurvey, figTestSampler, fit.SpecFromConfig)
	power := variantOf(t, cfgPath, "power.toml", `dTheta_dR = "uniform(-8, 8)"`, `alpha = "uniform(-0.3, 0.3)"`, "\n[rotation]\ncurve = \"power\"\n")
	var runs []string
	for i, path := range []string{cfgPath, power} {
		out := shortFit(t, path, fit.Options{Steps: 20, Threads: 2, Out: filepath.Join(dir, []string{"free", "power"}[i])})
		runs = append(runs, out.Dir)
	}
	if code, _, stderr := runCLI(t, append([]string{"report"}, runs...)...); code == 0 || !strings.Contains(stderr, "different configurations") {
		t.Errorf("report merged runs of different models: exit %d\n%s", code, stderr)
	}
	code, stdout, stderr := runCLI(t, append([]string{"report", "--side-by-side", "--format", "json"}, runs...)...)
	if code != 0 {
		t.Fatalf("report --side-by-side: exit %d\n%s", code, stderr)
	}
	var sbs batch.SideBySide
	if err := json.Unmarshal([]byte(stdout), &sbs); err != nil {
		t.Fatal(err)
	}
	seen := map[string][]*fit.Quantity{}
	for _, r := range sbs.Rows {
		seen[r.Name] = r.Runs
		for k, q := range r.Runs {
			if q != nil && !(q.Lo68 <= q.Median && q.Median <= q.Hi68) {
				t.Errorf("%s in run %d: median %g outside [%g, %g]", r.Name, k, q.Median, q.Lo68, q.Hi68)
			}
		}
	}
	if q := seen["dTheta_dR"]; len(q) != 2 || q[0] == nil || q[1] != nil {
		t.Errorf("dTheta_dR across the runs: %v, want the free curve's only", q)
	}
	if q := seen["alpha"]; len(q) != 2 || q[0] != nil || q[1] == nil {
		t.Errorf("alpha across the runs: %v, want the power curve's only", q)
	}
	if q := seen["R0"]; len(q) != 2 || q[0] == nil || q[1] == nil {
		t.Errorf("R0 across the runs: %v, want both", q)
	}
}

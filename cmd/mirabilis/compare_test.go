package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/internal/mocktest"
	"github.com/mirabilis-astro/mirabilis/model/fit"
)

// TestCompareCommand fits a small mock three times (the test galaxy's fit with two seeds,
// and a variant with a fixed velocity dispersion) and checks what compare does with the
// runs: two runs of one configuration alone are refused; with the variant they are merged
// into one model; --pointwise writes one matrix per model with the sources as columns, and
// refuses to replace them without --force.
func TestCompareCommand(t *testing.T) {
	if testing.Short() {
		t.Skip("runs three short fits")
	}
	dir := t.TempDir()
	cfgPath, _ := mocktest.Catalog(t, dir, figTestSurvey, figTestSampler, fit.SpecFromConfig)
	variant := variantOf(t, cfgPath, "variant.toml", `sigma_vir = "uniform(0.5, 20)"`, `sigma_vir = "fixed(12)"`, "")
	var runs []string
	for i, c := range []struct {
		path string
		seed uint64
	}{{cfgPath, 5}, {cfgPath, 6}, {variant, 5}} {
		out := filepath.Join(dir, []string{"a1", "a2", "b"}[i])
		shortFit(t, c.path, fit.Options{Out: out, Seed: &c.seed, Threads: 2})
		runs = append(runs, out)
	}
	if code, _, errs := runCLI(t, "compare", runs[0], runs[1]); code != 1 || !strings.Contains(errs, "same model") {
		t.Errorf("compare of one model's runs: exit %d, %q", code, errs)
	}
	ll := filepath.Join(dir, "ll.csv")
	code, out, errs := runCLI(t, "compare", runs[0], runs[1], runs[2], "--format", "json", "--pointwise", ll)
	if code != 0 {
		t.Fatalf("compare: exit %d: %s", code, errs)
	}
	var got struct {
		Models []struct {
			Model string   `json:"model"`
			Runs  []string `json:"runs"`
			Draws int      `json:"draws"`
		} `json:"models"`
		Sources []struct {
			Name string    `json:"name"`
			Diff []float64 `json:"elpd_diff"`
		} `json:"sources"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("compare --format json: %v\n%s", err, out)
	}
	if len(got.Models) != 2 || len(got.Sources) != 40 {
		t.Fatalf("%d models and %d sources, want 2 and 40:\n%s", len(got.Models), len(got.Sources), out)
	}
	merged := false
	for _, m := range got.Models {
		if len(m.Runs) == 2 && m.Model == runs[0]+"+"+runs[1] {
			merged = true
		}
		if m.Draws < 2 {
			t.Errorf("model %s: %d draws", m.Model, m.Draws)
		}
	}
	if !merged {
		t.Errorf("the runs of one configuration were not merged into one model: %+v", got.Models)
	}
	if len(got.Sources[0].Diff) != 2 || got.Sources[0].Diff[0] != 0 {
		t.Errorf("source %s: elpd differences %v, want 2 with the best model's 0", got.Sources[0].Name, got.Sources[0].Diff)
	}
	for _, f := range []string{"ll-1.csv", "ll-2.csv"} {
		data, err := os.ReadFile(filepath.Join(dir, f))
		if err != nil {
			t.Fatalf("--pointwise: %v", err)
		}
		var header string
		for _, line := range strings.Split(string(data), "\n") {
			if !strings.HasPrefix(line, "#") {
				header = line
				break
			}
		}
		if !strings.HasPrefix(header, got.Sources[0].Name+",") || strings.Count(header, ",") != 39 {
			t.Errorf("%s: header %.60q…, want the 40 source names", f, header)
		}
	}
	before, _ := os.ReadFile(filepath.Join(dir, "ll-1.csv"))
	code, _, errs = runCLI(t, "compare", runs[0], runs[2], "--pointwise", ll)
	if code != 1 || !strings.Contains(errs, "--force") {
		t.Errorf("compare over existing --pointwise files: exit %d, %q", code, errs)
	}
	if after, _ := os.ReadFile(filepath.Join(dir, "ll-1.csv")); string(after) != string(before) {
		t.Error("a refused compare changed an existing file")
	}
}

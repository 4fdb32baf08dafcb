package main

import (
	"encoding/json"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/internal/mocktest"
	"github.com/mirabilis-astro/mirabilis/model/fit"
)

// TestCommandsOnARun runs a short fit and then what a user does with the run directory:
// assign new sources, report it (alone and merged with itself), and redraw every figure in
// PNG and SVG.
func TestCommandsOnARun(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a short fit")
	}
	dir := t.TempDir()
	cfgPath, _ := mocktest.Catalog(t, dir, figTestSurvey, figTestSampler, fit.SpecFromConfig)
	out := shortFit(t, cfgPath, fit.Options{Steps: 30, Threads: 2})
	runDir := out.Dir

	// assign: one source, as text and as JSON with the documented keys.
	src := "l=30,b=0.1,parallax=0.2,parallax_err=0.02,vlsr=90,vlsr_err=5"
	code, stdout, stderr := runCLI(t, "assign", runDir, "--source", src, "--draws", "60")
	if code != 0 || !strings.Contains(stdout, "most probable") || !strings.Contains(stdout, "1/parallax 5.00 kpc") {
		t.Fatalf("assign: exit %d\n%s\n%s", code, stdout, stderr)
	}
	code, stdout, _ = runCLI(t, "assign", runDir, "--source", src, "--draws", "60", "--format", "json")
	var got []map[string]any
	if err := json.Unmarshal([]byte(stdout), &got); code != 0 || err != nil || len(got) != 1 {
		t.Fatalf("assign --format json: exit %d, %v\n%s", code, err, stdout)
	}
	for _, k := range []string{"name", "membership", "membership_error", "distance", "nearest_arm", "offset_kpc", "offset_widths", "R", "beta"} {
		if _, ok := got[0][k]; !ok {
			t.Errorf("assign JSON lacks %q", k)
		}
	}
	if code, _, stderr = runCLI(t, "assign", runDir, "--source", "l=30,b=0,parallax=x,parallax_err=0.1"); code != 1 || !strings.Contains(stderr, "field parallax") {
		t.Errorf("malformed source: exit %d, %q", code, stderr)
	}

	// report: one run, and the run merged with itself (same medians).
	code, stdout, stderr = runCLI(t, "report", runDir, "--format", "json")
	if code != 0 {
		t.Fatalf("report: exit %d: %s", code, stderr)
	}
	var one, two map[string]any
	if err := json.Unmarshal([]byte(stdout), &one); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"parameters", "derived", "sources", "warnings", "runs"} {
		if _, ok := one[k]; !ok {
			t.Errorf("report JSON lacks %q", k)
		}
	}
	r0 := one["parameters"].(map[string]any)["R0"].(map[string]any)
	for _, k := range []string{"median", "p16", "p84", "p2.5", "p97.5", "mean", "sd", "tau", "ess_bulk", "ess_tail", "rhat"} {
		if _, ok := r0[k]; !ok {
			t.Errorf("report JSON: R0 lacks %q", k)
		}
	}
	_, stdout, _ = runCLI(t, "report", runDir, runDir, "--format", "json")
	if err := json.Unmarshal([]byte(stdout), &two); err != nil {
		t.Fatal(err)
	}
	// A duplicated sample has the same quantiles, to rounding of the interpolation weights
	// (as in package fit's TestReportMergesRuns).
	m1 := r0["median"].(float64)
	if m2 := two["parameters"].(map[string]any)["R0"].(map[string]any)["median"].(float64); math.Abs(m2-m1) > 1e-12*math.Max(1, math.Abs(m1)) {
		t.Errorf("R0 median merged with itself %v, alone %v", m2, m1)
	}
	if code, stdout, _ = runCLI(t, "report", runDir, "--format", "csv"); code != 0 || !strings.HasPrefix(stdout, "name,label,best") {
		t.Errorf("report --format csv: exit %d, %.80q", code, stdout)
	}

	// plot: every kind, PNG and SVG; an existing file is kept without --force.
	newCSV := filepath.Join(dir, "new.csv")
	os.WriteFile(newCSV, []byte("name,l,b,parallax,parallax_err\nA,30,0.1,0.2,0.02\nB,210,0,-0.05,0.04\n"), 0o644)
	for _, kind := range plotKinds {
		for _, ext := range []string{".png", ".svg"} {
			path := filepath.Join(dir, kind+ext)
			args := []string{"plot", runDir, "--kind", kind, "-o", path}
			if kind == "assign" {
				args = append(args, "--sources", newCSV)
			}
			if code, _, stderr := runCLI(t, args...); code != 0 {
				t.Errorf("plot --kind %s -o %s: exit %d: %s", kind, filepath.Base(path), code, stderr)
				continue
			}
			data, err := os.ReadFile(path)
			switch {
			case err != nil:
				t.Error(err)
			case ext == ".png":
				if _, err := png.Decode(strings.NewReader(string(data))); err != nil {
					t.Errorf("%s: %v", path, err)
				}
			case !strings.Contains(string(data), "<svg"):
				t.Errorf("%s is not SVG", path)
			}
		}
	}
	if code, _, stderr = runCLI(t, "plot", runDir, "--kind", "map", "-o", filepath.Join(dir, "map.png")); code != 1 || !strings.Contains(stderr, "--force") {
		t.Errorf("plot over an existing file: exit %d, %q", code, stderr)
	}
}

package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model/param"
)

// TestHelpParamsIsTheTable checks that "help params" lists every row of the parameter
// table with its unit and kind.
func TestHelpParamsIsTheTable(t *testing.T) {
	code, out, _ := runCLI(t, "help", "params")
	if code != 0 {
		t.Fatalf("help params: exit %d", code)
	}
	for _, e := range param.Table() {
		found := false
		for _, line := range strings.Split(out, "\n") {
			f := strings.Fields(line)
			if len(f) >= 2 && f[0] == e.Name && strings.Contains(line, " "+e.Kind.String()+" ") &&
				(e.Unit == "" || f[1] == e.Unit) {
				found = true
			}
		}
		if !found {
			t.Errorf("help params does not list %s (%s, %s)", e.Name, e.Unit, e.Kind)
		}
	}
}

// TestPredictFromSummaryAndNodes checks that predict takes a run's summary (its posterior
// medians) as the parameter set, and a nodes curve's radii from a configuration: with
// linear interpolation between nodes at 8 and 10 kpc holding 220 and 240 km/s, a place at
// R = 9 kpc moves with 230 km/s (worked by hand).
func TestPredictFromSummaryAndNodes(t *testing.T) {
	dir := t.TempDir()
	medians := map[string]float64{"R0": 8, "Usun": 10, "Vsun": 12, "Wsun": 7, "Us": 0, "Vs": 0, "Ws": 0,
		"Theta_1": 200, "Theta_2": 210, "Theta_3": 220, "Theta_4": 240, "Theta_5": 240, "Theta_6": 240, "f_field": 1}
	sum, _ := json.Marshal(map[string]any{"steps": 100, "median_values": medians})
	if err := os.WriteFile(filepath.Join(dir, "summary.json"), sum, 0o644); err != nil {
		t.Fatal(err)
	}
	// Toward l = 180° the radius is R0 + d.
	if err := os.WriteFile(filepath.Join(dir, "at.csv"), []byte("name,l,b,distance\nanti,180,0,1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	cfg := filepath.Join("..", "..", "testdata", "config", "good", "nodes.toml") // node radii 4, 6, …, 14 kpc, linear
	code, out, errs := runCLI(t, "predict", "--params", filepath.Join(dir, "summary.json"), "--at", filepath.Join(dir, "at.csv"),
		"--config", cfg, "--format", "json")
	if code != 0 {
		t.Fatalf("predict: exit %d: %s", code, errs)
	}
	var rows []map[string]any
	if err := json.Unmarshal([]byte(out), &rows); err != nil || len(rows) != 1 {
		t.Fatalf("output %q: %v", out, err)
	}
	if R, theta := rows[0]["R"].(float64), rows[0]["theta"].(float64); math.Abs(R-9) > 1e-9 || math.Abs(theta-230) > 1e-9 {
		t.Errorf("R = %g kpc, theta = %g km/s; want 9 and 230", R, theta)
	}
	code, _, errs = runCLI(t, "predict", "--params", filepath.Join(dir, "summary.json"), "--at", filepath.Join(dir, "at.csv"))
	if code != 1 || !strings.Contains(errs, "--config") {
		t.Errorf("nodes curve without --config: exit %d, %q", code, errs)
	}
}

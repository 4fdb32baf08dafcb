package fit

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model"
)

// TestPilotFile checks that pilot.json uses snake_case keys and names every value by its
// coordinate, as summary.json does, and that it reads back to the same pilot stage.
func TestPilotFile(t *testing.T) {
	names := []string{"R0", "Corvid_pitch", "stick_1"}
	p := &PilotResult{Names: names, MAP: []float64{8.25, 13, -0.4}, MAPLogDensity: -1234.5, MAPConverged: true,
		Spread: []float64{0.2, 1.5, math.NaN()}, Pilots: [][]float64{{8.25, 13, -0.4}, {8.1, 12, -0.3}},
		Stats:    model.LayoutStats{MinNodes: 15, MedianNodes: 45, MaxNodes: 150, TotalNodes: 6000, Unconverged: []string{"s9"}, MaxError: 3e-5},
		Inner:    []string{"s3"},
		Excluded: nil}
	path := filepath.Join(t.TempDir(), PilotFile)
	if err := writePilot(path, p); err != nil {
		t.Fatal(err)
	}
	data, _ := os.ReadFile(path)
	var raw map[string]any
	if err := json.Unmarshal(data, &raw); err != nil {
		t.Fatal(err)
	}
	for k := range raw {
		if k != strings.ToLower(k) {
			t.Errorf("key %q is not snake_case:\n%s", k, data)
		}
	}
	for _, k := range []string{"map_log_density", "map_converged", "coordinates", "pilot_points", "quadrature", "inner_sources", "excluded_sources"} {
		if _, ok := raw[k]; !ok {
			t.Errorf("pilot.json lacks %q:\n%s", k, data)
		}
	}
	c0 := raw["coordinates"].([]any)[0].(map[string]any)
	if c0["name"] != "R0" || c0["map"] != 8.25 || c0["spread"] != 0.2 {
		t.Errorf("first coordinate %v", c0)
	}
	if q := raw["quadrature"].(map[string]any); q["max_nodes"] != 150.0 {
		t.Errorf("quadrature %v", q)
	}
	if pp := raw["pilot_points"].([]any)[1].(map[string]any); pp["Corvid_pitch"] != 12.0 {
		t.Errorf("second pilot point %v", pp)
	}

	back, err := readPilot(path, names)
	if err != nil {
		t.Fatal(err)
	}
	if !math.IsNaN(back.Spread[2]) {
		t.Errorf("a NaN spread read back as %g", back.Spread[2])
	}
	back.Spread[2], p.Spread[2] = 0, 0
	p.Excluded = []string{}
	if !reflect.DeepEqual(back, p) {
		t.Errorf("read back\n%+v\nwant\n%+v", back, p)
	}
	if _, err := readPilot(path, []string{"R0", "Lantern_pitch", "stick_1"}); err == nil || !strings.Contains(err.Error(), "not those of the model") {
		t.Errorf("pilot.json of another model: %v", err)
	}
}

// TestPilotFileEarlierForm checks that a pilot.json in the earlier form, with Go's field
// names, is still read, so that runs made before keep resuming.
func TestPilotFileEarlierForm(t *testing.T) {
	path := filepath.Join(t.TempDir(), PilotFile)
	os.WriteFile(path, []byte(`{"MAP":[8.2,13],"MAPLogDensity":-10,"MAPConverged":true,"Spread":[0.1,null],
		"Pilots":[[8.2,13]],"Stats":{"MinNodes":1,"MedianNodes":2,"MaxNodes":3,"TotalNodes":6,"Unconverged":null,"MaxError":1e-5},
		"Inner":["s1"],"Excluded":null}`), 0o644)
	p, err := readPilot(path, []string{"R0", "Corvid_pitch"})
	if err != nil {
		t.Fatal(err)
	}
	if p.MAP[1] != 13 || p.Stats.MaxNodes != 3 || p.Inner[0] != "s1" || p.Names[0] != "R0" {
		t.Errorf("read %+v", p)
	}
	if _, err := readPilot(path, []string{"R0"}); err == nil {
		t.Error("an earlier pilot.json of another model was read")
	}
}

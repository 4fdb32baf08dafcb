package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model/config"
	"github.com/mirabilis-astro/mirabilis/model/mock"
	"github.com/mirabilis-astro/mirabilis/model/prior"
)

// TestExamplesAreTheDemoGalaxy checks that the values shown as examples in the help are
// the demo galaxy's own invented ones: the parameter file of "help params" holds its true
// values, and the example configuration's R0 prior, pilot start and Omega_sun prior are
// centred on them.
func TestExamplesAreTheDemoGalaxy(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "galaxy.toml")
	os.WriteFile(path, demoGalaxy, 0o644)
	m, err := mock.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	start := strings.Index(paramsHelp, "{")
	end := strings.Index(paramsHelp, "}")
	var example map[string]float64
	if err := json.Unmarshal([]byte(paramsHelp[start:end+1]), &example); err != nil {
		t.Fatal(err)
	}
	for name, v := range example {
		if truth, ok := m.Truth[name]; !ok || truth != v {
			t.Errorf("help params: %s = %g, the demo galaxy's is %g", name, v, truth)
		}
	}

	os.WriteFile(filepath.Join(dir, "sources.csv"), nil, 0o644)
	cfg, err := config.Parse([]byte(config.Example), filepath.Join(dir, "example.toml"), dir)
	if err != nil {
		t.Fatal(err)
	}
	r0, _ := cfg.Param("R0")
	if r0.Quantile(0.5) != m.Truth["R0"] || cfg.Likelihood.PilotStart["R0"] != m.Truth["R0"] {
		t.Errorf("help config: R0 prior %v, pilot start %g; the demo galaxy's R0 is %g", r0, cfg.Likelihood.PilotStart["R0"], m.Truth["R0"])
	}
	omega := (m.Truth["Theta0"] + m.Truth["Vsun"]) / m.Truth["R0"]
	for _, d := range cfg.DerivedPriors {
		if d.Name != "Omega_sun" {
			continue
		}
		// Rounded to 0.05 km/s/kpc in the example.
		if n, ok := d.Prior.(prior.Normal); !ok || math.Abs(n.Mu-omega) > 0.025 {
			t.Errorf("help config: Omega_sun prior %v, the demo galaxy's Omega_sun is %.4f", d.Prior, omega)
		}
	}
}

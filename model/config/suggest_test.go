package config

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestUnknownKeysAndBadValuesAtOnce checks that one reading lists every unknown key and
// every bad value together, each misspelling with the nearest name suggested.
func TestUnknownKeysAndBadValuesAtOnce(t *testing.T) {
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "s.csv"), nil, 0o644); err != nil {
		t.Fatal(err)
	}
	doc := `catalog = "s.csv"
outptu = "x"
[rotation]
curve = "Linear"
[params]
r0 = "uniform(6, 10)"
Theta0 = "uniform(290, 180)"
[likelihood]
tolerence = 1e-3
error_model = "gausian"
pilot_start = { Theta_0 = 3 }
[derived_priors]
Omega_sum = "normal(29, 1)"
[sampler]
walkers = 3
[[arm]]
name = "Corvid"
azimuth_range = [-30, 150]
radius = "uniform(4, 6)"
pitch = "uniform(4, 25)"
widht = "loguniform(0.05, 1)"
`
	_, err := Parse([]byte(doc), "t.toml", dir)
	var list Errors
	if !errors.As(err, &list) {
		t.Fatalf("got %v", err)
	}
	want := []struct {
		line int
		key  string
		msg  string
	}{
		{2, "outptu", "unknown setting (did you mean output?)"},
		{4, "rotation.curve", "(did you mean linear?)"},
		{6, "params.r0", "unknown parameter (did you mean R0?)"},
		{7, "params.Theta0", "must be below"},
		{9, "likelihood.tolerence", "unknown setting (did you mean tolerance?)"},
		{10, "likelihood.error_model", "(did you mean gaussian?)"},
		{11, "likelihood.pilot_start.Theta_0", "(did you mean Theta0?)"},
		{13, "derived_priors.Omega_sum", "(did you mean Omega_sun?)"},
		{15, "sampler.walkers", "3 is odd"},
		{21, "arm[1].widht", "unknown setting (did you mean width?)"},
	}
	if len(list) != len(want) {
		t.Fatalf("%d problems, want %d:\n%v", len(list), len(want), err)
	}
	for i, w := range want {
		e := list[i]
		if e.Line != w.line || e.Key != w.key || !strings.Contains(e.Msg, w.msg) {
			t.Errorf("problem %d: got %d %s %q, want %d %s %q", i, e.Line, e.Key, e.Msg, w.line, w.key, w.msg)
		}
	}
}

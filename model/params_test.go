package model

import (
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

func paramsTestBase() map[string]float64 {
	return map[string]float64{
		"R0": 8.15, "Theta0": 236, "dTheta_dR": -0.2,
		"Usun": 10.6, "Vsun": 10.7, "Wsun": 7.6, "Us": 2.9, "Vs": -1.6, "Ws": 0.1,
	}
}

func TestMotionFromParamsLinear(t *testing.T) {
	vals := paramsTestBase()
	vals["Corvid_pitch"] = 12.1 // an arm parameter: allowed, not used
	vals["f_Lantern"] = 0.2
	vals["sigma_vir"] = 5
	m, used, err := MotionFromParams(vals, CurveSettings{})
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"R0", "Theta0", "dTheta_dR", "Usun", "Vsun", "Wsun", "Us", "Vs", "Ws"}
	if !slices.Equal(used, want) {
		t.Errorf("used %v, want %v", used, want)
	}
	// Values land where package model, Kinematics puts them: V⊙ = (U⊙, Θ0 + V⊙, W⊙).
	if v := m.SunVelocity(); v != [3]float64{10.6, 236 + 10.7, 7.6} {
		t.Errorf("Sun velocity %v", v)
	}
	if m.Sources() != (UVW{2.9, -1.6, 0.1}) || m.R0() != 8.15 || m.Theta0() != 236 {
		t.Errorf("motion %+v", m)
	}
	if got := m.Curve().Slope(9); got != -0.2 {
		t.Errorf("slope %v", got)
	}
	if got, want := m.OmegaSun(), (236+10.7)/8.15; math.Abs(got-want) > 1e-12 {
		t.Errorf("Ω⊙ = %v, want %v", got, want)
	}
}

func TestMotionFromParamsPowerAndNodes(t *testing.T) {
	vals := paramsTestBase()
	delete(vals, "dTheta_dR")
	vals["alpha"] = 0.05
	m, _, err := MotionFromParams(vals, CurveSettings{})
	if err != nil {
		t.Fatal(err)
	}
	if _, ok := m.Curve().(*PowerCurve); !ok {
		t.Errorf("curve %T, want power", m.Curve())
	}

	vals = paramsTestBase()
	delete(vals, "dTheta_dR")
	vals["Theta_1"], vals["Theta_2"], vals["Theta_3"] = 220, 240, 235
	cs := CurveSettings{NodeRadii: []float64{5, 8.15, 12}}
	m, used, err := MotionFromParams(vals, cs)
	if err != nil {
		t.Fatal(err)
	}
	// Θ0 is derived for a nodes curve: Θ(R0) = Θ_2, and the given Theta0 is not used.
	if m.Theta0() != 240 || slices.Contains(used, "Theta0") || !slices.Contains(used, "Theta_3") {
		t.Errorf("Θ0 = %v, used %v", m.Theta0(), used)
	}
	vals["Theta_4"] = 230
	if _, _, err := MotionFromParams(vals, cs); err == nil || !strings.Contains(err.Error(), "Theta_4") {
		t.Errorf("extra node: %v", err)
	}
}

func TestMotionFromParamsErrors(t *testing.T) {
	for _, key := range []string{"R0", "Theta0", "Usun", "Vsun", "Wsun", "Us", "Vs", "Ws"} {
		vals := paramsTestBase()
		delete(vals, key)
		_, _, err := MotionFromParams(vals, CurveSettings{})
		if err == nil || !strings.Contains(err.Error(), key) {
			t.Errorf("missing %s: error %v", key, err)
		}
	}
	cases := []struct {
		name   string
		edit   func(map[string]float64)
		cs     CurveSettings
		within string
	}{
		{"no curve", func(v map[string]float64) { delete(v, "dTheta_dR") }, CurveSettings{}, "rotation-curve"},
		{"two families", func(v map[string]float64) { v["alpha"] = 0.1 }, CurveSettings{}, "several"},
		{"wrong family", func(v map[string]float64) { v["alpha"] = 0.1 }, CurveSettings{Family: CurveLinear}, "alpha"},
		{"unknown", func(v map[string]float64) { v["Rzero"] = 8 }, CurveSettings{}, "Rzero"},
		{"bad family", func(map[string]float64) {}, CurveSettings{Family: "spline"}, "spline"},
		{"nodes without radii", func(v map[string]float64) { v["Theta_1"] = 230 }, CurveSettings{Family: CurveNodes}, "radii"},
		{"R0 in core", func(v map[string]float64) { v["R0"] = 1 }, CurveSettings{}, "core"},
		{"node for linear", func(v map[string]float64) { v["Theta_2"] = 1 }, CurveSettings{Family: CurveLinear}, "Theta_2"},
	}
	for _, c := range cases {
		vals := paramsTestBase()
		c.edit(vals)
		_, _, err := MotionFromParams(vals, c.cs)
		if err == nil || !strings.Contains(err.Error(), c.within) {
			t.Errorf("%s: error %v, want one mentioning %q", c.name, err, c.within)
		}
	}
}

func TestIsModelParameterName(t *testing.T) {
	// Names from the project's parameter conventions.
	for _, n := range []string{"R0", "Theta_12", "sigma_vir", "width_slope", "f_field", "f_Vireo",
		"Halcyon_Rref", "Halcyon_pitch", "Halcyon_pitch2", "Halcyon_kink", "Halcyon_width",
		"Tamarisk_Rsun", "Oort_A", "Theta0_plus_Vsun"} {
		if !IsModelParameterName(n) {
			t.Errorf("%s rejected", n)
		}
	}
	for _, n := range []string{"", "Theta_0", "Theta_01", "_pitch", "f_", "r0", "theta0", "Theta_x"} {
		if IsModelParameterName(n) {
			t.Errorf("%q accepted", n)
		}
	}
}

func TestParamValuesJSON(t *testing.T) {
	dir := t.TempDir()
	good := filepath.Join(dir, "good.json")
	if err := os.WriteFile(good, []byte(`{"R0": 8.15, "Theta0": 236, "dTheta_dR": -2e-1,
		"Usun": 10.6, "Vsun": 10.7, "Wsun": 7.6, "Us": 0, "Vs": 0, "Ws": 0, "Corvid_width": 0.3}`), 0o644); err != nil {
		t.Fatal(err)
	}
	vals, err := ReadParamValues(good)
	if err != nil {
		t.Fatal(err)
	}
	if vals["dTheta_dR"] != -0.2 || len(vals) != 10 {
		t.Errorf("values %v", vals)
	}
	if _, _, err := MotionFromParams(vals, CurveSettings{}); err != nil {
		t.Error(err)
	}
	bad := []struct{ text, within string }{
		{`[1, 2]`, "object"},
		{`{"R0": "8.1"}`, `"R0"`},
		{`{"R0": 8, "R0": 9}`, "twice"},
		{`{"R0": null}`, "null"},
		{`{"R0": 8`, "unterminated"},
		{`{"R0": 8} {}`, "after"},
		{`{"R0": [8]}`, "array"},
	}
	for _, b := range bad {
		_, err := ParseParamValues([]byte(b.text))
		if err == nil || !strings.Contains(err.Error(), b.within) {
			t.Errorf("%s: error %v, want one mentioning %s", b.text, err, b.within)
		}
	}
	if _, err := ReadParamValues(filepath.Join(dir, "missing.json")); err == nil || !strings.Contains(err.Error(), "missing.json") {
		t.Errorf("missing file: %v", err)
	}
}

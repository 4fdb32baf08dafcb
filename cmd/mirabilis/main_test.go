package main

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model"
)

// runCLI runs the command line in-process and returns its exit status and output.
func runCLI(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(context.Background(), args, &out, &errb)
	return code, out.String(), errb.String()
}

func TestHelp(t *testing.T) {
	code, out, _ := runCLI(t, "help")
	if code != 0 {
		t.Fatalf("help: exit %d", code)
	}
	for _, c := range []string{"check", "predict", "fit", "eval", "simulate", "demo", "catalog", "config", "params"} {
		if !strings.Contains(out, c) {
			t.Errorf("help does not mention %q", c)
		}
	}
	for _, topic := range []string{"catalog", "config", "params", "fit", "predict"} {
		code, out, _ := runCLI(t, "help", topic)
		if code != 0 || len(out) < 200 {
			t.Errorf("help %s: exit %d, %d bytes", topic, code, len(out))
		}
	}
	if code, _, errs := runCLI(t, "help", "nonsense"); code != 2 || !strings.Contains(errs, "nonsense") {
		t.Errorf("help nonsense: exit %d, %q", code, errs)
	}
	if code, _, _ := runCLI(t, "frobnicate"); code != 2 {
		t.Errorf("unknown command: exit %d, want 2", code)
	}
	if code, _, errs := runCLI(t, "check"); code != 2 || !strings.Contains(errs, "usage: mirabilis check") {
		t.Errorf("check without arguments: exit %d, %q", code, errs)
	}
}

func TestCheck(t *testing.T) {
	code, out, _ := runCLI(t, "check", "../../testdata/catalog/mixed.csv")
	if code != 0 || !strings.Contains(out, "4 sources") {
		t.Errorf("check of a good catalog: exit %d, output %q", code, out)
	}
	code, _, errs := runCLI(t, "check", "../../testdata/catalog/bad_values.csv")
	if code != 1 {
		t.Errorf("check of a bad catalog: exit %d, want 1", code)
	}
	// Each problem names file, line and column, value and reason.
	if !strings.Contains(errs, `bad_values.csv:4:5 (parallax_err): value "-0.02"`) {
		t.Errorf("check's report lacks the positioned problem:\n%s", errs)
	}
}

// TestPredictTangentPoint runs predict for the analytic tangent-point case (common
// practice, no source): with a flat rotation curve, no source peculiar motion and the Sun
// moving with the standard solar motion relative to the circular speed at R0, the LSR is the
// circular frame at the Sun, and a source at the tangent point d = R0 cos l (R = R0 sin l)
// moves along the line of sight with Θ0, while the LSR's projection on it is Θ0 sin l; so
// v_LSR = Θ0 (1 − sin l).
func TestPredictTangentPoint(t *testing.T) {
	dir := t.TempDir()
	std := model.StandardSolarMotion()
	params := map[string]float64{"R0": 8.2, "Theta0": 230, "dTheta_dR": 0,
		"Usun": std[0], "Vsun": std[1], "Wsun": std[2], "Us": 0, "Vs": 0, "Ws": 0}
	pj, _ := json.Marshal(params)
	os.WriteFile(filepath.Join(dir, "p.json"), pj, 0o644)
	ls := []float64{15, 30, 50, 75}
	var pts strings.Builder
	pts.WriteString("name,l,b,distance\n")
	for _, l := range ls {
		pts.WriteString("tp," + ftoa(l) + ",0," + ftoa(8.2*math.Cos(l*math.Pi/180)) + "\n")
	}
	os.WriteFile(filepath.Join(dir, "pts.csv"), []byte(pts.String()), 0o644)
	code, out, errs := runCLI(t, "predict", "--params", filepath.Join(dir, "p.json"), "--at", filepath.Join(dir, "pts.csv"), "--format", "json")
	if code != 0 {
		t.Fatalf("predict: exit %d: %s", code, errs)
	}
	var rows []map[string]any
	if err := json.Unmarshal([]byte(out), &rows); err != nil {
		t.Fatal(err)
	}
	want := []string{"name", "l", "b", "ra", "dec", "distance", "R", "beta", "theta", "pmra", "pmdec", "pml", "pmb", "vhelio", "vlsr"}
	for i, r := range rows {
		var keys []string
		for k := range r {
			keys = append(keys, k)
		}
		slices.Sort(keys)
		w := append([]string(nil), want...)
		slices.Sort(w)
		if !slices.Equal(keys, w) {
			t.Fatalf("row %d keys %v, want %v", i, keys, w)
		}
		l := ls[i] * math.Pi / 180
		if got, exp := r["vlsr"].(float64), 230*(1-math.Sin(l)); math.Abs(got-exp) > 1e-6 {
			t.Errorf("l = %g°: vlsr = %.6f, want Θ0(1 − sin l) = %.6f", ls[i], got, exp)
		}
	}
	code, out, _ = runCLI(t, "predict", "--params", filepath.Join(dir, "p.json"), "--at", filepath.Join(dir, "pts.csv"))
	if code != 0 || !strings.HasPrefix(out, strings.Join(want, ",")+"\n") {
		t.Errorf("predict csv: exit %d, header %q", code, strings.SplitN(out, "\n", 2)[0])
	}
	os.WriteFile(filepath.Join(dir, "bad.csv"), []byte("l,b,distance\n10,0,abc\n"), 0o644)
	code, _, errs = runCLI(t, "predict", "--params", filepath.Join(dir, "p.json"), "--at", filepath.Join(dir, "bad.csv"))
	if code != 1 || !strings.Contains(errs, "bad.csv:2:3 (distance)") {
		t.Errorf("predict with a bad place: exit %d, %q", code, errs)
	}
}

func ftoa(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// TestSimulateCheckEval draws the demo galaxy's catalog, checks it, and evaluates the fit's
// model at the galaxy's true values: the catalog is valid and every source gets a finite
// log-likelihood and memberships that sum to one.
func TestSimulateCheckEval(t *testing.T) {
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "galaxy.toml"), demoGalaxy, 0o644)
	os.WriteFile(filepath.Join(dir, "demo-fit.toml"), demoFit, 0o644)
	code, _, errs := runCLI(t, "simulate", filepath.Join(dir, "galaxy.toml"), "--seed", "3", "--out", filepath.Join(dir, "sources.csv"))
	if code != 0 {
		t.Fatalf("simulate: exit %d: %s", code, errs)
	}
	if code, out, _ := runCLI(t, "check", filepath.Join(dir, "sources.csv")); code != 0 || !strings.Contains(out, "150 sources") {
		t.Fatalf("check of the mock: exit %d, %s", code, out)
	}
	truth := map[string]float64{"R0": 8.25, "Theta0": 232, "dTheta_dR": -0.6, "Usun": 10.5, "Vsun": 12.5, "Wsun": 7.5,
		"Us": 2, "Vs": -3, "Ws": 0, "sigma_vir": 6, "scale_height": 0.1, "z_sun": 0,
		"Corvid_Rref": 4.9, "Corvid_pitch": 13, "Corvid_width": 0.25, "Lantern_Rref": 6.6, "Lantern_pitch": 11, "Lantern_width": 0.3,
		"Tamarisk_Rref": 9.3, "Tamarisk_pitch": 12, "Tamarisk_width": 0.3, "Halcyon_Rref": 11.7, "Halcyon_pitch": 10, "Halcyon_width": 0.35,
		"f_field": 0.15, "f_Corvid": 0.2125, "f_Lantern": 0.2125, "f_Tamarisk": 0.2125, "f_Halcyon": 0.2125}
	pj, _ := json.Marshal(truth)
	os.WriteFile(filepath.Join(dir, "truth.json"), pj, 0o644)
	code, out, errs := runCLI(t, "eval", filepath.Join(dir, "demo-fit.toml"), "--params", filepath.Join(dir, "truth.json"), "--format", "json")
	if code != 0 {
		t.Fatalf("eval: exit %d: %s", code, errs)
	}
	var res struct {
		LogPrior      float64 `json:"log_prior"`
		LogLikelihood float64 `json:"log_likelihood"`
		Sources       []struct {
			Name          string             `json:"name"`
			LogLikelihood float64            `json:"log_likelihood"`
			Membership    map[string]float64 `json:"membership"`
		} `json:"sources"`
	}
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	if len(res.Sources) != 150 || math.IsInf(res.LogPrior, 0) || math.IsNaN(res.LogLikelihood) {
		t.Fatalf("eval: %d sources, log prior %g, log likelihood %g", len(res.Sources), res.LogPrior, res.LogLikelihood)
	}
	var sum float64
	for _, s := range res.Sources {
		sum += s.LogLikelihood
		var p float64
		for _, v := range s.Membership {
			p += v
		}
		if math.Abs(p-1) > 1e-9 || len(s.Membership) != 5 {
			t.Errorf("%s: memberships %v", s.Name, s.Membership)
		}
	}
	if math.Abs(sum-res.LogLikelihood) > 1e-6*math.Abs(sum) {
		t.Errorf("sources' ln L add up to %g, total says %g", sum, res.LogLikelihood)
	}
	// A configuration with a mistake names the key and its line, and fit leaves no run behind.
	bad := strings.Replace(string(demoFit), `pitch = "uniform(4, 25)"`, `pitch = "uniform(25, 4)"`, 1)
	os.WriteFile(filepath.Join(dir, "bad.toml"), []byte(bad), 0o644)
	code, _, errs = runCLI(t, "fit", filepath.Join(dir, "bad.toml"), "--out", filepath.Join(dir, "badrun"))
	if code != 1 || !strings.Contains(errs, "bad.toml:") || !strings.Contains(errs, "pitch") {
		t.Errorf("fit with a bad configuration: exit %d, %q", code, errs)
	}
	if _, err := os.Stat(filepath.Join(dir, "badrun")); err == nil {
		t.Error("a refused fit left a run directory")
	}
}

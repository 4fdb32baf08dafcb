package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestSimulateNeverOverwrites checks that simulate writes next to the model under a name of
// its own, says where, and replaces nothing without --force: not the catalog the model
// names, not its own earlier output.
func TestSimulateNeverOverwrites(t *testing.T) {
	dir := t.TempDir()
	model := filepath.Join(dir, "galaxy.toml")
	os.WriteFile(model, demoGalaxy, 0o644)
	precious := []byte("name,ra,dec,parallax,parallax_err\nreal,1,2,0.5,0.01\n")
	os.WriteFile(filepath.Join(dir, "sources.csv"), precious, 0o644)

	code, _, errs := runCLI(t, "simulate", model, "--seed", "3")
	if code != 0 {
		t.Fatalf("simulate: exit %d: %s", code, errs)
	}
	if got, _ := os.ReadFile(filepath.Join(dir, "sources.csv")); string(got) != string(precious) {
		t.Fatal("simulate wrote over the catalog the model names")
	}
	cat, truth := filepath.Join(dir, "galaxy-mock.csv"), filepath.Join(dir, "galaxy-mock-truth.csv")
	for _, p := range []string{cat, truth} {
		if _, err := os.Stat(p); err != nil {
			t.Errorf("simulate did not write %s: %v", p, err)
		}
		if !strings.Contains(errs, p) {
			t.Errorf("simulate does not say it wrote %s:\n%s", p, errs)
		}
	}
	if !strings.Contains(errs, `catalog = "galaxy-mock.csv"`) {
		t.Errorf("simulate does not say how to fit the mock:\n%s", errs)
	}

	// A second run refuses, naming the file, and leaves it as it was.
	before, _ := os.ReadFile(cat)
	code, _, errs = runCLI(t, "simulate", model, "--seed", "4")
	if code != 1 || !strings.Contains(errs, cat) || !strings.Contains(errs, "--force") {
		t.Errorf("simulate over its own output: exit %d, %q", code, errs)
	}
	if after, _ := os.ReadFile(cat); string(after) != string(before) {
		t.Error("a refused simulate changed the earlier mock")
	}
	// --out naming an existing file is refused too; --force replaces it.
	code, _, _ = runCLI(t, "simulate", model, "--out", filepath.Join(dir, "sources.csv"))
	if got, _ := os.ReadFile(filepath.Join(dir, "sources.csv")); code != 1 || string(got) != string(precious) {
		t.Errorf("simulate --out onto an existing catalog: exit %d", code)
	}
	if code, _, errs := runCLI(t, "simulate", model, "--seed", "4", "--force"); code != 0 {
		t.Errorf("simulate --force: exit %d: %s", code, errs)
	}
	if after, _ := os.ReadFile(cat); string(after) == string(before) {
		t.Error("simulate --force with another seed left the mock as it was")
	}

	// The catalog on standard output: the truth file still goes somewhere, and is named.
	os.Remove(truth)
	code, out, errs := runCLI(t, "simulate", model, "--out", "-")
	if code != 0 || !strings.HasPrefix(out, "name,") {
		t.Fatalf("simulate --out -: exit %d, %q", code, errs)
	}
	if _, err := os.Stat(truth); err != nil || !strings.Contains(errs, truth) || !strings.Contains(errs, "standard output") {
		t.Errorf("simulate --out - dropped or did not name the truth file (%v):\n%s", err, errs)
	}
}

// TestEvalOutsidePrior evaluates the demo fit's model with R0 outside its prior: JSON gets a
// null log prior and the parameter with its bounds, text mode the reason; an impossible arm
// width is reported by its parameter name.
func TestEvalOutsidePrior(t *testing.T) {
	if testing.Short() {
		t.Skip("evaluates 150 sources")
	}
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "galaxy.toml"), demoGalaxy, 0o644)
	os.WriteFile(filepath.Join(dir, "demo-fit.toml"), demoFit, 0o644)
	if code, _, errs := runCLI(t, "simulate", filepath.Join(dir, "galaxy.toml"), "--out", filepath.Join(dir, "sources.csv")); code != 0 {
		t.Fatalf("simulate: %s", errs)
	}
	values := map[string]float64{"R0": 12, "Theta0": 232, "dTheta_dR": -0.6, "Usun": 10.5, "Vsun": 12.5, "Wsun": 7.5,
		"Us": 2, "Vs": -3, "Ws": 0, "sigma_vir": 6, "scale_height": 0.1, "z_sun": 0,
		"Corvid_Rref": 4.9, "Corvid_pitch": 13, "Corvid_width": 0.25, "Lantern_Rref": 6.6, "Lantern_pitch": 11, "Lantern_width": 0.3,
		"Tamarisk_Rref": 9.3, "Tamarisk_pitch": 12, "Tamarisk_width": 0.3, "Halcyon_Rref": 11.7, "Halcyon_pitch": 10, "Halcyon_width": 0.35,
		"f_field": 0.15, "f_Corvid": 0.2125, "f_Lantern": 0.2125, "f_Tamarisk": 0.2125, "f_Halcyon": 0.2125}
	write := func(name string) string {
		pj, _ := json.Marshal(values)
		p := filepath.Join(dir, name)
		os.WriteFile(p, pj, 0o644)
		return p
	}
	p := write("outside.json")
	cfg := filepath.Join(dir, "demo-fit.toml")
	code, out, errs := runCLI(t, "eval", cfg, "--params", p, "--format", "json")
	if code != 0 {
		t.Fatalf("eval --format json: exit %d: %s", code, errs)
	}
	var res struct {
		LogPrior      *float64 `json:"log_prior"`
		LogLikelihood float64  `json:"log_likelihood"`
		OutsidePrior  []struct {
			Name      string
			Value     float64
			Prior     string
			Low, High *float64
		} `json:"outside_prior"`
	}
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	// demo-fit.toml: R0 = "uniform(6.5, 10)".
	if res.LogPrior != nil || len(res.OutsidePrior) != 1 {
		t.Fatalf("log prior %v, outside %+v", res.LogPrior, res.OutsidePrior)
	}
	o := res.OutsidePrior[0]
	if o.Name != "R0" || o.Value != 12 || o.Prior != "uniform(6.5, 10)" || o.Low == nil || *o.Low != 6.5 || o.High == nil || *o.High != 10 {
		t.Errorf("outside_prior %+v", o)
	}
	if math.IsNaN(res.LogLikelihood) || math.IsInf(res.LogLikelihood, 0) {
		t.Errorf("log likelihood %g", res.LogLikelihood)
	}
	code, out, _ = runCLI(t, "eval", cfg, "--params", p)
	first := strings.SplitN(out, "\n", 2)[0]
	if code != 0 || !strings.Contains(first, "-Inf: R0 = 12 is outside its prior uniform(6.5, 10), which allows 6.5 to 10") {
		t.Errorf("eval text: exit %d, %q", code, first)
	}

	values["R0"] = 8.25
	values["Corvid_width"] = -0.1
	code, _, errs = runCLI(t, "eval", cfg, "--params", write("width.json"))
	if code != 1 || !strings.Contains(errs, "Corvid_width = -0.1 kpc: must be positive") || strings.Contains(errs, "Width") {
		t.Errorf("eval with a negative width: exit %d, %q", code, errs)
	}
}

// TestFlagMistakes checks that a flag's bad value is reported, not dropped, and that a
// misspelt flag or command gets the nearest one suggested.
func TestFlagMistakes(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"fit", "x.toml", "--threads", "four"}, `invalid value "four" for flag --threads`},
		{[]string{"fit", "x.toml", "--steps=1e3"}, `invalid value "1e3" for flag --steps`},
		{[]string{"fit", "x.toml", "--seed", "-1"}, `invalid value "-1" for flag --seed: want a non-negative whole number`},
		{[]string{"fit", "x.toml", "--time", "2 hours"}, `invalid value "2 hours" for flag --time`},
		{[]string{"fit", "x.toml", "--reusme"}, "unknown flag --reusme (did you mean --resume?)"},
		{[]string{"simulate", "m.toml", "--o", "x.csv"}, "unknown flag --o"},
		{[]string{"simulate", "m.toml", "--ouy", "x.csv"}, "did you mean --out?"},
		{[]string{"eval", "c.toml", "--parmas", "p.json"}, "did you mean --params?"},
		{[]string{"demo", "--threads", "-2"}, "--threads and --steps must not be negative"},
		{[]string{"simualte", "m.toml"}, `unknown command "simualte" (did you mean simulate?)`},
	} {
		code, _, errs := runCLI(t, c.args...)
		if code != 2 || !strings.Contains(errs, c.want) {
			t.Errorf("%q: exit %d, want 2 and %q in\n%s", c.args, code, c.want, errs)
		}
	}
}

// TestVersion checks that --version answers with the tool's name and Go release.
func TestVersion(t *testing.T) {
	for _, arg := range []string{"--version", "version", "-version"} {
		code, out, errs := runCLI(t, arg)
		if code != 0 || !strings.HasPrefix(out, "mirabilis ") || !strings.Contains(out, "built with go") {
			t.Errorf("%s: exit %d, %q %q", arg, code, out, errs)
		}
	}
}

// TestCommandOrder checks that help lists the commands in the order of the commands table,
// whatever the order of the source files.
func TestCommandOrder(t *testing.T) {
	_, out, _ := runCLI(t, "help")
	last := -1
	for _, c := range commands {
		i := strings.Index(out, "\t"+c.Name+" ")
		if i < 0 {
			i = strings.Index(out, "  "+c.Name+" ")
		}
		if i <= last {
			t.Errorf("help lists %s out of order:\n%s", c.Name, out)
		}
		last = i
	}
	if commands[0].Name != "fit" {
		t.Errorf("first command %s, want fit", commands[0].Name)
	}
}

// TestSimulateHelp checks that simulate's help spells its flags as fit does.
func TestSimulateHelp(t *testing.T) {
	_, out, _ := runCLI(t, "help", "simulate")
	if strings.Contains(out, "--o ") || strings.Contains(out, "-o ") || !strings.Contains(out, "--out CATALOG.csv") || !strings.Contains(out, "--force") {
		t.Errorf("simulate's help:\n%s", out)
	}
}

// TestCheckConfiguration checks "check CONFIG.toml": the configuration and its catalog are
// checked together, in text and in JSON.
func TestCheckConfiguration(t *testing.T) {
	dir := t.TempDir()
	cfg := filepath.Join(dir, "demo-fit.toml")
	os.WriteFile(cfg, demoFit, 0o644)
	cat := filepath.Join(dir, "sources.csv")
	os.WriteFile(cat, []byte("name,l,b,parallax,parallax_err,arm\n"+
		"s1,30,0,0.2,0.02,lantern\n"+
		"#s2,40,0,0.2,0.02,\n"+
		"s3,50,0,0.2,0.02,\n"), 0o644)

	code, out, errs := runCLI(t, "check", cfg)
	if code != 0 || !strings.Contains(out, "valid configuration") || !strings.Contains(out, "4 arms (Corvid, Lantern, Tamarisk, Halcyon)") ||
		!strings.Contains(out, "2 sources") {
		t.Errorf("check of a good configuration: exit %d\n%s%s", code, out, errs)
	}
	if !strings.Contains(errs, "warning: "+cat+":3: line skipped as a comment") {
		t.Errorf("check does not warn of the commented row:\n%s", errs)
	}

	code, out, _ = runCLI(t, "check", cfg, "--format", "json")
	var rep struct {
		Kind     string
		Valid    bool
		Problems []map[string]any
		Warnings []struct {
			Line    int
			Message string
		}
		Catalog struct {
			Sources int
			Arms    map[string]int
		}
		Configuration struct {
			RotationCurve     string `json:"rotation_curve"`
			SampledDimensions int    `json:"sampled_dimensions"`
			Arms              []string
		}
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	// demo-fit.toml: 11 free global parameters (scale_height among them), 3 for each of 4
	// arms, and 4 of the 5 membership fractions as coordinates (the fifth follows from the
	// sum).
	if code != 0 || rep.Kind != "configuration" || !rep.Valid || len(rep.Problems) != 0 || rep.Catalog.Sources != 2 ||
		rep.Catalog.Arms["lantern"] != 1 || rep.Configuration.RotationCurve != "linear" || rep.Configuration.SampledDimensions != 27 ||
		len(rep.Configuration.Arms) != 4 || len(rep.Warnings) != 1 || rep.Warnings[0].Line != 3 {
		t.Errorf("check --format json: exit %d, %+v", code, rep)
	}

	// A misspelt key and an unknown arm label: both kinds of problem are reported.
	bad := strings.Replace(string(demoFit), "[sampler]\n", "[sampler]\nwalker = 40\n", 1)
	os.WriteFile(cfg, []byte(bad), 0o644)
	code, out, _ = runCLI(t, "check", cfg, "--format", "json")
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	if code != 1 || rep.Valid || len(rep.Problems) != 1 || rep.Problems[0]["key"] != "sampler.walker" ||
		!strings.Contains(rep.Problems[0]["message"].(string), "did you mean walkers?") || rep.Problems[0]["line"] == nil {
		t.Errorf("check --format json of a misspelt key: exit %d, %+v", code, rep)
	}
	os.WriteFile(cfg, demoFit, 0o644)
	os.WriteFile(cat, []byte("name,l,b,parallax,parallax_err,arm\ns1,30,0,0.2,0.02,Lanten\n"), 0o644)
	code, _, errs = runCLI(t, "check", cfg)
	if code != 1 || !strings.Contains(errs, `arm "Lanten" is not an arm of the model (did you mean Lantern?)`) {
		t.Errorf("check of a catalog with a misspelt arm: exit %d, %s", code, errs)
	}

	// A bad catalog in JSON: each problem positioned.
	code, out, _ = runCLI(t, "check", "../../testdata/catalog/bad_values.csv", "--format", "json")
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	found := false
	for _, p := range rep.Problems {
		if p["line"] == 4.0 && p["column"] == 5.0 && p["column_name"] == "parallax_err" && p["value"] == "-0.02" {
			found = true
		}
	}
	if code != 1 || rep.Kind != "catalog" || rep.Valid || !found {
		t.Errorf("check --format json of a bad catalog: exit %d, %+v", code, rep.Problems)
	}
}

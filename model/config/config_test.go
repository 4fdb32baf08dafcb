package config

import (
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/param"
	"github.com/mirabilis-astro/mirabilis/model/prior"
)

var testdata = filepath.Join("..", "..", "testdata", "config")

func load(t *testing.T, name string) *Config {
	t.Helper()
	c, err := Load(filepath.Join(testdata, "good", name))
	if err != nil {
		t.Fatalf("Load(%s): %v", name, err)
	}
	return c
}

func goodFiles(t *testing.T) []string {
	t.Helper()
	files, err := filepath.Glob(filepath.Join(testdata, "good", "*.toml"))
	if err != nil || len(files) < 4 {
		t.Fatalf("good configurations: %v (%d files)", err, len(files))
	}
	return files
}

func abs(t *testing.T, parts ...string) string {
	t.Helper()
	p, err := filepath.Abs(filepath.Join(parts...))
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// TestGoodConfigsLoad loads every good example and checks a few of the values
// written in them.
func TestGoodConfigsLoad(t *testing.T) {
	for _, f := range goodFiles(t) {
		if _, err := Load(f); err != nil {
			t.Errorf("Load(%s): %v", f, err)
		}
	}
	demo := load(t, "demo.toml")
	if demo.Name != "demo" || len(demo.Arms) != 4 || demo.Rotation.Curve != model.CurveLinear {
		t.Fatalf("demo: name %q, %d arms, curve %q", demo.Name, len(demo.Arms), demo.Rotation.Curve)
	}
	corvid := demo.Arms[0]
	if !corvid.Kinked() || corvid.Kink != (prior.Uniform{Min: 20, Max: 60}) || corvid.AzimuthRange != [2]float64{-30, 160} {
		t.Errorf("demo: Corvid = %+v", corvid)
	}
	if p, _ := demo.Param("width_slope"); p != (prior.Fixed{Value: 0}) {
		t.Errorf("demo: width_slope = 0 read as %v, want fixed(0)", p)
	}
	if demo.Arms[3].RefAzimuth != 20 || demo.Arms[3].AzimuthRange[1] != 400 {
		t.Errorf("demo: Halcyon = %+v", demo.Arms[3])
	}
	if len(demo.DerivedPriors) != 1 || demo.DerivedPriors[0] != (Param{Name: param.OmegaSun, Prior: prior.Normal{Mu: 29.65, Sigma: 1}}) {
		t.Errorf("demo: derived priors %v", demo.DerivedPriors)
	}
	s := demo.Sampler
	if s.Walkers != 64 || s.Steps != 4000 || s.Burn != 1000 || s.MaxSteps != 20000 || s.Seed != 1 || s.CheckpointEvery != 200 {
		t.Errorf("demo: sampler %+v", s)
	}

	power := load(t, "power.toml")
	if power.Sampler.Moves != (Moves{Stretch: 0.7, DiffEvolution: 0.3}) || power.Sampler.Seed != 20240611 {
		t.Errorf("power: sampler %+v", power.Sampler)
	}
	if power.Likelihood.Errors != model.ErrorsTolerant || power.Membership.Concentration != 0.5 {
		t.Errorf("power: likelihood %+v, membership %+v", power.Likelihood, power.Membership)
	}
	if p, _ := power.Param("Halcyon_2_pitch"); p != (prior.Fixed{Value: 11.5}) {
		t.Errorf("power: Halcyon_2_pitch = %v", p)
	}

	nodes := load(t, "nodes.toml")
	if nodes.Rotation.Interpolation != model.LinearInterp || len(nodes.Rotation.NodeRadii) != 6 || nodes.Likelihood.StudentDOF != 6 || !nodes.Likelihood.ExcludeInner {
		t.Errorf("nodes: rotation %+v, likelihood %+v", nodes.Rotation, nodes.Likelihood)
	}
	var derived []string
	for _, p := range nodes.DerivedPriors {
		derived = append(derived, p.Name)
	}
	if want := []string{"Omega_sun", "Theta0", "Tamarisk_Rsun"}; !reflect.DeepEqual(derived, want) {
		t.Errorf("nodes: derived priors %v, want %v", derived, want)
	}
}

// TestDemoIsTheHelpExample keeps the example printed by the help identical to
// the file in testdata.
func TestDemoIsTheHelpExample(t *testing.T) {
	data, err := os.ReadFile(filepath.Join(testdata, "good", "demo.toml"))
	if err != nil {
		t.Fatal(err)
	}
	if string(data) != Example {
		t.Error("testdata/config/good/demo.toml differs from Example")
	}
	if !strings.HasSuffix(HelpText, Example) {
		t.Error("HelpText does not end with Example")
	}
}

// TestHelpMentionsEverySetting checks that every key of a resolved
// configuration (the nodes curve and a kinked arm included) is documented.
func TestHelpMentionsEverySetting(t *testing.T) {
	help := HelpText[:len(HelpText)-len(Example)]
	for _, name := range []string{"demo.toml", "nodes.toml"} {
		kl := locateKeys(load(t, name).Resolved())
		for path := range kl.lines {
			last := path[strings.LastIndexAny(path, ".")+1:]
			if i := strings.IndexByte(last, '['); i >= 0 {
				last = last[:i]
			}
			if strings.HasPrefix(path, "params.") || strings.HasPrefix(path, "derived_priors.") ||
				strings.Contains(path, "pilot_") && strings.Count(path, ".") == 2 {
				continue // parameter names, listed by family in the help
			}
			if !strings.Contains(help, last) {
				t.Errorf("HelpText does not mention %s", path)
			}
		}
	}
}

// TestDefaults checks the defaults filled into a minimal file against the
// values stated in package model (Kinematics: R_core, R_inner, σ_bar, s_bar;
// Arms: τ, h, concentration; Likelihood and Quadrature: distance range,
// tolerance, error model, distance prior), the stretch scale of Goodman &
// Weare (2010) and the documented default priors.
func TestDefaults(t *testing.T) {
	c := load(t, "minimal.toml")
	if c.Rotation.Curve != model.CurveLinear || c.Rotation.CoreRadius != 2 || c.Rotation.NodeRadii != nil || c.Rotation.Interpolation != "" {
		t.Errorf("rotation defaults %+v", c.Rotation)
	}
	if c.Membership != (Membership{FieldScale: 3, Concentration: 1, ArmEndSoftening: 3}) {
		t.Errorf("membership defaults %+v", c.Membership)
	}
	l := c.Likelihood
	if l.Errors != model.ErrorsGaussian || l.DistancePrior != DistanceGalaxy || l.DistanceRange != [2]float64{0.05, 30} ||
		l.Tolerance != 1e-4 || l.InnerRadius != 4 || l.ExcludeInner || l.BarDispersion != 40 || l.BarSoftening != 0.5 ||
		l.StudentDOF != 4 || l.PilotStart != nil || l.PilotSpread != nil {
		t.Errorf("likelihood defaults %+v", l)
	}
	if l.Vertical != VerticalGaussian || !c.HasLayer() || c.Selection.Active() {
		t.Errorf("vertical %q, selection %+v: want the Gaussian layer and no selection", l.Vertical, c.Selection)
	}
	// D = 11 free globals (scale_height among them) + Vireo's radius, pitch and
	// width + 1 fraction real = 15; walkers max(2·15 + 2, 32) = 32.
	if c.Dim() != 15 {
		t.Errorf("Dim = %d, want 15", c.Dim())
	}
	s := c.Sampler
	if s != (Sampler{Walkers: 32, Steps: 0, MaxSteps: 20000, Burn: 0, Seed: 1, Threads: 0, CheckpointEvery: 200,
		Moves: Moves{Stretch: 0.2, DiffEvolution: 0.8}, AdaptWeights: false, MinESS: 1000, StretchScale: 2}) {
		t.Errorf("sampler defaults %+v", s)
	}
	want := map[string]string{
		"R0": "uniform(6, 11)", "Theta0": "uniform(150, 320)", "dTheta_dR": "uniform(-10, 10)",
		"Usun": "uniform(-10, 30)", "Vsun": "uniform(-20, 40)", "Wsun": "uniform(-5, 20)",
		"Us": "uniform(-30, 30)", "Vs": "uniform(-30, 30)", "Ws": "uniform(-30, 30)",
		"sigma_vir": "uniform(0, 40)", "width_slope": "fixed(0)", "Vireo_width": "loguniform(0.05, 1.5)",
		"scale_height": "loguniform(0.005, 0.3)", "z_sun": "fixed(0)",
	}
	for name, expr := range want {
		p, ok := c.Param(name)
		if !ok || p != prior.MustParse(expr) {
			t.Errorf("default prior of %s = %v, want %s", name, p, expr)
		}
	}
	if a := load(t, "power.toml"); a.Sampler.Walkers != 42 {
		// D = 12 globals (width_slope and scale_height free) + Lantern 2 +
		// Halcyon_2 4 + 2 fraction reals = 20; walkers 2·20 + 2 = 42.
		t.Errorf("power: default walkers %d, want 42 (Dim %d)", a.Sampler.Walkers, a.Dim())
	}
	if d := load(t, "demo.toml"); d.Sampler.Burn != 1000 {
		t.Errorf("demo: burn %d", d.Sampler.Burn)
	}
	if n := load(t, "nodes.toml"); n.Sampler.Burn != 750 {
		t.Errorf("nodes: default burn with steps = 3000 is %d, want 3000/4 = 750", n.Sampler.Burn)
	}
	for dim, want := range map[int]int{0: 32, 14: 32, 15: 32, 16: 34, 19: 40, 40: 82} {
		if got := DefaultWalkers(dim); got != want {
			t.Errorf("DefaultWalkers(%d) = %d, want %d", dim, got, want)
		}
	}
}

// TestParamNames checks the parameter order: globals for the curve, then per
// arm Rref, pitch, [pitch2, kink], width, with the project's parameter names.
func TestParamNames(t *testing.T) {
	demo := load(t, "demo.toml")
	want := []string{"R0", "Theta0", "dTheta_dR", "Usun", "Vsun", "Wsun", "Us", "Vs", "Ws", "sigma_vir", "width_slope",
		"scale_height", "z_sun", "Corvid_Rref", "Corvid_pitch", "Corvid_pitch2", "Corvid_kink", "Corvid_width",
		"Lantern_Rref", "Lantern_pitch", "Lantern_width",
		"Tamarisk_Rref", "Tamarisk_pitch", "Tamarisk_width",
		"Halcyon_Rref", "Halcyon_pitch", "Halcyon_width"}
	if got := demo.ParamNames(); !reflect.DeepEqual(got, want) {
		t.Errorf("demo ParamNames\n got %v\nwant %v", got, want)
	}
	priors := demo.Priors()
	if len(priors) != len(want) || priors[0] != (prior.Normal{Mu: 8.25, Sigma: 0.4}) || priors[len(priors)-1] != DefaultWidth() {
		t.Errorf("demo Priors %v", priors)
	}
	if got, want := demo.FractionNames(), []string{"f_field", "f_Corvid", "f_Lantern", "f_Tamarisk", "f_Halcyon"}; !reflect.DeepEqual(got, want) {
		t.Errorf("FractionNames %v, want %v", got, want)
	}
	if d := demo.Fractions(); d != (prior.Dirichlet{N: 5, Alpha: 1}) {
		t.Errorf("Fractions %+v", d)
	}
	// 11 free globals + 5 + 3 + 3 + 3 arm parameters + 4 fraction reals.
	if demo.Dim() != 29 {
		t.Errorf("demo Dim = %d, want 29", demo.Dim())
	}

	nodes := load(t, "nodes.toml")
	want = []string{"R0", "Theta_1", "Theta_2", "Theta_3", "Theta_4", "Theta_5", "Theta_6",
		"Usun", "Vsun", "Wsun", "Us", "Vs", "Ws", "sigma_vir", "width_slope", "scale_height", "z_sun",
		"Tamarisk_Rref", "Tamarisk_pitch", "Tamarisk_width"}
	if got := nodes.ParamNames(); !reflect.DeepEqual(got, want) {
		t.Errorf("nodes ParamNames\n got %v\nwant %v", got, want)
	}
	if p, _ := nodes.Param("Theta_3"); p != (prior.Uniform{Min: 100, Max: 350}) {
		t.Errorf("nodes: default Theta_3 prior %v", p)
	}

	power := load(t, "power.toml")
	if got := power.ParamNames()[:3]; !reflect.DeepEqual(got, []string{"R0", "Theta0", "alpha"}) {
		t.Errorf("power ParamNames start %v", got)
	}

	rot := load(t, "rotation_only.toml")
	if rot.SamplesFractions() || rot.Dim() != 10 {
		t.Errorf("rotation_only: SamplesFractions %v, Dim %d (want false, 10 free globals)", rot.SamplesFractions(), rot.Dim())
	}
	if rot.Sampler.Moves != (Moves{Independence: 0.7, DiffEvolution: 0.3}) || rot.Sampler.Walkers != 80 {
		t.Errorf("rotation_only: moves %+v with %d walkers", rot.Sampler.Moves, rot.Sampler.Walkers)
	}
}

// TestStartAndSpreads checks the pilot start (pilot_start, else the prior's
// median) and spreads (pilot_spread, else the prior's standard deviation).
func TestStartAndSpreads(t *testing.T) {
	demo := load(t, "demo.toml")
	start, spread := demo.Start(), demo.Spreads()
	index := map[string]int{}
	for i, n := range demo.ParamNames() {
		index[n] = i
	}
	for name, want := range map[string]float64{
		"R0":           8.25,          // pilot_start
		"Theta0":       235,           // midpoint of uniform(150, 320)
		"Usun":         10,            // median of normal(10, 5)
		"width_slope":  0,             // fixed
		"Lantern_Rref": 8,             // midpoint of uniform(7, 9)
		"Corvid_width": 0.22360679775, // √(0.05·1), median of loguniform(0.05, 1)
	} {
		if got := start[index[name]]; strconv.FormatFloat(got, 'f', 9, 64) != strconv.FormatFloat(want, 'f', 9, 64) {
			t.Errorf("start of %s = %.12g, want %.12g", name, got, want)
		}
	}
	for name, want := range map[string]float64{
		"R0":          0.3,               // pilot_spread
		"Theta0":      8,                 // pilot_spread
		"Vs":          10,                // sigma of normal(-3, 10)
		"sigma_vir":   8.660254037844386, // 30/√12
		"width_slope": 0,                 // fixed
	} {
		if got := spread[index[name]]; strconv.FormatFloat(got, 'g', 12, 64) != strconv.FormatFloat(want, 'g', 12, 64) {
			t.Errorf("spread of %s = %.15g, want %.15g", name, got, want)
		}
	}
}

// TestRelativePaths checks that paths resolve against the file's folder, or
// the folder given to Parse.
func TestRelativePaths(t *testing.T) {
	demo := load(t, "demo.toml")
	if want := abs(t, testdata, "good", "sources.csv"); demo.Catalog != want {
		t.Errorf("catalog %s, want %s", demo.Catalog, want)
	}
	if want := abs(t, testdata, "good", "runs", "demo"); demo.Output != want {
		t.Errorf("output %s, want %s", demo.Output, want)
	}
	if want := abs(t, testdata, "good", "run-minimal"); load(t, "minimal.toml").Output != want {
		t.Errorf("default output %s, want %s", load(t, "minimal.toml").Output, want)
	}
	power := load(t, "power.toml")
	if want := abs(t, testdata, "good", "sources.csv"); power.Catalog != want || power.Output != "/tmp/mirabilis-power-run" {
		t.Errorf("power: catalog %s, output %s", power.Catalog, power.Output)
	}

	dir := t.TempDir()
	if err := os.MkdirAll(filepath.Join(dir, "data"), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "data", "masers.csv"), nil, 0o644); err != nil {
		t.Fatal(err)
	}
	doc := []byte("catalog = \"data/masers.csv\"\noutput = \"../elsewhere\"\n")
	c, err := Parse(doc, "trial.toml", dir)
	if err != nil {
		t.Fatal(err)
	}
	if c.Catalog != filepath.Join(dir, "data", "masers.csv") || c.Output != filepath.Join(filepath.Dir(dir), "elsewhere") || c.BaseDir != dir {
		t.Errorf("Parse with base %s: catalog %s, output %s, base %s", dir, c.Catalog, c.Output, c.BaseDir)
	}
	if _, err := Parse(doc, "trial.toml", t.TempDir()); err == nil {
		t.Error("a catalog missing from the base folder was accepted")
	}
}

// TestResolvedRoundTrip checks that the resolved configuration loads back to
// the same Config, that resolving again gives the same text, and that the hash
// is kept.
func TestResolvedRoundTrip(t *testing.T) {
	for _, f := range goodFiles(t) {
		c1, err := Load(f)
		if err != nil {
			t.Fatal(err)
		}
		text := c1.Resolved()
		c2, err := Parse(text, "resolved.toml", t.TempDir())
		if err != nil {
			t.Fatalf("%s: resolved configuration does not load: %v\n%s", f, err, text)
		}
		c2.Name, c2.File, c2.BaseDir = c1.Name, c1.File, c1.BaseDir
		if !reflect.DeepEqual(c1, c2) {
			t.Errorf("%s: round trip changed the configuration\nbefore %+v\nafter  %+v", f, c1, c2)
		}
		if again := c2.Resolved(); string(again) != string(text) {
			t.Errorf("%s: resolving twice differs:\n%s\n---\n%s", f, text, again)
		}
		if c1.Hash() != c2.Hash() || len(c1.Hash()) != 64 {
			t.Errorf("%s: hash %s, after round trip %s", f, c1.Hash(), c2.Hash())
		}
	}
}

// TestHash checks what the hash depends on.
func TestHash(t *testing.T) {
	base := load(t, "demo.toml")
	h := base.Hash()
	same := load(t, "demo.toml")
	same.Output, same.Sampler.Threads, same.Sampler.CheckpointEvery, same.Name = "/elsewhere", 7, 13, "other"
	if same.Hash() != h {
		t.Error("hash depends on output, threads, checkpoint_every or the name")
	}
	for name, change := range map[string]func(*Config){
		"seed":  func(c *Config) { c.Sampler.Seed = 2 },
		"prior": func(c *Config) { c.Arms[1].Pitch = prior.Uniform{Min: 5, Max: 21} },
		"tol":   func(c *Config) { c.Likelihood.Tolerance = 2e-4 },
		"steps": func(c *Config) { c.Sampler.Steps = 4001 },
		"moves": func(c *Config) { c.Sampler.Moves.Independence = 0.1 },
	} {
		c := load(t, "demo.toml")
		change(c)
		if c.Hash() == h {
			t.Errorf("hash does not change with %s", name)
		}
	}
}

// expectation reads the "# want…" header of a bad example.
func expectation(t *testing.T, file string) (line int, key, msg string) {
	t.Helper()
	data, err := os.ReadFile(file)
	if err != nil {
		t.Fatal(err)
	}
	found := 0
	for _, l := range strings.Split(string(data), "\n") {
		switch {
		case strings.HasPrefix(l, "# want-line:"):
			line, err = strconv.Atoi(strings.TrimSpace(strings.TrimPrefix(l, "# want-line:")))
			if err != nil {
				t.Fatalf("%s: %v", file, err)
			}
			found++
		case strings.HasPrefix(l, "# want-key:"):
			key = strings.TrimSpace(strings.TrimPrefix(l, "# want-key:"))
			found++
		case strings.HasPrefix(l, "# want:"):
			msg = strings.TrimSpace(strings.TrimPrefix(l, "# want:"))
			found++
		}
	}
	if found != 3 {
		t.Fatalf("%s: incomplete want header", file)
	}
	return line, key, msg
}

// TestBadConfigs loads every bad example and checks that the error names the
// key and line stated in the file's header, and says what is wrong.
func TestBadConfigs(t *testing.T) {
	files, err := filepath.Glob(filepath.Join(testdata, "bad", "*.toml"))
	if err != nil || len(files) < 20 {
		t.Fatalf("bad configurations: %v (%d files)", err, len(files))
	}
	for _, f := range files {
		line, key, msg := expectation(t, f)
		_, err := Load(f)
		if err == nil {
			t.Errorf("%s: loaded without error", f)
			continue
		}
		var list Errors
		if !errors.As(err, &list) {
			t.Errorf("%s: error %v is not a list of field errors", f, err)
			continue
		}
		ok := false
		for _, e := range list {
			if e.Line == line && (key == "-" || e.Key == key) && strings.Contains(e.Msg, msg) && e.File == f {
				ok = true
			}
		}
		if !ok {
			t.Errorf("%s: want line %d, key %s, message containing %q; got\n%v", f, line, key, msg, err)
			continue
		}
		prefix := f + ":" + strconv.Itoa(line) + ": " + key + ": "
		if line == 0 {
			prefix = f + ": " + key + ": "
		}
		if key != "-" && !strings.Contains(err.Error(), prefix) {
			t.Errorf("%s: message %q does not start with %q", f, err.Error(), prefix)
		}
	}
}

// TestAllProblemsReported checks that several mistakes are reported together,
// in the order of their lines, each once.
func TestAllProblemsReported(t *testing.T) {
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "s.csv"), nil, 0o644); err != nil {
		t.Fatal(err)
	}
	doc := `catalog = "s.csv"

[params]
R0 = "uniform(11, 6)"
Theta0 = true

[[arm]]
name = "Corvid"
azimuth_range = [10, 10]
radius = "uniform(5, 7)"
pitch = "uniform(5, 20)"
width = "loguniform(0, 1)"

[membership]
field_scale = -3

[sampler]
walkers = 7
`
	_, err := Parse([]byte(doc), "several.toml", dir)
	var list Errors
	if !errors.As(err, &list) {
		t.Fatalf("got %v", err)
	}
	want := []struct {
		line int
		key  string
	}{
		{4, "params.R0"}, {5, "params.Theta0"}, {9, "arm[1].azimuth_range"}, {12, "arm[1].width"},
		{15, "membership.field_scale"}, {18, "sampler.walkers"},
	}
	if len(list) != len(want) {
		t.Fatalf("got %d problems, want %d:\n%v", len(list), len(want), err)
	}
	for i, w := range want {
		if list[i].Line != w.line || list[i].Key != w.key {
			t.Errorf("problem %d: %s:%d, want %s:%d", i, list[i].Key, list[i].Line, w.key, w.line)
		}
	}
	if !strings.Contains(list[1].Msg, "found true or false") {
		t.Errorf("Theta0 = true: %q", list[1].Msg)
	}
}

// TestValidateInCode checks Validate on configurations changed after loading;
// the errors name the key, without a line.
func TestValidateInCode(t *testing.T) {
	for _, c := range []struct {
		key    string
		change func(*Config)
	}{
		{"sampler.walkers", func(c *Config) { c.Sampler.Walkers = 31 }},
		{"sampler.walkers", func(c *Config) { c.Sampler.Walkers = 40 }}, // 28 dimensions need 58
		{"arm[2].name", func(c *Config) { c.Arms[1].Name = "corvid" }},  // differs only in case
		{"arm[3].name", func(c *Config) { c.Arms[2].Name = "Field" }},
		{"arm[1].pitch2", func(c *Config) { c.Arms[0].Pitch2 = nil }},
		{"arm[4].kink", func(c *Config) {
			c.Arms[3].Kink, c.Arms[3].Pitch2 = prior.Uniform{Min: 500, Max: 600}, prior.Uniform{Min: 1, Max: 2}
		}},
		{"params.R0", func(c *Config) { c.Params[0].Prior = prior.Normal{Mu: 8, Sigma: -1} }},
		{"params.R0", func(c *Config) { c.Params[0].Prior = prior.Fixed{Value: -8} }},
		{"params.Theta_zero", func(c *Config) { c.Params[1].Name = "Theta_zero" }},
		{"likelihood.tolerance", func(c *Config) { c.Likelihood.Tolerance = 0 }},
		{"likelihood.student_dof", func(c *Config) { c.Likelihood.StudentDOF = -1 }},
		{"likelihood.distance_prior", func(c *Config) { c.Likelihood.DistancePrior = "flat" }},
		{"likelihood.pilot_start.width_slope", func(c *Config) { c.Likelihood.PilotStart = map[string]float64{"width_slope": 0} }},
		{"likelihood.pilot_spread.f_Corvid", func(c *Config) { c.Likelihood.PilotSpread = map[string]float64{"f_Corvid": 0.1} }},
		{"likelihood.pilot_spread.R0", func(c *Config) { c.Likelihood.PilotSpread = map[string]float64{"R0": 0} }},
		{"rotation.node_radii", func(c *Config) { c.Rotation.NodeRadii = []float64{1, 2} }},
		{"catalog", func(c *Config) { c.Catalog = filepath.Dir(c.Catalog) }},
		{"sampler.moves.walk", func(c *Config) { c.Sampler.Moves.Walk = -1 }},
		{"params.width_slope", func(c *Config) {
			c.Likelihood.DistancePrior = DistanceParallax
			c.Params[10].Prior = prior.Normal{Mu: 0, Sigma: 0.01}
		}},
	} {
		cfg := load(t, "demo.toml")
		if err := cfg.Validate(); err != nil {
			t.Fatalf("demo does not validate: %v", err)
		}
		c.change(cfg)
		err := cfg.Validate()
		var list Errors
		if !errors.As(err, &list) {
			t.Errorf("%s: Validate gave %v", c.key, err)
			continue
		}
		found := false
		for _, e := range list {
			if e.Key == c.key && e.Line == 0 {
				found = true
			}
		}
		if !found {
			t.Errorf("%s: not named in %v", c.key, err)
		}
	}
}

// TestKeyLines checks the line finder on hand-counted documents.
func TestKeyLines(t *testing.T) {
	doc := `top = 1
[a]
x = 2
b.c = 3   # dotted key

[[arm]]
name = "one"
  [arm.extra]
  deep = 4
[[arm]]
name = "two"
inline = { p = 1, q = { r = 2 } }
[[other]]
[[arm]]
"quoted key" = 5
`
	kl := locateKeys([]byte(doc))
	for key, want := range map[string]int{
		"top": 1, "a": 2, "a.x": 3, "a.b.c": 4,
		"arm[1]": 6, "arm[1].name": 7, "arm[1].extra": 8, "arm[1].extra.deep": 9,
		"arm[2]": 10, "arm[2].name": 11, "arm[2].inline.p": 12, "arm[2].inline.q.r": 12,
		"other[1]": 13, "arm[3]": 14, "arm[3].quoted key": 15,
		"arm[2].missing": 10, "a.nothing.here": 2, "nowhere": 0,
	} {
		if got := kl.find(key); got != want {
			t.Errorf("line of %s = %d, want %d", key, got, want)
		}
	}
	// Columns on line 12, counted by hand: inline 1, p 12, q 19, r 25.
	for col, want := range map[int]string{5: "arm[2].inline", 16: "arm[2].inline.p", 20: "arm[2].inline.q", 30: "arm[2].inline.q.r"} {
		if got := kl.at(12, col); got != want {
			t.Errorf("key at line 12, column %d = %q, want %q", col, got, want)
		}
	}
	for line, want := range map[int]int{5: 0, 6: 1, 9: 1, 12: 2, 15: 3} {
		if got := kl.entry("arm", line); got != want {
			t.Errorf("arm entry holding line %d = %d, want %d", line, got, want)
		}
	}
}

// TestParseErrorsWithoutFile checks messages when no file name is given.
func TestParseErrorsWithoutFile(t *testing.T) {
	_, err := Parse([]byte("catalog = 5\n"), "", t.TempDir())
	if err == nil || !strings.HasPrefix(err.Error(), "line 1: catalog: expected a string") {
		t.Errorf("got %v", err)
	}
	if _, err := Load(filepath.Join(t.TempDir(), "absent.toml")); err == nil || !strings.Contains(err.Error(), "reading configuration") {
		t.Errorf("Load of a missing file: %v", err)
	}
}

// TestDecodeErrors checks keys, lines and wording of errors found while
// decoding: unknown keys (also inside inline tables and arms), wrong types.
func TestDecodeErrors(t *testing.T) {
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "s.csv"), nil, 0o644); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		doc  string
		line int
		key  string
		msg  string
	}{
		{"catalog = \"s.csv\"\nseeds = 3\n", 2, "seeds", "unknown setting; known at the top level: catalog, output, rotation"},
		{"catalog = \"s.csv\"\n\n[survey]\nsources = 150\n", 3, "survey", "[survey] describes a mock for \"mirabilis simulate\""},
		{"catalog = \"s.csv\"\n[sampler]\nmoves = { stretch = 1, diferential_evolution = 0.5 }\n", 3, "sampler.moves.diferential_evolution", "did you mean differential_evolution?"},
		// Only the method's published name is known; other spellings get the list.
		{"catalog = \"s.csv\"\n[sampler]\nmoves = { stretch = 1, de_move = 0.5 }\n", 3, "sampler.moves.de_move", "unknown setting; known in [sampler.moves]: stretch, differential_evolution, walk"},
		{"catalog = \"s.csv\"\n[likelihood]\npilot_spread = { R0 = \"wide\" }\n", 3, "likelihood.pilot_spread.R0", "expected a number, found a TOML string"},
		{"catalog = \"s.csv\"\n[likelihood]\ndistance_range = 30\n", 3, "likelihood.distance_range", "expected a list of numbers, found a TOML integer"},
		{"catalog = \"s.csv\"\n[likelihood]\nexclude_inner = \"yes\"\n", 3, "likelihood.exclude_inner", "expected true or false, found a TOML string"},
		{"catalog = \"s.csv\"\n\n[params]\nR0 = [8, 0.4]\n", 4, "params.R0", "expected a prior expression"},
		{"catalog = \"s.csv\"\n[[arm]]\nname = \"A\"\n[[arm]]\nname = \"B\"\nazimuth_range = [0, \"x\"]\n", 6, "arm[2].azimuth_range", "expected a number, found a TOML string"},
		{"catalog = \"s.csv\"\n[sampler]\nsteps = -5\n", 3, "sampler.steps", "-5 is negative"},
		{"catalog = \"s.csv\"\n[sampler]\nseed = -1\n", 3, "sampler.seed", "-1 is negative"},
		{"catalog = \"s.csv\"\n[rotation]\ncurve = \"flat\"\n", 3, "rotation.curve", `"flat" is not one of "linear", "power", "nodes"`},
		{"catalog = \"s.csv\"\n[params]\nf_field = 0.3\n", 3, "params.f_field", "Dirichlet prior"},
		{"catalog = \"s.csv\"\n[rotation]\ncurve = \"nodes\"\nnode_radii = [5, 9]\n[params]\nTheta_3 = 200\n", 6, "params.Theta_3", "2 node radii, so speeds Theta_1 … Theta_2"},
		{"catalog = \"s.csv\"\n[params]\nTheta_1 = 200\n", 3, "params.Theta_1", "Theta_1 belongs to another rotation curve than \"linear\""},
		{"catalog = \"s.csv\"\n[params]\nR0 = \"uniform(6, 11)\"\nsigma_vir = \"normal(5, 10)\"\n", 4, "params.sigma_vir", "puts 0.31 of its probability on values that are not non-negative"},
		{"catalog = \"s.csv\"\n[derived_priors]\nR0 = \"uniform(6, 11)\"\n", 3, "derived_priors.R0", "R0 is a parameter: give its prior under [params]"},
	} {
		_, err := Parse([]byte(c.doc), "t.toml", dir)
		var list Errors
		if !errors.As(err, &list) || len(list) == 0 {
			t.Errorf("%q: got %v", c.doc, err)
			continue
		}
		e := list[0]
		if e.Line != c.line || e.Key != c.key || !strings.Contains(e.Msg, c.msg) {
			t.Errorf("%q:\n got %d %s %q\nwant %d %s %q", c.doc, e.Line, e.Key, e.Msg, c.line, c.key, c.msg)
		}
	}
}

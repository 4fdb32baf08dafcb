package batch

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"github.com/pelletier/go-toml/v2"

	"github.com/mirabilis-astro/mirabilis/model/config"
	"github.com/mirabilis-astro/mirabilis/model/mock"
	"github.com/mirabilis-astro/mirabilis/model/param"
)

// TruthFile is the name of a mock task's true parameter values (JSON, name → value, in
// the units of the parameter table), in the task's folder beside its run directory.
const TruthFile = "truth.json"

// NewMocks plans a calibration set of n mock catalogs of the configuration at path. Mock
// i draws its true parameters from the configuration's priors (the free parameters from
// their priors, the fractions from their Dirichlet prior) with seed base + i, is drawn
// with the survey of the [survey] table in the file at surveyPath (see "mirabilis help
// simulate"), and is fitted with the configuration. Each task's folder holds model.toml
// (the truth and the survey, for simulate), fit.toml (the configuration, reading the
// mock's catalog), truth.json, and, once run, catalog.csv, truth.csv and the run
// directory run/.
//
// The truths follow the parameters' own priors; when the configuration also has priors
// on derived quantities, the fit's prior differs from that, and warning says so.
func NewMocks(path, surveyPath, dir string, n int) (p *Plan, warning string, err error) {
	if n < 1 {
		return nil, "", fmt.Errorf("mocks: want at least 1, got %d", n)
	}
	cfg, p, err := newPlan(Mocks, path, dir)
	if err != nil {
		return nil, "", err
	}
	base, err := os.ReadFile(path)
	if err != nil {
		return nil, "", err
	}
	sdata, err := os.ReadFile(surveyPath)
	if err != nil {
		return nil, "", fmt.Errorf("reading the survey: %w", err)
	}
	var sdoc map[string]any
	if err := toml.Unmarshal(sdata, &sdoc); err != nil {
		return nil, "", fmt.Errorf("%s: %w", surveyPath, err)
	}
	survey, ok := sdoc["survey"].(map[string]any)
	if !ok {
		return nil, "", fmt.Errorf("%s: no [survey] table (see \"mirabilis help simulate\")", surveyPath)
	}
	if len(cfg.DerivedPriors) > 0 {
		warning = "the configuration has priors on derived quantities: the mocks' truths follow the parameters' own priors only, so the rank statistics test the fit against a prior it does not use"
	}
	width := max(3, len(fmt.Sprint(n)))
	for i := range n {
		name := fmt.Sprintf("mock-%0*d", width, i+1)
		folder := filepath.Join(p.Dir, name)
		seed := cfg.Sampler.Seed + uint64(i)
		truth := drawTruth(cfg, seed)
		catalogPath := filepath.Join(folder, "catalog.csv")
		model, err := mockModel(base, cfg, truth, survey, seed)
		if err != nil {
			return nil, "", err
		}
		fitDoc, err := withCatalog(base, catalogPath)
		if err != nil {
			return nil, "", err
		}
		tj, err := json.MarshalIndent(truth, "", "  ")
		if err != nil {
			return nil, "", err
		}
		modelPath, fitPath := filepath.Join(folder, "model.toml"), filepath.Join(folder, "fit.toml")
		p.Tasks = append(p.Tasks, Task{
			Name:    name,
			Config:  fitPath,
			RunDir:  filepath.Join(folder, "run"),
			Seed:    seed,
			Model:   modelPath,
			Catalog: catalogPath,
			Truth:   filepath.Join(folder, "truth.csv"),
			files: map[string][]byte{
				modelPath:                        model,
				fitPath:                          fitDoc,
				filepath.Join(folder, TruthFile): append(tj, '\n'),
			},
		})
	}
	// The mocks' models must be what simulate accepts (the fit configurations differ from
	// the checked one only in the catalog they read).
	for _, t := range p.Tasks {
		if _, err := mock.Parse(t.files[t.Model], t.Model, filepath.Dir(t.Model)); err != nil {
			return nil, "", fmt.Errorf("%s: the mock's model is not valid: %w", t.Name, err)
		}
	}
	return p, warning, nil
}

// drawTruth draws every parameter of cfg from its prior (fixed ones at their value) and
// the membership fractions from their Dirichlet prior, by name.
func drawTruth(cfg *config.Config, seed uint64) map[string]float64 {
	src := rand.NewPCG(seed, 0x6d6f636b) // "mock"
	r := rand.New(src)
	truth := map[string]float64{}
	for i, name := range cfg.ParamNames() {
		pr := cfg.Priors()[i]
		u := r.Float64()
		if pr.IsFixed() {
			u = 0.5
		}
		truth[name] = round10(pr.Quantile(u))
	}
	if cfg.SamplesFractions() {
		f := cfg.Fractions().Rand(src, nil)
		for k, name := range cfg.FractionNames() {
			truth[name] = round10(f[k])
		}
	}
	return truth
}

// round10 rounds x to the ten significant digits the model file writes, so that the
// truth recorded is the truth drawn from.
func round10(x float64) float64 {
	v, _ := strconv.ParseFloat(fmt.Sprintf("%.10g", x), 64)
	return v
}

// mockModel returns the configuration document base with every parameter fixed at its
// true value and the survey table added, with the true fractions.
func mockModel(base []byte, cfg *config.Config, truth map[string]float64, survey map[string]any, seed uint64) ([]byte, error) {
	var doc map[string]any
	if err := toml.Unmarshal(base, &doc); err != nil {
		return nil, err
	}
	doc["catalog"] = cfg.Catalog // named by the configuration; simulate writes elsewhere
	delete(doc, "output")
	delete(doc, "derived_priors")
	params, _ := doc["params"].(map[string]any)
	if params == nil {
		params = map[string]any{}
		doc["params"] = params
	}
	arms, _ := doc["arm"].([]any)
	armTable := map[string]map[string]any{}
	for _, a := range arms {
		if t, ok := a.(map[string]any); ok {
			armTable[fmt.Sprint(t["name"])] = t
		}
	}
	keys := map[string]string{param.SuffixRref: "radius", param.SuffixPitch: "pitch", param.SuffixPitch2: "pitch2", param.SuffixKink: "kink", param.SuffixWidth: "width"}
	fixed := func(v float64) string { return fmt.Sprintf("fixed(%.10g)", v) }
	for _, name := range cfg.ParamNames() {
		placed := false
		for _, a := range cfg.Arms {
			for suffix, key := range keys {
				if name == a.Name+suffix {
					armTable[a.Name][key] = fixed(truth[name])
					placed = true
				}
			}
		}
		if !placed {
			params[name] = fixed(truth[name])
		}
	}
	out, err := toml.Marshal(doc)
	if err != nil {
		return nil, err
	}
	var b bytes.Buffer
	b.WriteString("# A mock's true model and survey, written by mirabilis batch.\n\n")
	b.Write(out)
	// The survey table by hand, its fractions as one inline table (simulate's form).
	b.WriteString("\n[survey]\n")
	names := make([]string, 0, len(survey))
	for k := range survey {
		if k != "seed" && k != "fractions" {
			names = append(names, k)
		}
	}
	sort.Strings(names)
	for _, k := range names {
		line, err := toml.Marshal(map[string]any{k: survey[k]})
		if err != nil {
			return nil, err
		}
		b.Write(line)
	}
	fmt.Fprintf(&b, "seed = %d\n", seed)
	if cfg.SamplesFractions() {
		var parts []string
		for k, name := range cfg.FractionNames() {
			label := "field"
			if k > 0 {
				label = cfg.Arms[k-1].Name
			}
			parts = append(parts, fmt.Sprintf("%s = %.10g", label, truth[name]))
		}
		fmt.Fprintf(&b, "fractions = { %s }\n", strings.Join(parts, ", "))
	}
	return b.Bytes(), nil
}

// withCatalog returns the configuration document base reading the catalog at path.
func withCatalog(base []byte, path string) ([]byte, error) {
	var doc map[string]any
	if err := toml.Unmarshal(base, &doc); err != nil {
		return nil, err
	}
	doc["catalog"] = path
	delete(doc, "output")
	out, err := toml.Marshal(doc)
	if err != nil {
		return nil, err
	}
	return append([]byte("# The fit of a mock catalog, written by mirabilis batch.\n\n"), out...), nil
}

// ReadTruth reads the true parameter values of a mock task from the folder holding its run
// directory.
func ReadTruth(runDir string) (map[string]float64, error) {
	path := filepath.Join(filepath.Dir(filepath.Clean(runDir)), TruthFile)
	data, err := os.ReadFile(path)
	if errors.Is(err, os.ErrNotExist) {
		return nil, fmt.Errorf("%s has no %s beside it: not a run of a calibration set (mirabilis batch --mocks)", runDir, TruthFile)
	}
	if err != nil {
		return nil, err
	}
	var truth map[string]float64
	if err := json.Unmarshal(bytes.TrimSpace(data), &truth); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return truth, nil
}

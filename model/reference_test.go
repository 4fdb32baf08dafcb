package model

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model/catalog"
)

// The per-source likelihood against an independent implementation: testdata/likelihood/
// gen_likelihood_ref.py writes the integrand of package model, Likelihood in numpy and integrates it with
// SciPy's adaptive quad (QUADPACK QAGP) over the whole distance range, cross-checked there by
// a 64 000-node Gauss–Legendre rule to 1e-6 in ln L (SciPy 1.10.1, NumPy 1.24.2, astropy
// 5.2.1; see that folder's README). The mock is ~300 invented sources with parallax
// significance from below 1 to ~100, negative parallaxes and inner-Galaxy sightlines. The
// vertical variants add the sources' Gaussian layer (scale height and z⊙ drawn with the
// other parameters, so that many sightlines cross the mid-plane ahead of the Sun) and, at
// the truth, a completeness in distance.
//
// The claims checked are those stated in package model, section Quadrature: every source within 1e-4 in ln L_i at the
// pilots; at ten parameter sets one posterior spread away, at most 1 in 200
// source-evaluations above 1e-3 and none above 1e-2.

const refDir = "../testdata/likelihood"

type refSetup struct {
	RCore         float64 `json:"R_core"`
	RInner        float64 `json:"R_inner"`
	SigmaBar      float64 `json:"sigma_bar"`
	SBar          float64 `json:"s_bar"`
	SoftDeg       float64 `json:"arm_end_softening_deg"`
	FieldScale    float64 `json:"field_scale_length"`
	DMin          float64 `json:"distance_min"`
	DMax          float64 `json:"distance_max"`
	StudentNu     float64 `json:"student_nu"`
	RotationCurve string  `json:"rotation_curve"`
	Selection     struct {
		HalfDistance float64 `json:"half_distance"`
		Softness     float64 `json:"softness"`
	} `json:"selection"`
	Arms []struct {
		Name   string     `json:"name"`
		Ref    float64    `json:"ref_azimuth_deg"`
		Range  [2]float64 `json:"azimuth_range_deg"`
		Kinked bool       `json:"kinked"`
	} `json:"arms"`
}

func refSpec(t testing.TB, variant string) *Spec {
	data, err := os.ReadFile(filepath.Join(refDir, "setup.json"))
	if err != nil {
		t.Fatalf("reading the reference: %v", err)
	}
	var su refSetup
	if err := json.Unmarshal(data, &su); err != nil {
		t.Fatal(err)
	}
	kind, galaxy := ErrorsGaussian, true
	switch variant {
	case "galaxy_tolerant":
		kind = ErrorsTolerant
	case "galaxy_student4":
		kind = ErrorsStudent
	case "parallax_gaussian":
		galaxy = false
	}
	// The layer's variants (gen_likelihood_ref.py, VERTICAL_* and SELECTION).
	vertical := variant == "vertical_gaussian" || variant == "vertical_selection"
	em, err := NewErrorModel(kind, su.StudentNu)
	if err != nil {
		t.Fatal(err)
	}
	s := &Spec{
		Curve:         CurveSettings{Family: CurveFamily(su.RotationCurve), RCore: su.RCore},
		Bar:           BarScatter{Sigma: su.SigmaBar, Scale: su.SBar, RInner: su.RInner},
		EdgeSoftening: su.SoftDeg * deg,
		DiskScale:     su.FieldScale,
		DMin:          su.DMin, DMax: su.DMax,
		Errors: em, Galaxy: galaxy, Tol: 1e-4,
		Vertical: vertical,
	}
	if variant == "vertical_selection" {
		s.Selection = Selection{HalfDistance: su.Selection.HalfDistance, Softness: su.Selection.Softness}
	}
	for _, a := range su.Arms {
		s.Arms = append(s.Arms, NewArmSpec(a.Name, a.Ref, a.Range[0], a.Range[1], a.Kinked))
	}
	if err := s.Validate(); err != nil {
		t.Fatal(err)
	}
	return s
}

func refParams(t testing.TB, spec *Spec, set string) *Params {
	v, err := ReadParamValues(filepath.Join(refDir, "params_"+set+".json"))
	if err != nil {
		t.Fatal(err)
	}
	p, err := spec.NewParams(v)
	if err != nil {
		t.Fatalf("%s: %v", set, err)
	}
	return p
}

// readReference returns ln L by variant, set and source name.
func readReference(t testing.TB) map[string]map[string]map[string]float64 {
	f, err := os.Open(filepath.Join(refDir, "reference.csv"))
	if err != nil {
		t.Fatalf("reading the reference: %v", err)
	}
	defer f.Close()
	r := csv.NewReader(f)
	r.Comment = '#'
	rows, err := r.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	out := map[string]map[string]map[string]float64{}
	for _, row := range rows[1:] {
		set, variant, name := row[0], row[1], row[2]
		v, err := strconv.ParseFloat(row[3], 64)
		if err != nil {
			t.Fatal(err)
		}
		if out[variant] == nil {
			out[variant] = map[string]map[string]float64{}
		}
		if out[variant][set] == nil {
			out[variant][set] = map[string]float64{}
		}
		out[variant][set][name] = v
	}
	return out
}

func refLikelihood(t testing.TB, variant string, pilotSets []string) (*Likelihood, *Spec, LayoutStats) {
	spec := refSpec(t, variant)
	cat, err := catalog.ReadFile(filepath.Join(refDir, "mock.csv"))
	if err != nil {
		t.Fatal(err)
	}
	src, err := NewSources(cat, spec)
	if err != nil {
		t.Fatal(err)
	}
	L, err := NewLikelihood(spec, src)
	if err != nil {
		t.Fatal(err)
	}
	var pilots []*Params
	for _, s := range pilotSets {
		pilots = append(pilots, refParams(t, spec, s))
	}
	st, err := L.BuildLayouts(pilots, 0)
	if err != nil {
		t.Fatal(err)
	}
	return L, spec, st
}

// TestLikelihoodAgainstReference checks the in-plane likelihood (galaxy_gaussian) and the
// one with the sources' layer (vertical_gaussian, scale height and z⊙ drawn with the other
// parameters) at every pilot and test set.
func TestLikelihoodAgainstReference(t *testing.T) {
	if testing.Short() {
		t.Skip("lays out 300 sources at 11 pilots, twice")
	}
	for _, variant := range []string{"galaxy_gaussian", "vertical_gaussian"} {
		t.Run(variant, func(t *testing.T) { likelihoodAgainstReference(t, variant) })
	}
}

func likelihoodAgainstReference(t *testing.T, variant string) {
	ref := readReference(t)
	var pilotSets, testSets []string
	for set := range ref[variant] {
		switch {
		case len(set) > 6 && set[:6] == "pilot_":
			pilotSets = append(pilotSets, set)
		case len(set) > 5 && set[:5] == "test_":
			testSets = append(testSets, set)
		}
	}
	slices.Sort(pilotSets)
	slices.Sort(testSets)
	if len(pilotSets) == 0 || len(testSets) == 0 {
		t.Fatal("reference has no pilot or test sets")
	}
	L, spec, st := refLikelihood(t, variant, pilotSets)
	t.Logf("%d sources; nodes per source: min %d, median %d, max %d (total %d); %d not converged",
		len(L.Sources), st.MinNodes, st.MedianNodes, st.MaxNodes, st.TotalNodes, len(st.Unconverged))

	check := func(set string, limitAll float64) (over1e3, over1e2, n int, worst, sum float64) {
		p := refParams(t, spec, set)
		want := ref[variant][set]
		for i, s := range L.Sources {
			w, ok := want[s.Name]
			if !ok {
				t.Fatalf("%s: no reference value for %s", set, s.Name)
			}
			d := math.Abs(L.SourceLogL(i, p) - w)
			sum += L.SourceLogL(i, p) - w
			n++
			worst = max(worst, d)
			if d > 1e-3 {
				over1e3++
			}
			if d > 1e-2 {
				over1e2++
			}
			if limitAll > 0 && d > limitAll {
				t.Errorf("%s: source %s: |ln L − reference| = %.2e, want ≤ %g", set, s.Name, d, limitAll)
			}
		}
		return
	}
	var worstPilot float64
	for _, set := range pilotSets {
		_, _, _, w, _ := check(set, 1e-4)
		worstPilot = max(worstPilot, w)
	}
	t.Logf("pilots: largest |Δ ln L| %.2e", worstPilot)
	var over3, over2, total int
	var worstTest, worstSum float64
	for _, set := range testSets {
		a, b, n, w, sum := check(set, 0)
		over3, over2, total = over3+a, over2+b, total+n
		worstTest = max(worstTest, w)
		worstSum = max(worstSum, math.Abs(sum))
		// The whole catalog's ln L, which the sampler sees, within 0.05 even one spread
		// away, where the posterior draws rarely go.
		if math.Abs(sum) > 0.05 {
			t.Errorf("%s: the catalog's ln L is off by %.3g, want at most 0.05", set, sum)
		}
	}
	t.Logf("test sets: %d source-evaluations, %d above 1e-3, %d above 1e-2, largest %.2e; catalog's ln L off by at most %.2e",
		total, over3, over2, worstTest, worstSum)
	if over2 > 0 {
		t.Errorf("%d source-evaluations off by more than 1e-2 at the test sets", over2)
	}
	if 200*over3 > total {
		t.Errorf("%d of %d source-evaluations off by more than 1e-3 at the test sets; at most 1 in 200 allowed", over3, total)
	}
}

// TestErrorModelsAndModesAgainstReference: the tolerant and Student-t error models, the
// parallax mode and the layer with a survey's completeness at the true parameters, each on
// quadratures laid out at that set alone.
func TestErrorModelsAndModesAgainstReference(t *testing.T) {
	ref := readReference(t)
	for _, variant := range []string{"galaxy_tolerant", "galaxy_student4", "parallax_gaussian", "vertical_selection"} {
		want, ok := ref[variant]["truth"]
		if !ok {
			t.Errorf("reference has no %s values at the truth", variant)
			continue
		}
		L, spec, _ := refLikelihood(t, variant, []string{"truth"})
		p := refParams(t, spec, "truth")
		var worst float64
		for i, s := range L.Sources {
			// The reference is the integral of the numerator; with a selection SourceLogL
			// subtracts ln Σ f_m Z_m, which has its own reference (testdata/selnorm).
			d := math.Abs(L.SourceLogL(i, p) + p.LogNorm - want[s.Name])
			worst = max(worst, d)
			if d > 1e-4 {
				t.Errorf("%s: source %s: |ln L − reference| = %.2e, want ≤ 1e-4", variant, s.Name, d)
			}
		}
		t.Logf("%s: largest |Δ ln L| %.2e", variant, worst)
	}
}

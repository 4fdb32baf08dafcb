package mock

import (
	"fmt"
	"math"
	"os"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/fit"
)

// TestScoreAtTruth checks that the mock and the likelihood describe the same catalogs (the
// survey of testdata/mock/selected-survey.toml, 20,000 sources), in
// every parameter at once, through the score test (Rao 1948, Proc. Camb. Phil. Soc. 44, 50):
// at the true parameters θ₀ the score S = Σ_i ∇ ln L_i(θ₀) of n independent sources has mean
// zero and covariance F = n·E[∇ ln L_i ∇ ln L_iᵀ], so that Sᵀ F̂⁻¹ S, with F̂ the sum of the
// per-source outer products, follows χ² with as many degrees of freedom as parameters. A
// mock that draws from another density than the likelihood integrates (another selection,
// layer, arm shape, fraction or velocity law) gives a mean score that grows as n, and the
// statistic grows as n. Each F̂⁻¹S, the one-step estimate of the maximum-likelihood
// estimator's offset from θ₀, is logged beside its standard error.
//
// The same catalog scored by a likelihood that leaves the selection out must fail the test
// far beyond its critical value: the check sees a selection that is not modelled. The test
// passes at the 0.1% level (critical value from gonum's χ² quantile); the seed is fixed.
// Wsun is left out: with the sources' mean Ws it enters only as Ws − Wsun, so the two scores
// are opposite and F̂ singular.
func TestScoreAtTruth(t *testing.T) {
	n := 20000
	if testing.Short() {
		n = 4000
	}
	survey, err := os.ReadFile("../../testdata/mock/selected-survey.toml")
	if err != nil {
		t.Fatal(err)
	}
	m, err := Parse(testGalaxy(t, string(survey)+fmt.Sprintf("sources = %d\nseed = 29\n", n)), "galaxy.toml", t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	spec, err := fit.SpecFromConfig(m.Config)
	if err != nil {
		t.Fatal(err)
	}
	src, _, err := m.Draw(spec, nil)
	if err != nil {
		t.Fatal(err)
	}
	names := []string{"R0", "Theta0", "dTheta_dR", "Usun", "Vsun", "Us", "Vs", "Ws", "sigma_vir", "scale_height",
		"Corvid_Rref", "Corvid_pitch", "Corvid_width", "Tamarisk_Rref", "Tamarisk_pitch", "Tamarisk_width", "f_field"}
	alpha := 0.001
	crit := distuv.ChiSquared{K: float64(len(names))}.Quantile(1 - alpha)

	stat := scoreStatistic(t, spec, src, m.Truth, names, true)
	t.Logf("with the selection: Sᵀ F⁻¹ S = %.1f over %d sources, χ²(%d) critical value %.1f at level %g", stat, n, len(names), crit, alpha)
	if stat > crit {
		t.Errorf("the score at the truth is not centred: Sᵀ F⁻¹ S = %.1f, above the χ²(%d) critical value %.1f at level %g: the mock and the likelihood disagree",
			stat, len(names), crit, alpha)
	}
	none := *spec
	none.Selection = model.Selection{}
	stat = scoreStatistic(t, &none, src, m.Truth, names, false)
	t.Logf("without the selection: Sᵀ F⁻¹ S = %.1f", stat)
	if stat < 10*crit {
		t.Errorf("scored without its selection, the selected catalog gives Sᵀ F⁻¹ S = %.1f, want far above the critical value %.1f: the test does not see a missing selection", stat, crit)
	}
}

// scoreStatistic returns Sᵀ F̂⁻¹ S for the sources under spec at the parameters truth, the
// derivatives taken in the parameters names by central differences. The field's fraction
// moves with the arms' fractions scaled to keep the sum 1.
func scoreStatistic(t *testing.T, spec *model.Spec, cat []catalog.Source, truth map[string]float64, names []string, logShifts bool) float64 {
	t.Helper()
	src, err := model.NewSources(&catalog.Catalog{Sources: cat}, spec)
	if err != nil {
		t.Fatal(err)
	}
	L, err := model.NewLikelihood(spec, src)
	if err != nil {
		t.Fatal(err)
	}
	p0, err := spec.NewParams(truth)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := L.BuildLayouts([]*model.Params{p0}, 2); err != nil {
		t.Fatal(err)
	}
	perSource := func(name string, step float64) []float64 {
		v := maps(truth)
		v[name] += step
		if name == "f_field" {
			for k := range v {
				if k != name && strings.HasPrefix(k, "f_") {
					v[k] = truth[k] * (1 - v[name]) / (1 - truth[name])
				}
			}
		}
		p, err := spec.NewParams(v)
		if err != nil {
			t.Fatal(err)
		}
		out := make([]float64, len(src))
		model.Parallel(len(src), 2, func(i int) { out[i] = L.SourceLogL(i, p) })
		return out
	}
	k := len(names)
	grads := make([][]float64, k)
	S := mat.NewVecDense(k, nil)
	for a, name := range names {
		h := 1e-4 * math.Max(math.Abs(truth[name]), 0.01)
		up, down := perSource(name, h), perSource(name, -h)
		grads[a] = make([]float64, len(src))
		for i := range src {
			grads[a][i] = (up[i] - down[i]) / (2 * h)
			S.SetVec(a, S.AtVec(a)+grads[a][i])
		}
	}
	F := mat.NewSymDense(k, nil)
	for a := range k {
		for b := a; b < k; b++ {
			var v float64
			for i := range src {
				v += grads[a][i] * grads[b][i]
			}
			F.SetSym(a, b, v)
		}
	}
	var chol mat.Cholesky
	if !chol.Factorize(F) {
		t.Fatal("the scores' outer products are not positive definite")
	}
	var shift mat.VecDense
	if err := chol.SolveVecTo(&shift, S); err != nil {
		t.Fatal(err)
	}
	var inv mat.SymDense
	if err := chol.InverseTo(&inv); err != nil {
		t.Fatal(err)
	}
	if logShifts {
		for a, name := range names {
			se := math.Sqrt(inv.At(a, a))
			t.Logf("  %-15s truth %8.4g  one-step offset %10.3g ± %.3g (%+.2f σ)", name, truth[name], shift.AtVec(a), se, shift.AtVec(a)/se)
		}
	}
	return mat.Dot(S, &shift)
}

// maps returns a copy of m.
func maps(m map[string]float64) map[string]float64 {
	out := make(map[string]float64, len(m))
	for k, v := range m {
		out[k] = v
	}
	return out
}

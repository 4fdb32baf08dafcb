package mcmc

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// Equal-weight quantiles against numpy.quantile(method="hazen")
// (testdata/mcmc/quantile_reference.py).
func TestQuantileAgainstNumpy(t *testing.T) {
	data := map[string][]float64{}
	for _, r := range readCSV(t, "../testdata/mcmc/quantile_data.csv") {
		data[r[0]] = append(data[r[0]], parseFloat(t, r[1]))
	}
	for _, r := range readCSV(t, "../testdata/mcmc/quantile_reference.csv") {
		p, want := parseFloat(t, r[1]), parseFloat(t, r[2])
		got := Quantile(p, data[r[0]], nil)
		if math.Abs(got-want) > 1e-12*math.Max(1, math.Abs(want)) {
			t.Errorf("%s: Quantile(%v) = %.17g, numpy %.17g", r[0], p, got, want)
		}
		// Explicit equal weights give the same result.
		w := filled(len(data[r[0]]), 2.5)
		if g := Quantile(p, data[r[0]], w); math.Abs(g-got) > 1e-12*math.Max(1, math.Abs(got)) {
			t.Errorf("%s: weights 2.5 give %v, no weights %v", r[0], g, got)
		}
	}
}

// Weighted quantiles of an importance sample: draws uniform on [−8, 8]
// weighted by the standard normal density must give the normal quantiles
// Φ⁻¹(p). Tolerance: 4 standard errors of a sample quantile,
// √(p(1−p)/n_eff)/φ(q) (asymptotic normality of sample quantiles, e.g.
// Serfling 1980, from memory), with n_eff = (Σw)²/Σw² (Kish 1965, Survey
// Sampling).
func TestWeightedQuantileImportanceSample(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 8))
	n := 200000
	x, w := make([]float64, n), make([]float64, n)
	var sw, sw2 float64
	for i := range x {
		x[i] = -8 + 16*r.Float64()
		w[i] = math.Exp(-x[i] * x[i] / 2)
		sw += w[i]
		sw2 += w[i] * w[i]
	}
	neff := sw * sw / sw2
	ps := []float64{0.02, 0.1, 0.3, 0.5, 0.8, 0.975}
	qs := Quantiles(ps, x, w)
	for i, p := range ps {
		want := distuv.UnitNormal.Quantile(p)
		se := math.Sqrt(p*(1-p)/neff) / distuv.UnitNormal.Prob(want)
		if math.Abs(qs[i]-want) > 4*se {
			t.Errorf("weighted quantile %v = %.4f, want %.4f ± %.4f", p, qs[i], want, se)
		}
	}
}

func TestQuantileInvalid(t *testing.T) {
	for name, c := range map[string]struct {
		p    float64
		x, w []float64
	}{
		"empty":           {0.5, nil, nil},
		"p above 1":       {1.5, []float64{1, 2}, nil},
		"negative weight": {0.5, []float64{1, 2}, []float64{1, -1}},
		"short weights":   {0.5, []float64{1, 2}, []float64{1}},
		"NaN value":       {0.5, []float64{1, math.NaN()}, nil},
		"all weight zero": {0.5, []float64{1, 2}, []float64{0, 0}},
	} {
		if v := Quantile(c.p, c.x, c.w); !math.IsNaN(v) {
			t.Errorf("%s: %v, want NaN", name, v)
		}
	}
}

// FlagStuck on a constructed ensemble: walker 2 accepts far less than the
// others and walker 5 sits 20 log-density units below them.
func TestFlagStuck(t *testing.T) {
	acc := []float64{0.3, 0.35, 0.01, 0.28, 0.33, 0.31}
	lp := make([][]float64, len(acc))
	for k := range lp {
		base := -1.0
		if k == 5 {
			base = -21
		}
		for i := 0; i < 50; i++ {
			lp[k] = append(lp[k], base-0.1*float64(i%7))
		}
	}
	got := FlagStuck(acc, lp, 0.2, 10)
	if len(got) != 2 || got[0].Walker != 2 || !got[0].LowAcceptance || got[0].LowDensity ||
		got[1].Walker != 5 || got[1].LowAcceptance || !got[1].LowDensity || math.Abs(got[1].Gap-20) > 1e-12 {
		t.Errorf("flagged %+v, want walker 2 (acceptance) and walker 5 (gap 20)", got)
	}
	if got := FlagStuck(acc, lp, -1, -1); len(got) != 0 {
		t.Errorf("disabled tests still flag %+v", got)
	}
}

func ExampleQuantile() {
	x := []float64{3, -1, 2.5, 7}
	// Midpoint definition: the sorted values sit at cumulative
	// probabilities 1/8, 3/8, 5/8 and 7/8.
	fmt.Printf("%.4g %.4g\n", Quantile(0.5, x, nil), Quantile(0.16, x, nil))
	// With weights 1, 1, 1, 3 (in the order of x) the sorted values sit at
	// 1/12, 3/12, 5/12 and 9/12.
	fmt.Printf("%.4g\n", Quantile(0.5, x, []float64{1, 1, 1, 3}))
	// Output:
	// 2.75 -0.51
	// 4
}

// Summarize on a chain of independent standard normal draws (known
// distribution): mean within 4 standard errors 1/√N, SD within 4 standard
// errors 1/√(2N) (normal-theory standard errors, common practice, no source), median
// near 0, τ ≈ 1 and R̂ ≈ 1 within the sampling spread of their estimators
// (relative SE of τ √(2(2M+1)/N) with M ≈ 5, Sokal 1997), and the
// derived fields consistent with the plain functions.
func TestSummarizeIndependentDraws(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	const rows, walkers = 2000, 20
	c := NewChain([]string{"z"}, walkers)
	for k := 0; k < rows; k++ {
		row := make([][]float64, walkers)
		lp := make([]float64, walkers)
		for w := range row {
			row[w] = []float64{r.NormFloat64()}
		}
		if err := c.Append(2*(k+1), row, lp); err != nil { // a thinning of 2
			t.Fatal(err)
		}
	}
	s := Summarize(c, 100, []float64{0.5})[0]
	n := float64((rows - 100) * walkers)
	if math.Abs(s.Mean) > 4/math.Sqrt(n) || math.Abs(s.SD-1) > 4/math.Sqrt(2*n) || math.Abs(s.Quantiles[0]) > 0.05 {
		t.Errorf("mean %v, SD %v, median %v", s.Mean, s.SD, s.Quantiles[0])
	}
	tauSE := math.Sqrt(2 * 11 / n)
	if math.Abs(s.Tau/2-1) > 4*tauSE || math.Abs(s.ESS*s.Tau/2-n) > 1e-6*n {
		t.Errorf("τ = %v steps (want ≈ 2 at thinning 2), ESS %v", s.Tau, s.ESS)
	}
	series := c.Series(0, 100)
	if s.Rhat != SplitRhat(series) || s.BulkESS != BulkESS(series) || s.TailESS != TailESS(series) || !(s.Rhat < 1.01) {
		t.Errorf("R̂ %v, bulk ESS %v, tail ESS %v", s.Rhat, s.BulkESS, s.TailESS)
	}
}

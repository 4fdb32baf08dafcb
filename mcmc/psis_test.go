package mcmc

import (
	"bufio"
	"encoding/csv"
	"math"
	"math/rand/v2"
	"os"
	"strings"
	"testing"
)

// The reference files in testdata/loo are written by loo_reference.R with the
// R package loo 2.5.1 (Debian r-cran-loo), by the authors of Vehtari, Gelman
// & Gabry (2017) and Vehtari et al. (2024). The algorithms are deterministic
// and implemented the same way, so the agreement asked for (1e-6 relative on
// sums, 1e-4 absolute on k̂) leaves room only for the order of floating-point
// sums.

// readMatrix reads a pointwise log-likelihood CSV (one row per draw, one
// named column per observation, '#' comment lines at the top) into the
// layout of PSISLOO: one slice of draws per observation.
func readMatrix(t *testing.T, path string) (names []string, ll [][]float64) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r := csv.NewReader(bufio.NewReader(f))
	r.Comment = '#'
	rows, err := r.ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	names = rows[0]
	ll = make([][]float64, len(names))
	for _, row := range rows[1:] {
		for i, v := range row {
			ll[i] = append(ll[i], parseFloat(t, v))
		}
	}
	return names, ll
}

// refTable reads a reference CSV into maps keyed by its first column(s).
func refTable(t *testing.T, path string, keys int) map[string][]string {
	t.Helper()
	out := map[string][]string{}
	for _, r := range readCSV(t, path) {
		out[strings.Join(r[:keys], "/")] = r[keys:]
	}
	return out
}

func closeRel(got, want, tol float64) bool {
	return math.Abs(got-want) <= tol*math.Abs(want)
}

// loo's matrices: a synthetic pair of models of one data set, and the
// pointwise log-likelihoods of two short mirabilis fits of one mock catalog
// (a straight and a kinked arm), written by "mirabilis compare --pointwise".
var looMatrices = []string{"synthetic_a", "synthetic_b", "fit_a", "fit_b"}

// elpd_loo, p_loo, looic, WAIC and their standard errors, and every
// observation's elpd_loo and k̂, against R loo 2.5.1 (loo(x, r_eff = NA),
// waic(x)). Tolerances as asked of the implementation: 1e-6 relative, k̂ 1e-4
// absolute.
func TestPSISLOOAgainstR(t *testing.T) {
	ref := refTable(t, "../testdata/loo/loo_reference.csv", 2)
	pw := refTable(t, "../testdata/loo/loo_pointwise.csv", 2)
	for _, m := range looMatrices {
		names, ll := readMatrix(t, "../testdata/loo/"+m+".csv")
		loo, err := PSISLOO(ll, 1)
		if err != nil {
			t.Fatalf("%s: %v", m, err)
		}
		waic, err := ComputeWAIC(ll)
		if err != nil {
			t.Fatalf("%s: %v", m, err)
		}
		for _, q := range []struct {
			name string
			got  float64
		}{
			{"elpd_loo", loo.ELPD.Value}, {"se_elpd_loo", loo.ELPD.SE},
			{"p_loo", loo.P.Value}, {"se_p_loo", loo.P.SE},
			{"looic", loo.IC.Value}, {"se_looic", loo.IC.SE},
			{"elpd_waic", waic.ELPD.Value}, {"se_elpd_waic", waic.ELPD.SE},
			{"p_waic", waic.P.Value}, {"se_p_waic", waic.P.SE},
			{"waic", waic.IC.Value}, {"se_waic", waic.IC.SE},
		} {
			r, ok := ref[m+"/"+q.name]
			if !ok {
				t.Fatalf("%s: no reference for %s", m, q.name)
			}
			if want := parseFloat(t, r[0]); !closeRel(q.got, want, 1e-6) {
				t.Errorf("%s %s = %.12g, R loo %.12g", m, q.name, q.got, want)
			}
		}
		var high int
		for i, name := range names {
			r, ok := pw[m+"/"+name]
			if !ok {
				t.Fatalf("%s: no pointwise reference for %s", m, name)
			}
			p := loo.Pointwise[i]
			if want := parseFloat(t, r[0]); !closeRel(p.ELPD, want, 1e-6) {
				t.Errorf("%s %s elpd_loo = %.12g, R loo %.12g", m, name, p.ELPD, want)
			}
			if want := parseFloat(t, r[1]); !closeRel(p.P, want, 1e-6) {
				t.Errorf("%s %s p_loo = %.12g, R loo %.12g", m, name, p.P, want)
			}
			if want := parseFloat(t, r[2]); math.Abs(p.K-want) > 1e-4 {
				t.Errorf("%s %s k̂ = %.8g, R loo %.8g", m, name, p.K, want)
			}
			if want := parseFloat(t, r[3]); !closeRel(waic.Pointwise[i], want, 1e-6) {
				t.Errorf("%s %s elpd_waic = %.12g, R loo %.12g", m, name, waic.Pointwise[i], want)
			}
			if p.K > 0.7 {
				high++
			}
		}
		// The synthetic matrix is built to have a few unreliable observations.
		if m == "synthetic_a" && high < 3 {
			t.Errorf("%s: %d observations with k̂ > 0.7, the reference has 4", m, high)
		}
	}
}

// The paired difference of two models' pointwise elpd and its standard
// error, against R loo 2.5.1's loo_compare (which reports the worse model
// minus the better).
func TestPairedDifferenceAgainstR(t *testing.T) {
	rows := readCSV(t, "../testdata/loo/loo_compare.csv")
	if len(rows) != 2 {
		t.Fatalf("%d comparisons in the reference, want 2", len(rows))
	}
	for _, r := range rows {
		_, a := readMatrix(t, "../testdata/loo/"+r[0]+".csv")
		_, b := readMatrix(t, "../testdata/loo/"+r[1]+".csv")
		la, err := PSISLOO(a, 1)
		if err != nil {
			t.Fatal(err)
		}
		lb, err := PSISLOO(b, 1)
		if err != nil {
			t.Fatal(err)
		}
		pa, pb := pointwiseELPD(la), pointwiseELPD(lb)
		d, err := PairedDifference(pa, pb)
		if err != nil {
			t.Fatal(err)
		}
		if d.Value > 0 {
			d.Value = -d.Value
		}
		want, wantSE := parseFloat(t, r[2]), parseFloat(t, r[3])
		if !closeRel(d.Value, want, 1e-6) || !closeRel(d.SE, wantSE, 1e-6) {
			t.Errorf("%s − %s: %.10g ± %.10g, R loo %.10g ± %.10g", r[0], r[1], d.Value, d.SE, want, wantSE)
		}
	}
	if _, err := PairedDifference([]float64{1, 2}, []float64{1}); err == nil {
		t.Error("unpaired values were accepted")
	}
}

func pointwiseELPD(l *LOO) []float64 {
	out := make([]float64, len(l.Pointwise))
	for i, p := range l.Pointwise {
		out[i] = p.ELPD
	}
	return out
}

// The generalised Pareto fit of Zhang & Stephens (2009) with the weakly
// informative prior, against R loo 2.5.1's gpdfit on heavy-tailed samples
// (generalised Pareto with k from −0.2 to 1.2, log-normal, half-Cauchy).
func TestGPDFitAgainstR(t *testing.T) {
	samples := map[string][]float64{}
	for _, r := range readCSV(t, "../testdata/loo/gpd_samples.csv") {
		samples[r[0]] = append(samples[r[0]], parseFloat(t, r[1]))
	}
	refs := readCSV(t, "../testdata/loo/gpd_reference.csv")
	if len(refs) != 6 {
		t.Fatalf("%d reference cases, want 6", len(refs))
	}
	for _, r := range refs {
		x := samples[r[0]]
		if len(x) != int(parseFloat(t, r[1])) {
			t.Fatalf("%s: %d samples, reference says %s", r[0], len(x), r[1])
		}
		k, sigma := GPDFit(x)
		wantK, wantSigma := parseFloat(t, r[2]), parseFloat(t, r[3])
		if math.Abs(k-wantK) > 1e-9 || !closeRel(sigma, wantSigma, 1e-9) {
			t.Errorf("%s: k = %.12g σ = %.12g, R loo k = %.12g σ = %.12g", r[0], k, sigma, wantK, wantSigma)
		}
	}
}

// Smoothed log weights draw by draw, against R loo 2.5.1's psis(r_eff = NA)
// weights (not normalised): a log-normal and a Student-t set of ratios, and a
// set of 20 draws whose tail (4 draws) is too short to smooth (k̂ = Inf).
func TestParetoSmoothAgainstR(t *testing.T) {
	type set struct {
		ratios, weights []float64
		k               float64
	}
	sets := map[string]*set{}
	var order []string
	for _, r := range readCSV(t, "../testdata/loo/psis_weights.csv") {
		s := sets[r[0]]
		if s == nil {
			s = &set{k: parseFloat(t, r[4])}
			sets[r[0]] = s
			order = append(order, r[0])
		}
		s.ratios = append(s.ratios, parseFloat(t, r[2]))
		s.weights = append(s.weights, parseFloat(t, r[3]))
	}
	if len(order) != 3 {
		t.Fatalf("%d reference sets, want 3", len(order))
	}
	for _, name := range order {
		s := sets[name]
		lw, k := ParetoSmooth(s.ratios, math.NaN())
		if !(math.IsInf(s.k, 1) && math.IsInf(k, 1)) && math.Abs(k-s.k) > 1e-9 {
			t.Errorf("%s: k̂ = %.12g, R loo %.12g", name, k, s.k)
		}
		for i := range lw {
			if math.Abs(lw[i]-s.weights[i]) > 1e-9 {
				t.Errorf("%s draw %d: log weight %.12g, R loo %.12g", name, i, lw[i], s.weights[i])
				break
			}
		}
	}
}

// The tail length rule of Vehtari et al. (2024, §3), ⌈min(0.2 S, 3√(S/r_eff))⌉,
// worked by hand: S = 100 → 20; S = 1000 → ⌈94.87⌉ = 95; S = 4000, r_eff = 0.25
// → ⌈379.5⌉ = 380.
func TestParetoTailLength(t *testing.T) {
	for _, c := range []struct {
		s    int
		reff float64
		want int
	}{{100, 1, 20}, {1000, 1, 95}, {4000, 0.25, 380}, {1000, math.NaN(), 95}} {
		if got := ParetoTailLength(c.s, c.reff); got != c.want {
			t.Errorf("ParetoTailLength(%d, %v) = %d, want %d", c.s, c.reff, got, c.want)
		}
	}
	// min(1 − 1/log₁₀ S, 0.7): S = 100 → 0.5, S = 10⁴ → 0.7 (Vehtari et al. 2024, §3.2.4).
	if got := ParetoKThreshold(100); math.Abs(got-0.5) > 1e-15 {
		t.Errorf("ParetoKThreshold(100) = %v, want 0.5", got)
	}
	if got := ParetoKThreshold(10000); got != 0.7 {
		t.Errorf("ParetoKThreshold(10000) = %v, want 0.7", got)
	}
}

// Permuting the draws (the same permutation for every observation) or the
// observations changes the estimates only by the rounding of sums taken in
// another order: relative 1e-12 on the totals, and each observation's values
// follow it.
func TestLOOOrderInvariance(t *testing.T) {
	_, ll := readMatrix(t, "../testdata/loo/synthetic_a.csv")
	base, err := PSISLOO(ll, 1)
	if err != nil {
		t.Fatal(err)
	}
	baseW, err := ComputeWAIC(ll)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	draws := rng.Perm(len(ll[0]))
	obs := rng.Perm(len(ll))
	perm := make([][]float64, len(ll))
	for i, o := range obs {
		perm[i] = make([]float64, len(draws))
		for j, d := range draws {
			perm[i][j] = ll[o][d]
		}
	}
	got, err := PSISLOO(perm, 1)
	if err != nil {
		t.Fatal(err)
	}
	gotW, err := ComputeWAIC(perm)
	if err != nil {
		t.Fatal(err)
	}
	for _, q := range []struct {
		name      string
		got, want Estimate
	}{
		{"elpd_loo", got.ELPD, base.ELPD}, {"p_loo", got.P, base.P},
		{"elpd_waic", gotW.ELPD, baseW.ELPD},
	} {
		if !closeRel(q.got.Value, q.want.Value, 1e-12) || !closeRel(q.got.SE, q.want.SE, 1e-12) {
			t.Errorf("%s after permutation: %.15g ± %.15g, before %.15g ± %.15g",
				q.name, q.got.Value, q.got.SE, q.want.Value, q.want.SE)
		}
	}
	for i, o := range obs {
		g, w := got.Pointwise[i], base.Pointwise[o]
		if !closeRel(g.ELPD, w.ELPD, 1e-12) || math.Abs(g.K-w.K) > 1e-12 {
			t.Errorf("observation %d after permutation: elpd %.15g k̂ %.15g, before %.15g %.15g", o, g.ELPD, g.K, w.ELPD, w.K)
		}
	}
}

// Bad matrices are refused with a message naming the observation and draw.
func TestPSISLOORefusesBadInput(t *testing.T) {
	good := []float64{-1, -2, -3}
	for _, c := range []struct {
		ll   [][]float64
		want string
	}{
		{[][]float64{good}, "1 observations"},
		{[][]float64{good, {-1, -2}}, "observation 1 has 2 draws"},
		{[][]float64{good, {-1, math.NaN(), -2}}, "observation 1 at draw 1 is NaN"},
		{[][]float64{{-1}, {-2}}, "1 draws"},
	} {
		_, err := PSISLOO(c.ll, 1)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("PSISLOO(%v): error %v, want one containing %q", c.ll, err, c.want)
		}
	}
}

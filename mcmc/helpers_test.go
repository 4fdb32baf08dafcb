package mcmc

import (
	"context"
	"math"
	"math/rand/v2"
	"os"
	"testing"
)

// longTests reports whether the long versions of the statistical tests run.
func longTests() bool { return os.Getenv("MIRABILIS_LONG") == "1" }

// gaussian is a zero-mean multivariate normal target with covariance Cov.
type gaussian struct {
	Cov  [][]float64
	prec [][]float64
}

// newRotatedGaussian returns a zero-mean Gaussian in n dimensions whose
// covariance has eigenvalues 10^(k·i/(n−1)), i = 0…n−1 (condition number
// 10^k), rotated by an orthogonal matrix drawn with a fixed seed.
func newRotatedGaussian(n int, k float64, seed uint64) *gaussian {
	r := rand.New(rand.NewPCG(seed, 99))
	// Orthonormal columns by modified Gram–Schmidt of Gaussian vectors.
	q := make([][]float64, n) // q[c] is column c
	for c := range q {
		v := make([]float64, n)
		for i := range v {
			v[i] = r.NormFloat64()
		}
		for _, u := range q[:c] {
			var d float64
			for i := range v {
				d += v[i] * u[i]
			}
			for i := range v {
				v[i] -= d * u[i]
			}
		}
		var norm float64
		for _, x := range v {
			norm += x * x
		}
		norm = math.Sqrt(norm)
		for i := range v {
			v[i] /= norm
		}
		q[c] = v
	}
	lambda := make([]float64, n)
	for i := range lambda {
		if n == 1 {
			lambda[i] = 1
		} else {
			lambda[i] = math.Pow(10, k*float64(i)/float64(n-1))
		}
	}
	g := &gaussian{Cov: square(n), prec: square(n)}
	for a := 0; a < n; a++ {
		for b := 0; b < n; b++ {
			for c := 0; c < n; c++ {
				g.Cov[a][b] += q[c][a] * lambda[c] * q[c][b]
				g.prec[a][b] += q[c][a] / lambda[c] * q[c][b]
			}
		}
	}
	return g
}

func square(n int) [][]float64 {
	m := make([][]float64, n)
	for i := range m {
		m[i] = make([]float64, n)
	}
	return m
}

func (g *gaussian) LogDensity(x []float64) float64 {
	var s float64
	for a, pa := range g.prec {
		var t float64
		for b, v := range pa {
			t += v * x[b]
		}
		s += x[a] * t
	}
	return -s / 2
}

func (g *gaussian) scales() []float64 {
	s := make([]float64, len(g.Cov))
	for i := range s {
		s[i] = math.Sqrt(g.Cov[i][i])
	}
	return s
}

// checkGaussianMoments compares the chain's means and covariances (after the
// first burn kept rows, taking every thin-th row to save work; thinning by
// much less than τ loses almost no information) with a Gaussian's exact
// zero mean and covariance.
// Each estimate must lie within nsig standard errors, the standard error of
// a mean of a series with variance V and integrated autocorrelation time τ
// (estimated from the chain itself, Sokal's window c = 5) over N = W·K draws
// being √(V·τ/N). For a covariance entry the series is
// (x_a − μ_a)(x_b − μ_b), whose variance is Σ_aa·Σ_bb + Σ_ab² by Isserlis'
// theorem (Isserlis 1918, Biometrika 12, 134).
func checkGaussianMoments(t *testing.T, c *Chain, burn, thin int, g *gaussian, nsig float64) {
	t.Helper()
	n := len(g.Cov)
	series := make([][][]float64, n)
	for a := range series {
		series[a] = thinSeries(c.Series(a, burn), thin)
	}
	w, k := len(series[0]), len(series[0][0])
	total := float64(w * k)
	worst := 0.0
	for a := 0; a < n; a++ {
		tau, ok := AutocorrTime(series[a], 0)
		if !ok {
			t.Fatalf("%s: chain of %d rows too short for τ = %.1f", c.Names[a], k, tau)
		}
		var m float64
		for _, s := range series[a] {
			for _, v := range s {
				m += v
			}
		}
		m /= total
		se := math.Sqrt(g.Cov[a][a] * tau / total)
		worst = math.Max(worst, math.Abs(m)/se)
		if math.Abs(m) > nsig*se {
			t.Errorf("mean of %s = %.4g, want 0 ± %.3g (%.1f standard errors off, τ = %.1f)", c.Names[a], m, se, math.Abs(m)/se, tau)
		}
	}
	prod := make([][]float64, w)
	for i := range prod {
		prod[i] = make([]float64, k)
	}
	for a := 0; a < n; a++ {
		for b := 0; b <= a; b++ {
			var m float64
			for i := range prod {
				for s := range prod[i] {
					prod[i][s] = series[a][i][s] * series[b][i][s]
					m += prod[i][s]
				}
			}
			m /= total
			tau, ok := AutocorrTime(prod, 0)
			if !ok {
				t.Fatalf("cov(%s,%s): chain too short for τ = %.1f", c.Names[a], c.Names[b], tau)
			}
			v := g.Cov[a][a]*g.Cov[b][b] + g.Cov[a][b]*g.Cov[a][b]
			se := math.Sqrt(v * tau / total)
			worst = math.Max(worst, math.Abs(m-g.Cov[a][b])/se)
			if math.Abs(m-g.Cov[a][b]) > nsig*se {
				t.Errorf("cov(%s,%s) = %.5g, want %.5g ± %.3g (%.1f standard errors off, τ = %.1f)",
					c.Names[a], c.Names[b], m, g.Cov[a][b], se, math.Abs(m-g.Cov[a][b])/se, tau)
			}
		}
	}
	t.Logf("largest deviation: %.2f standard errors", worst)
}

// mustRun runs the sampler and fails the test on error.
func mustRun(t testing.TB, p Problem, st Start, s *Settings) *Result {
	t.Helper()
	r, err := Run(context.Background(), p, st, s)
	if err != nil {
		t.Fatal(err)
	}
	return r
}

// filled returns a slice of n copies of v.
func filled(n int, v float64) []float64 {
	x := make([]float64, n)
	for i := range x {
		x[i] = v
	}
	return x
}

// thinSeries keeps every f-th value of each series.
func thinSeries(series [][]float64, f int) [][]float64 {
	for k, x := range series {
		m := 0
		for i := 0; i < len(x); i += f {
			x[m] = x[i]
			m++
		}
		series[k] = x[:m]
	}
	return series
}

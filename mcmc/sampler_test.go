package mcmc

import (
	"context"
	"math"
	"math/rand/v2"
	"strings"
	"sync/atomic"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"
)

// Correlated Gaussians with condition number 10^4: the sample means and
// covariances must match the exact ones within 4 standard errors, the
// standard errors coming from the autocorrelation time estimated on the
// chain (see checkGaussianMoments). Reference: the target's own moments,
// exact by construction.
func TestGaussian2D(t *testing.T) {
	g := newRotatedGaussian(2, 4, 1)
	res := mustRun(t, Problem{g.LogDensity, 2}, Start{Center: []float64{0, 0}, Scale: filled(2, 1)},
		&Settings{Seed: 11, Walkers: 32, Steps: 4000})
	t.Logf("τ = %.1f steps, acceptance %.2f", res.Tau, res.MeanAcceptance())
	checkGaussianMoments(t, res.Chain, 1000, 1, g, 4)
}

// In 20 dimensions the run mixes the stretch and differential-evolution
// moves half and half: with the stretch move alone τ reaches several hundred
// steps there (as measured with this package at 80 walkers), which would make
// the test needlessly long.
func TestGaussian20D(t *testing.T) {
	steps := 8000
	if longTests() {
		steps = 40000
	}
	g := newRotatedGaussian(20, 4, 2)
	res := mustRun(t, Problem{g.LogDensity, 20}, Start{Center: make([]float64, 20), Scale: g.scales()},
		&Settings{Seed: 12, Steps: steps, Moves: []WeightedMove{
			{Move: StretchMove{}, Weight: 0.5}, {Move: DifferentialMove{}, Weight: 0.5}}})
	t.Logf("max τ = %.1f steps, acceptance %.2f", maxOf(res.Tau), res.MeanAcceptance())
	checkGaussianMoments(t, res.Chain, steps/4, 8, g, 4)
}

// The independence move mixed with differential evolution leaves the
// correlated 20-dimensional Gaussian of TestGaussian20D invariant, with 160
// walkers so that each half's covariance is well determined: moments within
// 4 standard errors (see checkGaussianMoments). Reference: the target's own
// moments, exact by construction.
func TestIndependenceMoveGaussian20D(t *testing.T) {
	steps := 1500
	if longTests() {
		steps = 6000
	}
	g := newRotatedGaussian(20, 4, 2)
	res := mustRun(t, Problem{g.LogDensity, 20}, Start{Center: make([]float64, 20), Scale: g.scales()},
		&Settings{Seed: 13, Walkers: 160, Steps: steps, Moves: []WeightedMove{
			{Move: IndependenceMove{}, Weight: 0.7}, {Move: DifferentialMove{}, Weight: 0.3}}})
	t.Logf("max τ = %.1f steps, acceptance %.2f", maxOf(res.Tau), res.MeanAcceptance())
	checkGaussianMoments(t, res.Chain, steps/4, 1, g, 4)
}

func maxOf(x []float64) float64 {
	m := math.Inf(-1)
	for _, v := range x {
		m = math.Max(m, v)
	}
	return m
}

// banana is a Rosenbrock-type density,
//
//	log p(x1, x2) = −(x1 − 1)²/2 − (x2 − x1²)²/(2 s²),
//
// curved along the parabola x2 = x1².
const bananaS = 0.4

func bananaLogDensity(x []float64) float64 {
	a := x[0] - 1
	b := x[1] - x[0]*x[0]
	return -a*a/2 - b*b/(2*bananaS*bananaS)
}

// bananaMoment returns E[f(x1, x2)] under the banana density by nested
// 120-point Gauss–Legendre quadrature (gonum integrate/quad): x1 over
// 1 ± 12, x2 over x1² ± 12 s, where the density is below e^−72 outside.
func bananaMoment(f func(x1, x2 float64) float64) float64 {
	inner := func(g func(x1, x2 float64) float64) func(float64) float64 {
		return func(x1 float64) float64 {
			c := x1 * x1
			return quad.Fixed(func(x2 float64) float64 {
				return g(x1, x2) * math.Exp(bananaLogDensity([]float64{x1, x2}))
			}, c-12*bananaS, c+12*bananaS, 120, quad.Legendre{}, 0)
		}
	}
	one := func(x1, x2 float64) float64 { return 1 }
	z := quad.Fixed(inner(one), 1-12, 1+12, 120, quad.Legendre{}, 0)
	return quad.Fixed(inner(f), 1-12, 1+12, 120, quad.Legendre{}, 0) / z
}

// The sampler must reproduce the banana's marginal moments, computed by
// numerical integration, within 4 standard errors (from τ estimated on the
// chain, as for the Gaussians; the variance of each estimated quantity is
// also from the integration).
func TestBanana(t *testing.T) {
	m1 := bananaMoment(func(x1, x2 float64) float64 { return x1 })
	m2 := bananaMoment(func(x1, x2 float64) float64 { return x2 })
	v1 := bananaMoment(func(x1, x2 float64) float64 { return (x1 - m1) * (x1 - m1) })
	v2 := bananaMoment(func(x1, x2 float64) float64 { return (x2 - m2) * (x2 - m2) })
	c12 := bananaMoment(func(x1, x2 float64) float64 { return (x1 - m1) * (x2 - m2) })
	// Cross-check of the quadrature against closed forms: x1 ~ N(1, 1) and
	// x2 | x1 ~ N(x1², s²), so E x2 = E x1² = 2, var x2 = var(x1²) + s² =
	// 6 + s², cov(x1, x2) = E x1³ − E x1 E x1² = 4 − 2 = 2 (from
	// the raw moments of a normal distribution, common practice, no source).
	for _, c := range []struct {
		name      string
		got, want float64
	}{{"E x1", m1, 1}, {"E x2", m2, 2}, {"var x1", v1, 1}, {"var x2", v2, 6 + bananaS*bananaS}, {"cov", c12, 2}} {
		if math.Abs(c.got-c.want) > 1e-9 {
			t.Fatalf("quadrature %s = %.12g, closed form %g", c.name, c.got, c.want)
		}
	}

	steps := 12000
	if longTests() {
		steps = 60000
	}
	res := mustRun(t, Problem{bananaLogDensity, 2}, Start{Center: []float64{1, 1}, Scale: []float64{0.1, 0.1}},
		&Settings{Seed: 5, Walkers: 32, Steps: steps, Names: []string{"x1", "x2"}})
	t.Logf("τ = %.1f steps, acceptance %.2f", res.Tau, res.MeanAcceptance())
	checkBananaMoments(t, res.Chain, steps/5)
}

// checkBananaMoments compares the chain's moments after the first burn kept
// rows with the banana's, by quadrature, within 4 standard errors (from τ
// estimated on the chain and the quadrature's variance of each quantity).
func checkBananaMoments(t *testing.T, c *Chain, burn int) {
	t.Helper()
	m1 := bananaMoment(func(x1, x2 float64) float64 { return x1 })
	m2 := bananaMoment(func(x1, x2 float64) float64 { return x2 })
	v1 := bananaMoment(func(x1, x2 float64) float64 { return (x1 - m1) * (x1 - m1) })
	v2 := bananaMoment(func(x1, x2 float64) float64 { return (x2 - m2) * (x2 - m2) })
	c12 := bananaMoment(func(x1, x2 float64) float64 { return (x1 - m1) * (x2 - m2) })
	s1, s2 := c.Series(0, burn), c.Series(1, burn)
	type quantity struct {
		name     string
		value    func(x1, x2 float64) float64 // the per-draw quantity whose mean is estimated
		want     float64
		variance float64 // of that quantity, by quadrature
	}
	sq := func(f func(x1, x2 float64) float64, m float64) float64 {
		return bananaMoment(func(x1, x2 float64) float64 { d := f(x1, x2) - m; return d * d })
	}
	qs := []quantity{
		{"E x1", func(x1, x2 float64) float64 { return x1 }, m1, v1},
		{"E x2", func(x1, x2 float64) float64 { return x2 }, m2, v2},
		{"var x1", func(x1, x2 float64) float64 { return (x1 - m1) * (x1 - m1) }, v1, 0},
		{"var x2", func(x1, x2 float64) float64 { return (x2 - m2) * (x2 - m2) }, v2, 0},
		{"cov", func(x1, x2 float64) float64 { return (x1 - m1) * (x2 - m2) }, c12, 0},
	}
	for _, q := range qs {
		if q.variance == 0 {
			q.variance = sq(q.value, q.want)
		}
		series := make([][]float64, len(s1))
		var mean float64
		for k := range series {
			series[k] = make([]float64, len(s1[k]))
			for i := range series[k] {
				series[k][i] = q.value(s1[k][i], s2[k][i])
				mean += series[k][i]
			}
		}
		n := float64(len(series) * len(series[0]))
		mean /= n
		tau, ok := AutocorrTime(series, 0)
		if !ok {
			t.Fatalf("%s: chain too short for τ = %.1f", q.name, tau)
		}
		se := math.Sqrt(q.variance * tau / n)
		t.Logf("%s = %.4f, want %.4f ± %.4f (τ = %.0f)", q.name, mean, q.want, se, tau)
		if math.Abs(mean-q.want) > 4*se {
			t.Errorf("%s = %.4f, want %.4f ± %.4f: %.1f standard errors off", q.name, mean, q.want, se, math.Abs(mean-q.want)/se)
		}
	}
}

// Each move on its own must leave a correlated Gaussian invariant: moments
// within 4 standard errors of the exact ones (see checkGaussianMoments).
func TestMovesLeaveGaussianInvariant(t *testing.T) {
	g := newRotatedGaussian(3, 2, 3)
	for _, m := range []Move{
		StretchMove{}, StretchMove{A: 3},
		DifferentialMove{}, DifferentialMove{Gamma: 0.5, Jitter: -1, JumpProbability: 0.2},
		WalkMove{}, WalkMove{Subset: 3},
		IndependenceMove{}, IndependenceMove{Scale: 1.5, DOF: 1},
	} {
		t.Run(describeMove(m), func(t *testing.T) {
			res := mustRun(t, Problem{g.LogDensity, 3}, Start{Center: make([]float64, 3), Scale: g.scales()},
				&Settings{Seed: 21, Walkers: 24, Steps: 3000, Moves: []WeightedMove{{Move: m}}})
			t.Logf("τ = %.1f, acceptance %.2f", res.Tau, res.MeanAcceptance())
			checkGaussianMoments(t, res.Chain, 500, 1, g, 4)
		})
	}
}

// Bad move settings are refused before the run starts.
func TestMoveWeightsValidated(t *testing.T) {
	g := newRotatedGaussian(2, 0, 1)
	_, err := Run(context.Background(), Problem{g.LogDensity, 2}, Start{Center: []float64{0, 0}, Scale: []float64{1, 1}},
		&Settings{Steps: 5, Moves: []WeightedMove{{Move: StretchMove{}, Weight: -1}}})
	if err == nil || !strings.Contains(err.Error(), "weight") {
		t.Errorf("negative weight: got %v, want an error about the weight", err)
	}
	_, err = Run(context.Background(), Problem{g.LogDensity, 2}, Start{Center: []float64{0, 0}, Scale: []float64{1, 1}},
		&Settings{Steps: 5, Moves: []WeightedMove{{Move: StretchMove{A: 0.5}}}})
	if err == nil || !strings.Contains(err.Error(), "stretch") {
		t.Errorf("stretch scale 0.5: got %v, want an error", err)
	}
	_, err = Run(context.Background(), Problem{g.LogDensity, 2}, Start{Center: []float64{0, 0}, Scale: []float64{1, 1}},
		&Settings{Steps: 5, Walkers: 8, Moves: []WeightedMove{{Move: WalkMove{Subset: 5}}}})
	if err == nil || !strings.Contains(err.Error(), "walk") {
		t.Errorf("walk subset larger than a half: got %v, want an error", err)
	}
	_, err = Run(context.Background(), Problem{g.LogDensity, 2}, Start{Center: []float64{0, 0}, Scale: []float64{1, 1}},
		&Settings{Steps: 5, Walkers: 4, Moves: []WeightedMove{{Move: IndependenceMove{}}}})
	if err == nil || !strings.Contains(err.Error(), "independence") {
		t.Errorf("independence move with 2 walkers per half in 2 dimensions: got %v, want an error", err)
	}
}

// counting wraps a move and counts its proposals.
type counting struct {
	Move
	n *atomic.Int64
}

func (c counting) Propose(y, x []float64, others [][]float64, src *rand.Rand) float64 {
	c.n.Add(1)
	return c.Move.Propose(y, x, others, src)
}

// The move of each step is drawn with probability proportional to its
// weight: with weights 3 and 1 the first move's share of the steps is
// binomial with p = 0.75, checked within 4 standard errors √(p(1−p)/steps)
// (common practice, no source). Each step makes one proposal per walker.
func TestMoveMixtureFrequencies(t *testing.T) {
	g := newRotatedGaussian(2, 1, 1)
	var a, b atomic.Int64
	const steps, walkers = 4000, 16
	mustRun(t, Problem{g.LogDensity, 2}, Start{Center: []float64{0, 0}, Scale: []float64{1, 1}},
		&Settings{Seed: 8, Walkers: walkers, Steps: steps, Moves: []WeightedMove{
			{Move: counting{StretchMove{}, &a}, Weight: 3}, {Move: counting{DifferentialMove{}, &b}, Weight: 1}}})
	if (a.Load()+b.Load()) != steps*walkers || a.Load()%walkers != 0 {
		t.Fatalf("%d + %d proposals, want %d in whole steps", a.Load(), b.Load(), steps*walkers)
	}
	share := float64(a.Load()) / float64(steps*walkers)
	se := math.Sqrt(0.75 * 0.25 / steps)
	if math.Abs(share-0.75) > 4*se {
		t.Errorf("first move used in %.4f of the steps, want 0.75 ± %.4f", share, se)
	}
}

package mcmc

import (
	"bytes"
	"math"
	"sync/atomic"
	"testing"
)

// The slice moves, each alone, leave a correlated 20-dimensional Gaussian
// (condition number 10^4) invariant: means and covariances within 4
// standard errors of the exact ones, the standard errors from τ estimated on
// the chain (see checkGaussianMoments). The widths are tuned in the first
// 400 steps and frozen after them; the check leaves those steps out.
// Reference: the target's own moments, exact by construction.
func TestSliceMovesGaussian20D(t *testing.T) {
	steps := 2400
	if longTests() {
		steps = 12000
	}
	g := newRotatedGaussian(20, 4, 2)
	for _, m := range []Move{DifferentialSliceMove{}, GaussianSliceMove{}} {
		t.Run(describeMove(m), func(t *testing.T) {
			res := mustRun(t, Problem{g.LogDensity, 20}, Start{Center: make([]float64, 20), Scale: g.scales()},
				&Settings{Seed: 31, Steps: steps, TuneSteps: 400, Moves: []WeightedMove{{Move: m}}})
			t.Logf("max τ = %.1f steps, %.1f evaluations per walker and step after tuning, width %.3g",
				maxOf(res.Tau), float64(res.Evaluations-res.TunedEvaluations)/float64((steps-400)*80), res.Widths[0])
			checkGaussianMoments(t, res.Chain, 400, 4, g, 4)
		})
	}
}

// The slice moves reproduce the banana's moments (computed by quadrature,
// see TestBanana) within 4 standard errors.
func TestSliceMovesBanana(t *testing.T) {
	steps := 4000
	if longTests() {
		steps = 20000
	}
	for _, m := range []Move{DifferentialSliceMove{}, GaussianSliceMove{}} {
		t.Run(describeMove(m), func(t *testing.T) {
			res := mustRun(t, Problem{bananaLogDensity, 2}, Start{Center: []float64{1, 1}, Scale: []float64{0.1, 0.1}},
				&Settings{Seed: 6, Walkers: 32, Steps: steps, TuneSteps: 400, Names: []string{"x1", "x2"}, Moves: []WeightedMove{{Move: m}}})
			t.Logf("τ = %.1f steps", res.Tau)
			checkBananaMoments(t, res.Chain, 400)
		})
	}
}

// mixtureLogDensity is an equal-shape two-component Gaussian mixture in
// two dimensions: weight mixW at (−mixSep, 0) and 1 − mixW at (mixSep, 0),
// each with standard deviation mixSD along both axes.
const (
	mixW   = 0.3
	mixSep = 2.0
	mixSD  = 0.6
)

func mixtureLogDensity(x []float64) float64 {
	g := func(c float64) float64 {
		a, b := (x[0]-c)/mixSD, x[1]/mixSD
		return math.Exp(-(a*a + b*b) / 2)
	}
	return math.Log(mixW*g(-mixSep) + (1-mixW)*g(mixSep))
}

// The slice moves leave a two-component mixture invariant: the mean and the
// second moment of x1 and the mass on the side x1 < 0 within 4 standard
// errors (variance of each per-draw quantity times τ/N, τ from the chain).
// Closed forms for a mixture of normals (common practice, no source):
// E x1 = Σ w_k c_k, E x1² = Σ w_k (σ² + c_k²), and
// P(x1 < 0) = w Φ(s/σ) + (1 − w) Φ(−s/σ) for centres ∓s.
func TestSliceMovesMixture(t *testing.T) {
	steps := 6000
	if longTests() {
		steps = 30000
	}
	mean := mixW*(-mixSep) + (1-mixW)*mixSep
	m2 := mixSD*mixSD + mixSep*mixSep
	phi := func(z float64) float64 { return 0.5 * math.Erfc(-z/math.Sqrt2) }
	pLeft := mixW*phi(mixSep/mixSD) + (1-mixW)*phi(-mixSep/mixSD)
	m4 := 3*math.Pow(mixSD, 4) + 6*mixSD*mixSD*mixSep*mixSep + math.Pow(mixSep, 4) // E x1⁴, same for both components
	qs := []struct {
		name       string
		f          func(x float64) float64
		want, var_ float64
	}{
		{"E x1", func(x float64) float64 { return x }, mean, m2 - mean*mean},
		{"E x1²", func(x float64) float64 { return x * x }, m2, m4 - m2*m2},
		{"P(x1 < 0)", func(x float64) float64 {
			if x < 0 {
				return 1
			}
			return 0
		}, pLeft, pLeft * (1 - pLeft)},
	}
	for _, m := range []Move{DifferentialSliceMove{}, GaussianSliceMove{}} {
		t.Run(describeMove(m), func(t *testing.T) {
			res := mustRun(t, Problem{mixtureLogDensity, 2}, Start{Center: []float64{0, 0}, Scale: []float64{2, 1}},
				&Settings{Seed: 17, Walkers: 32, Steps: steps, TuneSteps: 500, Moves: []WeightedMove{{Move: m}}})
			s1 := res.Chain.Series(0, 500)
			for _, q := range qs {
				series := make([][]float64, len(s1))
				var got float64
				for k := range s1 {
					series[k] = make([]float64, len(s1[k]))
					for i, x := range s1[k] {
						series[k][i] = q.f(x)
						got += series[k][i]
					}
				}
				n := float64(len(s1) * len(s1[0]))
				got /= n
				tau, ok := AutocorrTime(series, 0)
				if !ok {
					t.Fatalf("%s: chain too short for τ = %.1f", q.name, tau)
				}
				se := math.Sqrt(q.var_ * tau / n)
				t.Logf("%s = %.4f, want %.4f ± %.4f (τ = %.1f)", q.name, got, q.want, se, tau)
				if math.Abs(got-q.want) > 4*se {
					t.Errorf("%s = %.4f, want %.4f ± %.4f: %.1f standard errors off", q.name, got, q.want, se, math.Abs(got-q.want)/se)
				}
			}
		})
	}
}

// The width is tuned only during the tuning steps: a run cut at the end of
// tuning and a longer run end with the same width, and a chain continued
// after tuning has the same stationary moments as a chain whose width is
// fixed at the tuned value from the start (each mean and variance agrees
// within 4 combined standard errors, and both agree with the exact moments
// of the Gaussian).
func TestSliceWidthFrozenAfterTuning(t *testing.T) {
	g := newRotatedGaussian(5, 2, 4)
	p := Problem{g.LogDensity, 5}
	st := Start{Center: make([]float64, 5), Scale: filled(5, 0.01)} // a poor start, so that tuning has work to do
	const tune, steps = 300, 4000
	set := func(m Move, steps, tune int) *Settings {
		return &Settings{Seed: 41, Walkers: 20, Steps: steps, TuneSteps: tune, Moves: []WeightedMove{{Move: m}}}
	}
	short := mustRun(t, p, st, set(DifferentialSliceMove{}, tune, tune))
	long := mustRun(t, p, st, set(DifferentialSliceMove{}, steps, tune))
	mu := short.Widths[0]
	if long.Widths[0] != mu {
		t.Fatalf("width %v after tuning but %v at the end: not frozen", mu, long.Widths[0])
	}
	if mu == 1 {
		t.Fatalf("width still 1 after %d tuning steps", tune)
	}
	fixed := mustRun(t, p, st, set(DifferentialSliceMove{Width: mu}, steps, 0))
	if fixed.Widths[0] != mu {
		t.Fatalf("untuned width changed from %v to %v", mu, fixed.Widths[0])
	}
	t.Logf("tuned width %.4g", mu)
	checkGaussianMoments(t, long.Chain, tune, 1, g, 4)
	checkGaussianMoments(t, fixed.Chain, tune, 1, g, 4)
	for a := 0; a < 5; a++ {
		ma, va, sa := seriesMoments(long.Chain.Series(a, tune))
		mb, vb, sb := seriesMoments(fixed.Chain.Series(a, tune))
		// The variance of a squared deviation of a normal is 2σ⁴ (Isserlis).
		if d := math.Abs(ma - mb); d > 4*math.Sqrt(g.Cov[a][a]*(sa.mean+sb.mean)) {
			t.Errorf("parameter %d: means %.4f and %.4f differ by %.1f combined standard errors", a, ma, mb, d/math.Sqrt(g.Cov[a][a]*(sa.mean+sb.mean)))
		}
		vse := math.Sqrt(2 * g.Cov[a][a] * g.Cov[a][a] * (sa.sq + sb.sq))
		if d := math.Abs(va - vb); d > 4*vse {
			t.Errorf("parameter %d: variances %.4f and %.4f differ by %.1f combined standard errors", a, va, vb, d/vse)
		}
	}
}

// inverse sample sizes τ/N of a series' mean and of its squared deviations.
type invESS struct{ mean, sq float64 }

// seriesMoments returns the mean and variance of an ensemble of series and
// τ/N for the mean and for the squared deviations.
func seriesMoments(series [][]float64) (mean, variance float64, inv invESS) {
	var n float64
	for _, x := range series {
		for _, v := range x {
			mean += v
			n++
		}
	}
	mean /= n
	sq := make([][]float64, len(series))
	for k, x := range series {
		sq[k] = make([]float64, len(x))
		for i, v := range x {
			sq[k][i] = (v - mean) * (v - mean)
			variance += sq[k][i]
		}
	}
	variance /= n - 1
	t1, _ := AutocorrTime(series, 0)
	t2, _ := AutocorrTime(sq, 0)
	return mean, variance, invESS{t1 / n, t2 / n}
}

// With adaptive weights, a move that jumps far per evaluation gets most of
// the weight after tuning and the weights are frozen afterwards. A stretch
// move with a = 1.05 barely moves; the differential slice move crosses the
// target in a few evaluations.
func TestAdaptiveWeights(t *testing.T) {
	g := newRotatedGaussian(4, 1, 6)
	p := Problem{g.LogDensity, 4}
	st := Start{Center: make([]float64, 4), Scale: g.scales()}
	set := func(steps int) *Settings {
		return &Settings{Seed: 3, Walkers: 16, Steps: steps, TuneSteps: 500, AdaptWeights: true,
			Moves: []WeightedMove{{Move: StretchMove{A: 1.05}}, {Move: DifferentialSliceMove{}}}}
	}
	a := mustRun(t, p, st, set(500))
	b := mustRun(t, p, st, set(1500))
	t.Logf("weights after tuning %v", a.Weights)
	if !(a.Weights[1] > 0.8) {
		t.Errorf("weights %v: the slice move should carry more than 0.8", a.Weights)
	}
	if a.Weights[0] != b.Weights[0] || a.Weights[1] != b.Weights[1] {
		t.Errorf("weights %v after tuning, %v at the end: not frozen", a.Weights, b.Weights)
	}
	if math.Abs(a.Weights[0]+a.Weights[1]-1) > 1e-12 {
		t.Errorf("weights %v do not add up to 1", a.Weights)
	}
}

// Every log-density evaluation is counted: the result's count equals the
// calls the target saw, for Metropolis–Hastings and slice moves; and a
// Metropolis–Hastings step costs exactly one evaluation per walker.
func TestEvaluationsCounted(t *testing.T) {
	g := newRotatedGaussian(3, 1, 7)
	for _, m := range []Move{StretchMove{}, DifferentialSliceMove{}, GaussianSliceMove{}} {
		var calls atomic.Int64
		f := func(x []float64) float64 { calls.Add(1); return g.LogDensity(x) }
		res := mustRun(t, Problem{f, 3}, Start{Center: make([]float64, 3), Scale: g.scales()},
			&Settings{Seed: 2, Walkers: 12, Steps: 50, TuneSteps: 10, Threads: 3, Moves: []WeightedMove{{Move: m}}})
		if res.Evaluations != calls.Load() {
			t.Errorf("%s: %d evaluations counted, the target saw %d", describeMove(m), res.Evaluations, calls.Load())
		}
		perStep := float64(res.Evaluations-res.TunedEvaluations) / 40 / 12
		if _, mh := m.(StretchMove); mh && perStep != 1 {
			t.Errorf("stretch move: %g evaluations per walker and step, want 1", perStep)
		}
		t.Logf("%s: %.2f evaluations per walker and step", describeMove(m), perStep)
	}
}

// moveSets are the move settings under which the determinism checks run:
// each move alone, and a mixture whose weights adapt over tuning steps that
// outlast the interruption at step 17.
var moveSets = map[string]func(*Settings){
	"stretch":      func(s *Settings) { s.Moves = []WeightedMove{{Move: StretchMove{}}} },
	"differential": func(s *Settings) { s.Moves = []WeightedMove{{Move: DifferentialMove{}}} },
	"walk":         func(s *Settings) { s.Moves = []WeightedMove{{Move: WalkMove{Subset: 5}}} },
	"independence": func(s *Settings) {
		s.Moves = []WeightedMove{{Move: IndependenceMove{}, Weight: 0.7}, {Move: DifferentialMove{}, Weight: 0.3}}
	},
	"diff-slice": func(s *Settings) {
		s.Moves, s.TuneSteps = []WeightedMove{{Move: DifferentialSliceMove{}}}, 25
	},
	"gauss-slice": func(s *Settings) {
		s.Moves, s.TuneSteps = []WeightedMove{{Move: GaussianSliceMove{MaxSteps: 6}}}, 25
	},
	"adaptive-mixture": func(s *Settings) {
		s.Moves = []WeightedMove{{Move: StretchMove{}}, {Move: DifferentialSliceMove{}}, {Move: GaussianSliceMove{}}}
		s.TuneSteps, s.AdaptWeights = 30, true
	},
}

// For every move: 1, 2 and 8 threads write the same chain file, and a run
// stopped at step 17 and resumed to 40 writes the same bytes as an
// uninterrupted run of 40 steps (reference: the sampler's own uninterrupted
// run, as in resume_test.go). The clipped target makes slice intervals
// reach outside the support.
func TestEveryMoveDeterministicAndResumable(t *testing.T) {
	for name, edit := range moveSets {
		t.Run(name, func(t *testing.T) {
			ref := uninterrupted(t, 40, edit)
			var evals int64 = -1
			for _, threads := range []int{1, 2, 8} {
				dir := t.TempDir()
				s := testSettings(dir, 40)
				edit(s)
				s.Threads = threads
				res := mustRun(t, Problem{clipped, 2}, testStart, s)
				if !bytes.Equal(readFile(t, s.ChainPath), ref) {
					t.Errorf("%d threads: chain file differs", threads)
				}
				if evals >= 0 && res.Evaluations != evals {
					t.Errorf("%d threads: %d evaluations, %d before", threads, res.Evaluations, evals)
				}
				evals = res.Evaluations
			}
			dir := t.TempDir()
			s := testSettings(dir, 17)
			edit(s)
			s.Threads = 2
			mustRun(t, Problem{clipped, 2}, testStart, s)
			s.Steps, s.Resume, s.Threads = 40, true, 8
			res := mustRun(t, Problem{clipped, 2}, Start{}, s)
			if !bytes.Equal(readFile(t, s.ChainPath), ref) {
				t.Errorf("stopped at 17 and resumed: chain file differs from the uninterrupted one")
			}
			if res.Evaluations != evals {
				t.Errorf("resumed run counts %d evaluations, uninterrupted %d", res.Evaluations, evals)
			}
			// A resumed run must keep the tuning settings.
			s.Steps, s.TuneSteps = 45, s.TuneSteps+1
			if _, err := Run(t.Context(), Problem{clipped, 2}, Start{}, s); err == nil {
				t.Errorf("resuming with other tuning steps: no error")
			}
		})
	}
}

// With MinESS the automatic rule also waits for the effective sample size
// after the tuning steps: the run stops later than without it, on a check
// step, where W·(step − TuneSteps)/τ (τ from the last check, which the
// final estimate on the same chain matches closely) has reached MinESS.
func TestAutoStopWaitsForESS(t *testing.T) {
	g := newRotatedGaussian(2, 1, 5)
	p := Problem{g.LogDensity, 2}
	st := Start{Center: []float64{0, 0}, Scale: []float64{1, 1}}
	set := func(minESS float64) *Settings {
		return &Settings{Seed: 9, Walkers: 16, AutoStop: true, TauEvery: 100, Steps: 200000, TuneSteps: 100, MinESS: minESS}
	}
	plain := mustRun(t, p, st, set(0))
	res := mustRun(t, p, st, set(6000))
	if plain.Status != Converged || res.Status != Converged || res.Step%100 != 0 {
		t.Fatalf("status %v at step %d and %v at step %d, want both converged on check steps", plain.Status, plain.Step, res.Status, res.Step)
	}
	ess := float64(16*(res.Step-100)) / maxOf(res.Tau)
	t.Logf("without MinESS: step %d; with MinESS 6000: step %d, ESS %.0f", plain.Step, res.Step, ess)
	if res.Step <= plain.Step || ess < 0.9*6000 {
		t.Errorf("with MinESS = 6000 the run stopped at step %d (without: %d) with ESS %.0f", res.Step, plain.Step, ess)
	}
}

package mcmc

import (
	"context"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// logSumExp returns log(e^a + e^b) without overflow.
func logSumExp(a, b float64) float64 {
	if a < b {
		a, b = b, a
	}
	return a + math.Log1p(math.Exp(b-a))
}

// Runs on the same target agree: split-R̂ over every walker of four runs is
// near 1. For correct chains, R̂² ≈ 1 + (τ − 1)/n for split chains of n
// draws with autocorrelation time τ (from B ≈ σ²τ, W ≈ σ² in Vehtari et al.
// 2021), so R̂ − 1 ≈ (τ − 1)/(2n); the bound allows for that excess
// plus 4 standard deviations of the between-chain variance with 2M − 1
// degrees of freedom for M walker chains (relative spread √(2/(2M−1))).
// Runs stuck on different modes of a bimodal target give R̂ far above 1.1.
func TestRhatAcrossRuns(t *testing.T) {
	g := newRotatedGaussian(2, 2, 4)
	var chains [][]float64
	var tau float64
	const steps, burn = 4000, 1000
	for seed := uint64(1); seed <= 4; seed++ {
		res := mustRun(t, Problem{g.LogDensity, 2}, Start{Center: []float64{0, 0}, Scale: []float64{1, 1}},
			&Settings{Seed: seed, Walkers: 16, Steps: steps})
		chains = append(chains, res.Chain.Series(0, burn)...)
		tau = math.Max(tau, maxOf(res.Tau))
	}
	n := float64(steps-burn) / 2
	m := float64(len(chains))
	excess := (tau - 1) / (2 * n)
	bound := 1 + excess*(1+4*math.Sqrt(2/(2*m-1)))
	rhat := SplitRhat(chains)
	t.Logf("same target: R̂ = %.4f (bound %.4f, τ = %.1f), bulk ESS %.0f, tail ESS %.0f", rhat, bound, tau, BulkESS(chains), TailESS(chains))
	if !(rhat < bound) || bound > 1.05 {
		t.Errorf("same target: R̂ = %.4f, want below %.4f", rhat, bound)
	}

	bimodal := func(x []float64) float64 {
		a := -((x[0]-8)*(x[0]-8) + x[1]*x[1]) / 2
		b := -((x[0]+8)*(x[0]+8) + x[1]*x[1]) / 2
		return logSumExp(a, b)
	}
	chains = nil
	for i, c := range []float64{8, -8} {
		res := mustRun(t, Problem{bimodal, 2}, Start{Center: []float64{c, 0}, Scale: []float64{0.5, 0.5}},
			&Settings{Seed: uint64(10 + i), Walkers: 16, Steps: 2000})
		chains = append(chains, res.Chain.Series(0, 500)...)
	}
	rhat = SplitRhat(chains)
	t.Logf("two modes: R̂ = %.3f", rhat)
	if !(rhat > 1.1) {
		t.Errorf("runs on separate modes: R̂ = %.4f, want above 1.1", rhat)
	}
}

// A walker started in a tiny, distant mode of low density stays there and
// is flagged; no other walker is. Target: a standard normal in 2-D plus a
// mode of weight 1e-12 and width 0.01 at (30, 30), whose peak log-density
// is about ln(1e-12/1e-4) ≈ −18.4, far below the main mode's median −ln 2.
func TestStuckWalkerFlagged(t *testing.T) {
	const w = 0.01
	target := func(x []float64) float64 {
		main := -(x[0]*x[0] + x[1]*x[1]) / 2
		dx, dy := x[0]-30, x[1]-30
		minor := math.Log(1e-12) - 2*math.Log(w) - (dx*dx+dy*dy)/(2*w*w)
		return logSumExp(main, minor)
	}
	start := Start{Draw: func(walker int, x []float64, r *rand.Rand) {
		if walker == 3 {
			x[0], x[1] = 30+w*r.NormFloat64(), 30+w*r.NormFloat64()
			return
		}
		x[0], x[1] = r.NormFloat64(), r.NormFloat64()
	}}
	res := mustRun(t, Problem{target, 2}, start, &Settings{Seed: 3, Walkers: 16, Steps: 1000})
	if len(res.Stuck) != 1 || res.Stuck[0].Walker != 3 || !res.Stuck[0].LowDensity || !res.Stuck[0].LowAcceptance {
		t.Fatalf("stuck walkers %+v, want walker 3 only, flagged on both counts", res.Stuck)
	}
	t.Logf("walker 3: acceptance %.3f, gap %.1f", res.Stuck[0].Acceptance, res.Stuck[0].Gap)
}

func TestNaNAndPanicNameWalkerAndPosition(t *testing.T) {
	start := Start{Draw: func(_ int, x []float64, r *rand.Rand) {
		x[0], x[1] = -math.Abs(r.NormFloat64()), r.NormFloat64()
	}}
	for name, f := range map[string]func(x []float64) float64{
		"NaN": func(x []float64) float64 {
			if x[0] > 1 {
				return math.NaN()
			}
			return -(x[0]*x[0] + x[1]*x[1]) / 2
		},
		"panicked": func(x []float64) float64 {
			if x[0] > 1 {
				panic("boom")
			}
			return -(x[0]*x[0] + x[1]*x[1]) / 2
		},
	} {
		_, err := Run(context.Background(), Problem{f, 2}, start, &Settings{Seed: 1, Steps: 1000})
		if err == nil {
			t.Errorf("%s: no error", name)
			continue
		}
		msg := err.Error()
		if !strings.Contains(msg, name) || !strings.Contains(msg, "walker ") || !strings.Contains(msg, "step ") || !strings.Contains(msg, "(x0=") {
			t.Errorf("%s: error %q should name the step, the walker and the position", name, msg)
		}
	}
	// At the start.
	_, err := Run(context.Background(), Problem{func(x []float64) float64 { return math.NaN() }, 1},
		Start{Center: []float64{0}, Scale: []float64{1}}, &Settings{Steps: 10})
	if err == nil || !strings.Contains(err.Error(), "NaN") || !strings.Contains(err.Error(), "walker") {
		t.Errorf("NaN at the start: %v", err)
	}
}

func TestStartOutsideSupport(t *testing.T) {
	// Half of the ball lies outside: those walkers are redrawn.
	half := func(x []float64) float64 {
		if x[0] < 0 {
			return math.Inf(-1)
		}
		return -x[0]*x[0]/2 - x[1]*x[1]/2
	}
	res := mustRun(t, Problem{half, 2}, Start{Center: []float64{0, 0}, Scale: []float64{1, 1}}, &Settings{Seed: 2, Steps: 20})
	for _, x := range res.Chain.Samples(0) {
		if x[0] < 0 {
			t.Fatalf("walker outside the support at %v", x)
		}
	}
	// A support the ball almost never hits: a clear error after MaxDraws.
	tiny := func(x []float64) float64 {
		if math.Abs(x[0]) > 1e-6 {
			return math.Inf(-1)
		}
		return 0
	}
	_, err := Run(context.Background(), Problem{tiny, 2}, Start{Center: []float64{0, 0}, Scale: []float64{1, 1}, MaxDraws: 50},
		&Settings{Steps: 20})
	if err == nil || !strings.Contains(err.Error(), "no point inside the support in 50 draws") {
		t.Errorf("got %v, want an error about 50 draws", err)
	}
	// Bad starting settings.
	for name, st := range map[string]Start{
		"no centre":      {Scale: []float64{1, 1}},
		"zero scale":     {Center: []float64{0, 0}, Scale: []float64{1, 0}},
		"infinite start": {Center: []float64{math.Inf(1), 0}, Scale: []float64{1, 1}},
	} {
		if _, err := Run(context.Background(), Problem{half, 2}, st, &Settings{Steps: 5}); err == nil {
			t.Errorf("%s accepted", name)
		}
	}
}

// FindMAP locates the maximum of the Rosenbrock function's negative,
// −(100(y − x²)² + (1 − x)²), at (1, 1) (Rosenbrock 1960, Comput. J. 3, 175),
// from the customary start (−1.2, 1); and the mode of a Gaussian whose scales
// differ by 10^4, given those scales.
func TestFindMAP(t *testing.T) {
	rosen := func(x []float64) float64 {
		a, b := 1-x[0], x[1]-x[0]*x[0]
		return -(100*b*b + a*a)
	}
	r, err := FindMAP(rosen, []float64{-1.2, 1}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(r.X[0]-1) > 1e-4 || math.Abs(r.X[1]-1) > 1e-4 || !r.Converged {
		t.Errorf("Rosenbrock maximum at %v (converged %v, %d evaluations), want (1, 1)", r.X, r.Converged, r.Evaluations)
	}
	skew := func(x []float64) float64 {
		a, b := (x[0]-3)/0.01, (x[1]+200)/50
		return -(a*a + b*b) / 2
	}
	r, err = FindMAP(skew, []float64{2.95, -150}, &MAPSettings{Scale: []float64{0.01, 50}})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(r.X[0]-3) > 1e-5 || math.Abs(r.X[1]+200) > 0.05 {
		t.Errorf("scaled Gaussian mode at %v, want (3, −200)", r.X)
	}
	// In a run: the ball is centred on the maximum.
	res := mustRun(t, Problem{skew, 2}, Start{Center: []float64{2.95, -150}, Scale: []float64{0.01, 50}, FindMAP: true},
		&Settings{Steps: 5})
	if res.MAP == nil || math.Abs(res.MAP.X[0]-3) > 1e-5 {
		t.Errorf("run's MAP %+v, want x0 = 3", res.MAP)
	}
	// Errors name the problem.
	if _, err := FindMAP(func(x []float64) float64 { return math.NaN() }, []float64{0}, nil); err == nil {
		t.Error("NaN at the start accepted")
	}
	nanFar := func(x []float64) float64 {
		if x[0] > 0.3 {
			return math.NaN()
		}
		return -(x[0] - 1) * (x[0] - 1)
	}
	if _, err := FindMAP(nanFar, []float64{0}, nil); err == nil || !strings.Contains(err.Error(), "NaN at") {
		t.Errorf("NaN during the search: %v", err)
	}
}

// The automatic rule stops a run once it is longer than 50 τ and τ has
// settled; the stop falls on a check step and the final τ (from the same
// chain) satisfies the rule.
func TestAutoStop(t *testing.T) {
	g := newRotatedGaussian(2, 1, 5)
	res := mustRun(t, Problem{g.LogDensity, 2}, Start{Center: []float64{0, 0}, Scale: []float64{1, 1}},
		&Settings{Seed: 9, Walkers: 16, AutoStop: true, TauEvery: 100, Steps: 200000})
	if res.Status != Converged {
		t.Fatalf("status %v at step %d, want converged", res.Status, res.Step)
	}
	if res.Step%100 != 0 || !(float64(res.Step) > 50*maxOf(res.Tau)) || !res.TauReliable {
		t.Errorf("stopped at step %d with τ = %v (reliable %v)", res.Step, res.Tau, res.TauReliable)
	}
	t.Logf("stopped at step %d, τ = %.1f", res.Step, res.Tau)
	// A bound below the convergence point wins.
	res = mustRun(t, Problem{g.LogDensity, 2}, Start{Center: []float64{0, 0}, Scale: []float64{1, 1}},
		&Settings{Seed: 9, Walkers: 16, AutoStop: true, TauEvery: 100, Steps: 150})
	if res.Status != StepLimit || res.Step != 150 {
		t.Errorf("bounded run: %v at %d", res.Status, res.Step)
	}
}

func TestProgressReports(t *testing.T) {
	g := newRotatedGaussian(2, 1, 5)
	var got []Progress
	res := mustRun(t, Problem{g.LogDensity, 2}, Start{Center: []float64{0, 0}, Scale: []float64{1, 1}},
		&Settings{Seed: 9, Walkers: 16, Steps: 30, ProgressEvery: 7, TauEvery: 10,
			Progress: func(p Progress) { got = append(got, p) }})
	steps := []int{7, 14, 21, 28, 30}
	if len(got) != len(steps) {
		t.Fatalf("%d progress reports, want %d", len(got), len(steps))
	}
	for i, p := range got {
		if p.Step != steps[i] || p.Steps != 30 || p.Done != (i == len(steps)-1) || !(p.Acceptance > 0 && p.Acceptance <= 1) {
			t.Errorf("report %d: %+v", i, p)
		}
	}
	if !math.IsNaN(got[0].Tau) || math.IsNaN(got[1].Tau) || !(got[1].Tau > 0) {
		t.Errorf("τ in reports: %v then %v, want NaN before step 10 and a value after", got[0].Tau, got[1].Tau)
	}
	if last := got[len(got)-1]; math.Abs(last.Acceptance-res.MeanAcceptance()) > 1e-15 || last.ETA != 0 {
		t.Errorf("final report %+v, result acceptance %v", last, res.MeanAcceptance())
	}
}

// Without a checkpoint file the hook is still called at the regular
// checkpoints and at the end.
func TestHookWithoutFiles(t *testing.T) {
	var steps []int
	var finals []bool
	res := mustRun(t, Problem{clipped, 2}, testStart, &Settings{Seed: 1, Steps: 25, CheckpointEvery: 10,
		OnCheckpoint: func(ev CheckpointEvent) (CheckpointReply, error) {
			steps = append(steps, ev.Step)
			finals = append(finals, ev.Final)
			if len(ev.Positions) != 16 || len(ev.LogDensity) != 16 {
				t.Errorf("event with %d positions", len(ev.Positions))
			}
			ev.Positions[0][0] = 1e9 // a copy: must not reach the sampler
			return CheckpointReply{Extra: []byte("layout")}, nil
		}})
	if len(steps) != 4 || steps[0] != 0 || steps[1] != 10 || steps[2] != 20 || steps[3] != 25 || !finals[3] || finals[2] {
		t.Errorf("hook called at %v (final %v), want 0, 10, 20 and finally 25", steps, finals)
	}
	if string(res.Extra) != "layout" {
		t.Errorf("extra %q", res.Extra)
	}
	for _, x := range res.Positions {
		if x[0] == 1e9 {
			t.Error("the hook changed a walker's position")
		}
	}
}

// Package fit runs the whole job: it prepares a configuration and a catalog for sampling,
// lays out each source's distance quadrature at pilot parameter sets, finds the maximum a
// posteriori point, samples the posterior in a run directory with checkpoints, and
// summarises a finished run (parameters, derived quantities, per-source memberships,
// distances and peculiar motions).
package fit

import (
	"context"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"strings"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/mat"

	"github.com/mirabilis-astro/mirabilis/mcmc"
	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/config"
)

// Job is a configuration and a catalog prepared for sampling.
type Job struct {
	Config  *config.Config
	Catalog *catalog.Catalog
	Spec    *model.Spec
	Like    *model.Likelihood
	Post    *model.Posterior
	// Log receives progress messages of the preparation; nil discards them.
	Log io.Writer
}

// Prepare checks that the catalog fits the configuration and builds the likelihood and
// the posterior. The quadratures are not laid out yet (see Pilot).
func Prepare(cfg *config.Config, cat *catalog.Catalog) (*Job, error) {
	spec, err := SpecFromConfig(cfg)
	if err != nil {
		return nil, err
	}
	src, err := model.NewSources(cat, spec)
	if err != nil {
		return nil, err
	}
	L, err := model.NewLikelihood(spec, src)
	if err != nil {
		return nil, err
	}
	post, err := NewPosterior(cfg, L)
	if err != nil {
		return nil, err
	}
	if post.Dim() == 0 {
		return nil, fmt.Errorf("configuration %s: every parameter is fixed: nothing to sample", cfg.File)
	}
	return &Job{Config: cfg, Catalog: cat, Spec: spec, Like: L, Post: post}, nil
}

func (j *Job) logf(format string, a ...any) {
	if j.Log != nil {
		fmt.Fprintf(j.Log, format+"\n", a...)
	}
}

// Start returns the starting point in sampled coordinates: each free parameter's
// configured start (its prior's median by default) and equal membership fractions.
func (j *Job) Start() []float64 {
	start := j.Config.Start()
	names := j.Config.ParamNames()
	values := map[string]float64{}
	for i, n := range names {
		values[n] = start[i]
	}
	for k := range j.Spec.NumComponents() {
		values[j.Spec.FractionName(k)] = 1 / float64(j.Spec.NumComponents())
	}
	x, _ := j.Post.Point(values)
	return x
}

// Spreads returns the configured pilot spread of each sampled coordinate: the
// configuration's pilot_spread where given, else the prior's standard deviation (for the
// fractions' reals, their prior spread).
func (j *Job) Spreads() []float64 {
	all := j.Config.Spreads()
	names := j.Config.ParamNames()
	byName := map[string]float64{}
	for i, n := range names {
		byName[n] = all[i]
	}
	var out []float64
	for _, n := range j.Post.Names()[:len(j.Post.FreePriors())] {
		out = append(out, byName[n])
	}
	d := j.Post.Fractions()
	for k := range d.Dim() {
		out = append(out, d.RealsSpread(k))
	}
	return out
}

// PilotResult is what the pilot stage found.
type PilotResult struct {
	// Names are the sampled coordinates, in the order of MAP, Spread and each pilot.
	Names []string
	// MAP is the maximum a posteriori point, in sampled coordinates, and MAPLogDensity the
	// log posterior there.
	MAP           []float64
	MAPLogDensity float64
	// MAPConverged says whether the search for MAP converged (see mcmc.MAPResult); when
	// it did not, MAP is only the best point found.
	MAPConverged bool
	// Spread is the posterior standard deviation of each sampled coordinate from the
	// curvature at the MAP (Laplace approximation), or a fallback where that failed.
	Spread []float64
	// Pilots are the parameter sets the final quadratures were laid out at.
	Pilots [][]float64
	// Stats describes the final quadratures.
	Stats model.LayoutStats
	// Inner lists the sources whose distance lies inside R_inner with probability above
	// one half at the first MAP point; Excluded lists those left out of the fit (all of
	// Inner when the configuration's exclude_inner is set).
	Inner, Excluded []string
}

// Pilot lays out the quadratures and finds the MAP point (package model, Quadrature): panels are
// built at the starting point; the MAP is searched for with them; the panels are rebuilt at
// the start and the MAP, and the MAP refined; finally the panels are built at the start, the
// MAP and ten draws around it with the expected posterior spreads (the configuration's
// pilot_spread, or the Laplace approximation's). Each search stops at its budget (see
// mapBudget), the MAP then being the best point found. threads lays out that many sources
// at once and evaluates the Laplace approximation's points; the result does not depend on
// it. seed fixes the draws.
func (j *Job) Pilot(ctx context.Context, seed uint64, threads int) (*PilotResult, error) {
	start := j.Start()
	build := func(points [][]float64) (model.LayoutStats, error) {
		ps := make([]*model.Params, len(points))
		for i, x := range points {
			p, err := j.Post.Params(x)
			if err != nil {
				return model.LayoutStats{}, fmt.Errorf("pilot parameter set %d: %w", i, err)
			}
			ps[i] = p
		}
		return j.Like.BuildLayouts(ps, threads)
	}
	if math.IsInf(j.Post.LogPrior(start), -1) {
		return nil, fmt.Errorf("the starting point lies outside the prior's support")
	}
	st, err := build([][]float64{start})
	if err != nil {
		return nil, err
	}
	j.logf("quadrature at the starting point: %d nodes per source (median; %d–%d)", st.MedianNodes, st.MinNodes, st.MaxNodes)
	spreads := j.Spreads()
	res := &PilotResult{Names: j.Post.Names()}
	// Once the context is cancelled every point looks impossible, which ends the search
	// within its budget at little cost; the cancellation is reported below.
	logDensity := func(x []float64) float64 {
		if ctx.Err() != nil {
			return math.Inf(-1)
		}
		return j.Post.LogDensityParallel(x, threads)
	}
	x := start
	var lp float64
	for round := 1; round <= 2; round++ {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		budget := mapBudget * (len(x) + 1) / round
		found, err := mcmc.FindMAP(logDensity, x, &mcmc.MAPSettings{Scale: mapScales(spreads, x), MaxEvaluations: budget, Restarts: 4})
		if cerr := ctx.Err(); cerr != nil {
			return nil, cerr
		}
		if err != nil {
			return nil, fmt.Errorf("finding the MAP: %w", err)
		}
		x, lp, res.MAPConverged = found.X, found.LogDensity, found.Converged
		if found.Converged {
			j.logf("MAP search round %d: log posterior %.3f after %d evaluations; converged (a restart gained %.1e)", round, lp, found.Evaluations, found.LastGain)
		} else {
			j.logf("MAP search round %d: log posterior %.3f after %d evaluations, its budget; NOT converged (the last search gained %.2g): the best point found, not a maximum, serves as the MAP",
				round, lp, found.Evaluations, found.LastGain)
		}
		if round == 1 {
			inner, err := j.flagInner(x)
			if err != nil {
				return nil, err
			}
			res.Inner = inner
			if j.Config.Likelihood.ExcludeInner {
				res.Excluded = inner
				if err := j.Exclude(inner); err != nil {
					return nil, err
				}
				j.logf("left out %d source(s) mostly inside R_inner = %g kpc", len(inner), j.Spec.Bar.RInner)
			}
			if _, err := build([][]float64{start, x}); err != nil {
				return nil, err
			}
		}
	}
	// Directions the data leave unconstrained (such as Wsun + Ws, which no observable
	// sees) have almost no curvature: no spread may exceed the prior's.
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	spread := j.laplace(x, spreads, threads)
	for i, s := range spreads {
		if s > 0 && !(spread[i] <= s) {
			spread[i] = s
		}
	}
	for i, n := range j.Post.Names()[:len(j.Post.FreePriors())] {
		if v, ok := j.Config.Likelihood.PilotSpread[n]; ok {
			spread[i] = v
		}
	}
	pilots := [][]float64{start, x}
	rng := rand.New(rand.NewPCG(seed, 0x70696c6f74))
	for tries := 0; len(pilots) < 12 && tries < 1000; tries++ {
		y := make([]float64, len(x))
		for i := range y {
			y[i] = x[i] + spread[i]*rng.NormFloat64()
		}
		if !math.IsInf(j.Post.LogPrior(y), -1) {
			pilots = append(pilots, y)
		}
	}
	if st, err = build(pilots); err != nil {
		return nil, err
	}
	lp = logDensity(x)
	j.logf("quadrature at %d pilots: %d nodes per source (median; %d–%d), %d not converged",
		len(pilots), st.MedianNodes, st.MinNodes, st.MaxNodes, len(st.Unconverged))
	if len(st.Fallback) > 0 {
		j.logf("%d source(s) used up the panel refinements before resolving every peak and keep the fallback panels, refined on the error estimate alone: %s",
			len(st.Fallback), strings.Join(st.Fallback, ", "))
	}
	res.MAP, res.MAPLogDensity, res.Spread, res.Pilots, res.Stats = x, lp, spread, pilots, st
	return res, nil
}

// mapBudget bounds the evaluations of the pilot stage's first search for the MAP point, in
// units of the number of sampled coordinates plus one; the second search, from the first's
// point on the rebuilt quadratures, has half as many. The walkers start around the point
// found and the quadratures are laid out there and at draws about it: for both, a point
// within a small part of the posterior's width (about n/2 in ln density for n coordinates)
// of the maximum serves as well as the maximum itself. In tens of dimensions Nelder–Mead
// reaches that within about this budget and then creeps for thousands of evaluations
// more, which cost more than the sampler's burn-in would spend on the difference.
const mapBudget = 60

// flagInner returns the names of the sources whose distance lies inside R_inner with
// probability above one half at sampled point x.
func (j *Job) flagInner(x []float64) ([]string, error) {
	p, err := j.Post.Params(x)
	if err != nil {
		return nil, err
	}
	var out []string
	for i, s := range j.Like.Sources {
		if j.Like.InnerProbability(i, p, j.Spec.Bar.RInner) > 0.5 {
			out = append(out, s.Name)
		}
	}
	return out, nil
}

// Exclude leaves the named sources out of the likelihood.
func (j *Job) Exclude(names []string) error {
	index := map[string]int{}
	for i, s := range j.Like.Sources {
		index[s.Name] = i
	}
	for _, n := range names {
		i, ok := index[n]
		if !ok {
			return fmt.Errorf("no source named %q to leave out", n)
		}
		j.Like.Excluded[i] = true
	}
	return nil
}

// mapScales returns positive scales for the optimiser.
func mapScales(spreads, x []float64) []float64 {
	out := make([]float64, len(spreads))
	for i, s := range spreads {
		if !(s > 0) || math.IsInf(s, 0) {
			s = math.Max(1e-3, 0.1*math.Abs(x[i]))
		}
		out[i] = s
	}
	return out
}

// laplace returns the posterior standard deviation of each coordinate from the Hessian of
// the log posterior at x (gonum's central finite differences, in coordinates scaled by a
// hundredth of each prior spread), the marginal ones when −H is positive definite and the
// conditional 1/√(−H_ii) otherwise; a coordinate with no curvature keeps a tenth of its
// prior spread.
func (j *Job) laplace(x, prior []float64, threads int) []float64 {
	n := len(x)
	h := mapScales(prior, x)
	for i := range h {
		h[i] *= 0.01
	}
	// In scaled coordinates y, x = x0 + h⊙y, so that one step suits every coordinate.
	scaled := func(y []float64) float64 {
		z := make([]float64, n)
		for i := range z {
			z[i] = x[i] + h[i]*y[i]
		}
		return j.Post.LogDensity(z)
	}
	Hy := centralHessian(scaled, n, threads)
	H := mat.NewSymDense(n, nil)
	for a := range n {
		for b := a; b < n; b++ {
			H.SetSym(a, b, -Hy.At(a, b)/(h[a]*h[b]))
		}
	}
	out := make([]float64, n)
	var chol mat.Cholesky
	if chol.Factorize(H) {
		var cov mat.SymDense
		if err := chol.InverseTo(&cov); err == nil {
			ok := true
			for i := range n {
				out[i] = math.Sqrt(cov.At(i, i))
				ok = ok && out[i] > 0 && !math.IsInf(out[i], 0)
			}
			if ok {
				return out
			}
		}
	}
	for i := range n {
		if d := H.At(i, i); d > 0 && !math.IsInf(d, 0) {
			out[i] = 1 / math.Sqrt(d)
		} else {
			out[i] = 0.1 * mapScales(prior, x)[i]
		}
	}
	return out
}

// centralHessian returns the Hessian of f at the origin of n coordinates by central
// differences of unit step: gonum's fd.Hessian with fd.Central and Step 1, the same sums
// in the same order, so the same values. Its 2n² + 1 distinct points (the stencil's two
// visits of the origin on the diagonal made once) are evaluated on up to threads
// goroutines of the worker pool, each value kept in its own slot: the result does not
// depend on the threads or on the order in which the evaluations finish. f must be safe
// for concurrent use.
func centralHessian(f func(y []float64) float64, n, threads int) *mat.SymDense {
	stencil := fd.Central.Stencil
	// A point is a e_i + b e_j, the stencil's locations a and b along coordinates i ≤ j.
	type point struct{ i, a, j, b int }
	slot := map[point]int{}
	var points []point
	index := func(pt point) int {
		if pt.i == pt.j && pt.a+pt.b == 0 {
			pt = point{} // the origin
		}
		k, ok := slot[pt]
		if !ok {
			k = len(points)
			slot[pt] = k
			points = append(points, pt)
		}
		return k
	}
	at := make([]int, 0, 2*n*(n+1))
	for i := range n {
		for j := i; j < n; j++ {
			for _, pi := range stencil {
				for _, pj := range stencil {
					at = append(at, index(point{i, int(pi.Loc), j, int(pj.Loc)}))
				}
			}
		}
	}
	vals := make([]float64, len(points))
	model.Parallel(len(points), threads, func(k int) {
		y := make([]float64, n)
		pt := points[k]
		y[pt.i] += float64(pt.a)
		y[pt.j] += float64(pt.b)
		vals[k] = f(y)
	})
	H := mat.NewSymDense(n, nil)
	const is2 = 1 // 1/step²
	next := 0
	for i := range n {
		for j := i; j < n; j++ {
			var hess float64
			for _, pi := range stencil {
				for _, pj := range stencil {
					hess += vals[at[next]] * pi.Coeff * pj.Coeff * is2
					next++
				}
			}
			H.SetSym(i, j, hess)
		}
	}
	return H
}

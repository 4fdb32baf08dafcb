package model

import (
	"math"
	"sync"

	"github.com/mirabilis-astro/mirabilis/internal/workpool"
)

// logDensityIndexed is LogDensity by index: the free parameters' priors, the fractions'
// prior, the parameter set built in reused storage, the priors on derived quantities and
// the likelihood, with the sources shared among up to workers goroutines (one when
// workers == 1, GOMAXPROCS when ≤ 0). Each source's term is the same whatever the count,
// and the terms are added in the order of the sources, so the result is too.
func (p *Posterior) logDensityIndexed(x []float64, workers int) float64 {
	ix := p.ix
	var lp float64
	for k, pr := range ix.free {
		lp += pr.LogProb(x[k])
		if math.IsInf(lp, -1) {
			return lp
		}
	}
	nf := len(ix.free)
	if p.fracReals() > 0 {
		lp += p.fracs.LogProbReals(x[nf:])
	}
	st := p.states.Get().(*state)
	defer p.putState(st)
	if !ix.set(st, p.Spec, x, nf) {
		return math.Inf(-1)
	}
	for k := range ix.derived {
		d := &ix.derived[k]
		lp += d.prior.LogProb(st.derivedValue(d))
	}
	if math.IsNaN(lp) || math.IsInf(lp, -1) {
		return math.Inf(-1)
	}
	if !st.setNormalisation(p.Spec) {
		return math.Inf(-1)
	}
	return lp + p.Like.logLShared(st, ix.errKind, workers)
}

func (p *Posterior) putState(st *state) {
	st.x, st.params = nil, nil
	p.states.Put(st)
}

// sourceBlock is the number of consecutive sources one worker takes at a time in a shared
// evaluation.
const sourceBlock = 32

var nodeScratches = sync.Pool{New: func() any { return new(nodeScratch) }}

// logLShared returns Σ ln L_i under the parameter set of st, sharing blocks of sources
// among up to workers goroutines of the worker pool when there are two blocks or more.
// Each source's term is written to its slot and the terms are added in source order, the
// same additions as the single-threaded loop.
func (L *Likelihood) logLShared(st *state, ek int, workers int) float64 {
	n := len(L.Sources)
	blocks := (n + sourceBlock - 1) / sourceBlock
	if workers == 1 || blocks < 2 {
		ns := nodeScratches.Get().(*nodeScratch)
		defer nodeScratches.Put(ns)
		return L.logLIndexed(st, ek, ns, 0, n, nil)
	}
	if cap(st.terms) < n {
		st.terms = make([]float64, n)
	}
	st.terms = st.terms[:n]
	st.like, st.errKind = L, ek
	if st.block == nil {
		st.block = func(_, b int) {
			ns := nodeScratches.Get().(*nodeScratch)
			st.like.logLIndexed(st, st.errKind, ns, b*sourceBlock, min(len(st.terms), (b+1)*sourceBlock), st.terms)
			nodeScratches.Put(ns)
		}
	}
	workpool.Run(workers, blocks, st.block)
	var total float64
	for i, v := range st.terms {
		if !L.Excluded[i] {
			total += v
		}
	}
	return total
}

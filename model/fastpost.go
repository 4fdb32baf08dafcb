package model

import (
	"math"
	"sync"
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
// among workers goroutines when there are enough sources to be worth it.
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
	terms := st.terms[:n]
	Parallel(blocks, workers, func(b int) {
		ns := nodeScratches.Get().(*nodeScratch)
		L.logLIndexed(st, ek, ns, b*sourceBlock, min(n, (b+1)*sourceBlock), terms)
		nodeScratches.Put(ns)
	})
	var total float64
	for i, v := range terms {
		if !L.Excluded[i] {
			total += v
		}
	}
	return total
}

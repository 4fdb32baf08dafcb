package mcmc

import (
	"cmp"
	"math"
	"slices"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"
)

// The functions in this file follow Vehtari, Gelman, Simpson, Carpenter &
// Bürkner (2021, "Rank-normalization, folding, and localization: an improved
// R̂ for assessing convergence of MCMC", Bayesian Analysis 16, 667). Each
// takes a set of chains, chains[m] being one chain's draws of one scalar
// quantity; chains of unequal length are cut to the shortest. For an
// ensemble sampler every walker of every run is one chain (see Chain.Series).
// They return NaN when the draws are not all finite, are constant, or are too
// few (fewer than 4 draws per chain).

// SplitRhat returns the rank-normalised split-R̂ of Vehtari et al. (2021):
// the larger of the bulk R̂ (split chains, rank-normalised) and the
// tail R̂ (the same for the draws folded about their median, |θ − median|).
// Values near 1 say the chains agree; the paper recommends requiring
// R̂ < 1.01. As in the paper, the folding uses the median of all draws of
// the whole chains.
func SplitRhat(chains [][]float64) float64 {
	split := splitChains(chains)
	if split == nil {
		return math.NaN()
	}
	bulk := basicRhat(rankNormalise(split))
	// Fold the whole chains about the median of all their draws, then split.
	n := commonLength(chains)
	whole := make([][]float64, len(chains))
	for m, x := range chains {
		whole[m] = x[:n]
	}
	med := pooledQuantile(whole, 0.5)
	folded := make([][]float64, len(chains))
	for m, x := range whole {
		folded[m] = make([]float64, n)
		for i, v := range x {
			folded[m][i] = math.Abs(v - med)
		}
	}
	tail := basicRhat(rankNormalise(splitChains(folded)))
	if math.IsNaN(bulk) || math.IsNaN(tail) {
		return math.NaN()
	}
	return math.Max(bulk, tail)
}

func commonLength(chains [][]float64) int {
	n := len(chains[0])
	for _, x := range chains {
		n = min(n, len(x))
	}
	return n
}

// BulkESS returns the bulk effective sample size of Vehtari et al. (2021):
// the effective size of the rank-normalised split chains, which
// measures how well the centre of the distribution is sampled.
func BulkESS(chains [][]float64) float64 {
	split := splitChains(chains)
	if split == nil {
		return math.NaN()
	}
	return basicESS(rankNormalise(split))
}

// TailESS returns the tail effective sample size of Vehtari et al. (2021):
// the smaller of the effective sizes of the indicators I(θ ≤ q₀.₀₅)
// and I(θ ≤ q₀.₉₅) over the split chains, with the quantiles of all draws
// pooled (linear interpolation between order statistics, Hyndman & Fan 1996
// type 7).
func TailESS(chains [][]float64) float64 {
	split := splitChains(chains)
	if split == nil {
		return math.NaN()
	}
	out := math.Inf(1)
	for _, p := range []float64{0.05, 0.95} {
		q := pooledQuantile(split, p)
		ind := make([][]float64, len(split))
		for m, x := range split {
			ind[m] = make([]float64, len(x))
			for i, v := range x {
				if v <= q {
					ind[m][i] = 1
				}
			}
		}
		e := basicESS(ind)
		if math.IsNaN(e) {
			return math.NaN()
		}
		out = math.Min(out, e)
	}
	return out
}

// splitChains cuts every chain to the common length N and splits it into its
// first and last ⌊N/2⌋ draws (the middle draw of an odd N is dropped). It
// returns nil when there is nothing sensible to split or a draw is not finite.
func splitChains(chains [][]float64) [][]float64 {
	if len(chains) == 0 {
		return nil
	}
	n := commonLength(chains)
	h := n / 2
	if h < 2 {
		return nil
	}
	out := make([][]float64, 0, 2*len(chains))
	for _, x := range chains {
		for _, v := range x[:n] {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil
			}
		}
		out = append(out, x[:h], x[n-h:n])
	}
	return out
}

// rankNormalise replaces every draw by Φ⁻¹((r − 3/8)/(S + 1/4)), with r its
// rank among all S pooled draws (ties get their average rank) and Φ the
// standard normal distribution function: Blom's normal scores (Vehtari et
// al. 2021).
func rankNormalise(chains [][]float64) [][]float64 {
	type draw struct {
		v    float64
		m, i int
	}
	var all []draw
	for m, x := range chains {
		for i, v := range x {
			all = append(all, draw{v, m, i})
		}
	}
	// Ties share one rank, so their order after sorting does not matter.
	slices.SortFunc(all, func(a, b draw) int { return cmp.Compare(a.v, b.v) })
	out := make([][]float64, len(chains))
	for m, x := range chains {
		out[m] = make([]float64, len(x))
	}
	s := float64(len(all))
	for lo := 0; lo < len(all); {
		hi := lo + 1
		for hi < len(all) && all[hi].v == all[lo].v {
			hi++
		}
		// Ranks lo+1 … hi share their average.
		r := float64(lo+1+hi) / 2
		z := distuv.UnitNormal.Quantile((r - 3.0/8) / (s + 1.0/4))
		for _, d := range all[lo:hi] {
			out[d.m][d.i] = z
		}
		lo = hi
	}
	return out
}

// pooledQuantile returns the type-7 quantile (Hyndman & Fan 1996) of all draws.
func pooledQuantile(chains [][]float64, p float64) float64 {
	var all []float64
	for _, x := range chains {
		all = append(all, x...)
	}
	slices.Sort(all)
	h := p * float64(len(all)-1)
	lo := int(math.Floor(h))
	if lo >= len(all)-1 {
		return all[len(all)-1]
	}
	return all[lo] + (h-float64(lo))*(all[lo+1]-all[lo])
}

// meanVar returns the mean and the variance (divisor N−1) of x.
func meanVar(x []float64) (mean, variance float64) { return stat.MeanVariance(x, nil) }

// basicRhat is the potential scale reduction of Gelman & Rubin (1992, Statist. Sci. 7, 457) in the
// form of Vehtari et al. (2021): with N draws in each of M chains,
// B the between-chain variance N·var(chain means), W the mean within-chain
// variance, R̂ = √((N−1)/N + B/(N·W)).
func basicRhat(chains [][]float64) float64 {
	n := float64(len(chains[0]))
	means := make([]float64, len(chains))
	var w float64
	for m, x := range chains {
		var v float64
		means[m], v = meanVar(x)
		w += v
	}
	w /= float64(len(chains))
	if !(w > 0) {
		return math.NaN()
	}
	var b float64
	if len(chains) > 1 {
		_, vm := meanVar(means)
		b = n * vm
	}
	return math.Sqrt((n-1)/n + b/(n*w))
}

// basicESS is the multi-chain effective sample size of Vehtari et al. (2021):
// the combined autocorrelation
// ρ̂_t = 1 − (W − mean_m s²_m ρ̂_{t,m}) / var⁺ is summed with Geyer's (1992,
// Statist. Sci. 7, 473) initial monotone sequence: pairs ρ̂_{2k} + ρ̂_{2k+1}
// are summed while positive and made non-increasing. τ̂ is bounded below by
// 1/log₁₀(NM) to avoid unstable estimates for antithetic chains.
func basicESS(chains [][]float64) float64 {
	nInt := len(chains[0])
	if nInt < 3 {
		return math.NaN()
	}
	n := float64(nInt)
	m := float64(len(chains))
	// acov[t]: autocovariance at lag t (divisor N), averaged over chains.
	acov := make([]float64, nInt)
	means := make([]float64, len(chains))
	work := newAcovWork(nInt)
	constant := true
	for c, x := range chains {
		means[c], _ = meanVar(x)
		for _, v := range x {
			if v != chains[0][0] {
				constant = false
			}
		}
		work.add(x, means[c])
	}
	work.sums(acov)
	if constant {
		return math.NaN()
	}
	for t := range acov {
		acov[t] /= n * m
	}
	meanVarW := acov[0] * n / (n - 1) // W
	varPlus := meanVarW * (n - 1) / n
	if len(chains) > 1 {
		_, vm := meanVar(means)
		varPlus += vm
	}
	if !(varPlus > 0) {
		return math.NaN()
	}
	rho := func(t int) float64 { return 1 - (meanVarW-acov[t])/varPlus }

	r := make([]float64, nInt)
	r[0] = 1
	r[1] = rho(1)
	even, odd := r[0], r[1]
	t := 0
	for t < nInt-5 && !math.IsNaN(even+odd) && even+odd > 0 {
		t += 2
		even, odd = rho(t), rho(t+1)
		if even+odd >= 0 {
			r[t], r[t+1] = even, odd
		}
	}
	last := t
	// The even term after the last positive pair still carries information
	// (Vehtari et al. 2021); keep it when it is positive.
	if even > 0 {
		r[last] = even
	}
	// Make the pair sums non-increasing.
	for t := 2; t <= last-2; t += 2 {
		if r[t]+r[t+1] > r[t-2]+r[t-1] {
			r[t] = (r[t-2] + r[t-1]) / 2
			r[t+1] = r[t]
		}
	}
	tau := -1.0
	for _, v := range r[:last] {
		tau += 2 * v
	}
	tau += r[last]
	total := n * m
	tau = math.Max(tau, 1/math.Log10(total))
	return total / tau
}

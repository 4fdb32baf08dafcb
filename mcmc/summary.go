package mcmc

import (
	"cmp"
	"math"
	"slices"
	"sort"
)

// Quantile returns the p-quantile (0 ≤ p ≤ 1) of the sample x with optional
// non-negative weights (nil means equal weights). The sample is sorted and
// the i-th value is placed at cumulative probability
//
//	P_i = (W_i − w_i/2) / W,
//
// W_i being the sum of the weights up to and including i and W their total;
// the quantile interpolates linearly between these points and is clamped to
// the smallest and largest values beyond them. With equal weights this is
// the midpoint ("Hazen") definition, type 5 of Hyndman & Fan (1996, Am.
// Stat. 50, 361). Values with zero weight are ignored. It returns NaN for an
// empty sample, a NaN value, a p outside [0, 1], a negative weight, or weights of length
// other than len(x). x and weights are not modified.
func Quantile(p float64, x, weights []float64) float64 {
	return Quantiles([]float64{p}, x, weights)[0]
}

// Quantiles returns Quantile(p, x, weights) for every p in ps, sorting the
// sample only once.
func Quantiles(ps []float64, x, weights []float64) []float64 {
	out := make([]float64, len(ps))
	type item struct{ v, w float64 }
	items := make([]item, 0, len(x))
	bad := weights != nil && len(weights) != len(x)
	var total float64
	for i, v := range x {
		w := 1.0
		if weights != nil && !bad {
			w = weights[i]
		}
		if w < 0 || math.IsNaN(w) || math.IsInf(w, 0) || math.IsNaN(v) {
			bad = true
		}
		if w > 0 {
			items = append(items, item{v, w})
			total += w
		}
	}
	if bad || len(items) == 0 {
		for i := range out {
			out[i] = math.NaN()
		}
		return out
	}
	slices.SortFunc(items, func(a, b item) int { return cmp.Compare(a.v, b.v) })
	pos := make([]float64, len(items))
	var cum float64
	for i, it := range items {
		pos[i] = (cum + it.w/2) / total
		cum += it.w
	}
	for k, p := range ps {
		switch {
		case !(p >= 0 && p <= 1):
			out[k] = math.NaN()
		case p <= pos[0]:
			out[k] = items[0].v
		case p >= pos[len(pos)-1]:
			out[k] = items[len(items)-1].v
		default:
			i := sort.SearchFloat64s(pos, p) // pos[i-1] < p ≤ pos[i]
			f := (p - pos[i-1]) / (pos[i] - pos[i-1])
			out[k] = items[i-1].v + f*(items[i].v-items[i-1].v)
		}
	}
	return out
}

// StuckWalker describes a walker that appears stuck away from the others.
type StuckWalker struct {
	// Walker is the walker's index.
	Walker int
	// Acceptance is the walker's acceptance fraction.
	Acceptance float64
	// Gap is the ensemble median of the walkers' median log-densities minus
	// this walker's median log-density (positive when it lies below).
	Gap float64
	// LowAcceptance is true when the acceptance fraction is below the
	// threshold, LowDensity when Gap exceeds its threshold.
	LowAcceptance, LowDensity bool
}

// FlagStuck returns the walkers that appear stuck, in index order.
// acceptance[k] is walker k's acceptance fraction and logDensity[k] its trace
// of log-densities (usually the later part of the run). Walker k is flagged
// when its acceptance is below minAcceptance times the median acceptance of
// all walkers, or when its median log-density lies more than maxGap below the
// median over walkers of their median log-densities. A non-positive
// threshold disables its test. A common practice for ensemble samplers, no
// source: such walkers sit in a minor mode or a corner of the support from
// which stretch-type moves can hardly leave, and bias the sample.
func FlagStuck(acceptance []float64, logDensity [][]float64, minAcceptance, maxGap float64) []StuckWalker {
	w := len(acceptance)
	if len(logDensity) != w || w == 0 {
		return nil
	}
	medAcc := Quantile(0.5, acceptance, nil)
	meds := make([]float64, w)
	for k, lp := range logDensity {
		meds[k] = Quantile(0.5, lp, nil)
	}
	medLP := Quantile(0.5, meds, nil)
	var out []StuckWalker
	for k := 0; k < w; k++ {
		s := StuckWalker{Walker: k, Acceptance: acceptance[k], Gap: medLP - meds[k]}
		s.LowAcceptance = minAcceptance > 0 && acceptance[k] < minAcceptance*medAcc
		s.LowDensity = maxGap > 0 && s.Gap > maxGap
		if s.LowAcceptance || s.LowDensity {
			out = append(out, s)
		}
	}
	return out
}

// ParamSummary summarises one parameter of a chain.
type ParamSummary struct {
	// Name is the parameter's name.
	Name string
	// Mean and SD are the sample mean and standard deviation (divisor N−1)
	// over all walkers and kept rows after the burn-in.
	Mean, SD float64
	// Quantiles holds the equal-weight quantiles (see Quantile) at the
	// probabilities passed to Summarize.
	Quantiles []float64
	// Tau is the integrated autocorrelation time (ensemble form, see
	// AutocorrTime) in steps, taken from the spacing of the kept steps.
	Tau float64
	// ESS is the effective sample size N/τ, with τ in kept rows.
	ESS float64
	// Rhat, BulkESS and TailESS follow Vehtari et al. (2021), each walker
	// being one chain (see SplitRhat, BulkESS, TailESS).
	Rhat, BulkESS, TailESS float64
}

// Summarize returns a summary of every parameter of the chain, leaving out
// the first burn kept rows, with quantiles at the probabilities probs (for
// example 0.16, 0.5, 0.84). To summarise several independent runs together,
// merge their chains first (MergeChains).
func Summarize(c *Chain, burn int, probs []float64) []ParamSummary {
	out := make([]ParamSummary, c.Dim())
	spacing := 1
	if c.Len() >= 2 {
		spacing = c.Step(1) - c.Step(0)
	}
	for j := range out {
		series := c.Series(j, burn)
		var all []float64
		for _, x := range series {
			all = append(all, x...)
		}
		s := ParamSummary{Name: c.Names[j], Mean: math.NaN(), SD: math.NaN(), Tau: math.NaN(), ESS: math.NaN()}
		if len(all) > 1 {
			s.Mean, s.SD = meanVar(all)
			s.SD = math.Sqrt(s.SD)
		}
		s.Quantiles = Quantiles(probs, all, nil)
		if len(all) > 0 {
			tau, _ := AutocorrTime(series, 0)
			s.Tau = tau * float64(spacing)
			s.ESS = float64(len(all)) / tau
		}
		s.Rhat, s.BulkESS, s.TailESS = SplitRhat(series), BulkESS(series), TailESS(series)
		out[j] = s
	}
	return out
}

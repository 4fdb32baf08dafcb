package mcmc

import (
	"errors"
	"fmt"
	"math"
	"sort"
)

// This file holds Pareto-smoothed importance sampling (PSIS) as defined by
// Vehtari, Simpson, Gelman, Yao & Gabry (2024, "Pareto smoothed importance
// sampling", JMLR 25, 72), with the generalised Pareto fit of Zhang &
// Stephens (2009, Technometrics 51, 316) and the weakly informative prior on
// the shape used by the same authors. The choices the paper leaves to the
// implementation (tail length, prior weight, grid size, truncation) are those
// of the R package loo, so that results agree with it to rounding.

// MinParetoTail is the smallest number of tail draws to which a generalised
// Pareto distribution is fitted; with fewer, ParetoSmooth leaves the weights
// unsmoothed and reports k̂ = +Inf (as the R package loo does).
const MinParetoTail = 5

// ParetoTailLength returns the number of largest importance ratios that
// Pareto smoothing replaces, for S draws whose relative efficiency (effective
// size over S) is rEff: ⌈min(0.2 S, 3 √(S/rEff))⌉ (Vehtari et al. 2024, §3).
// A rEff that is not a positive number is taken as 1.
func ParetoTailLength(S int, rEff float64) int {
	if !(rEff > 0) || math.IsInf(rEff, 1) {
		rEff = 1
	}
	return int(math.Ceil(math.Min(0.2*float64(S), 3*math.Sqrt(float64(S)/rEff))))
}

// ParetoKThreshold returns the sample-size-dependent threshold on the Pareto
// shape k̂ above which importance sampling with S draws is unreliable,
// min(1 − 1/log₁₀ S, 0.7) (Vehtari et al. 2024, §3.2.4 and §6).
func ParetoKThreshold(S int) float64 {
	return math.Min(1-1/math.Log10(float64(S)), 0.7)
}

// GPDFit fits a generalised Pareto distribution with location 0 to positive
// exceedances x, sorted in increasing order, by the empirical-Bayes estimate
// of Zhang & Stephens (2009, §4): the profile likelihood of θ = −k/σ is
// averaged over the grid θ_j = 1/x_N + (1 − √(M/(j − ½)))/(3 x*),
// j = 1..M, M = 30 + ⌊√N⌋, with x* the first quartile x_{⌊N/4+½⌋}. The shape
// is then drawn toward ½ by the weakly informative prior of Vehtari et al.
// (2024, App. C) as if from 10 further observations,
// k ← (N k + 10·½)/(N + 10). It returns the shape k (dimensionless) and the
// scale σ (in the units of x; estimated before the prior is applied, as in R
// loo). A sample for which the fit is undefined (all values equal) gives
// k = +Inf.
func GPDFit(x []float64) (k, sigma float64) {
	n := len(x)
	if n == 0 {
		return math.Inf(1), math.NaN()
	}
	if n < 2 {
		return math.Inf(1), math.NaN()
	}
	const prior = 3
	m := 30 + int(math.Floor(math.Sqrt(float64(n))))
	xstar := x[int(math.Floor(float64(n)/4+0.5))-1]
	theta := make([]float64, m)
	logLik := make([]float64, m)
	for j := range theta {
		theta[j] = 1/x[n-1] + (1-math.Sqrt(float64(m)/(float64(j+1)-0.5)))/prior/xstar
		logLik[j] = float64(n) * profileLogLik(theta[j], x)
	}
	top := logSumExps(logLik)
	var thetaHat float64
	for j, t := range theta {
		thetaHat += t * math.Exp(logLik[j]-top)
	}
	for _, v := range x {
		k += math.Log1p(-thetaHat * v)
	}
	k /= float64(n)
	sigma = -k / thetaHat
	const a = 10 // weight of the prior, in observations
	k = k*float64(n)/float64(n+a) + a*0.5/float64(n+a)
	if math.IsNaN(k) {
		k = math.Inf(1)
	}
	return k, sigma
}

// profileLogLik is Zhang & Stephens' (2009, eq. 3) profile log-likelihood of
// θ per observation: ln(−θ/k) − k − 1 with k = −mean ln(1 − θ x).
func profileLogLik(theta float64, x []float64) float64 {
	a := -theta
	var k float64
	for _, v := range x {
		k += math.Log1p(a * v)
	}
	k /= float64(len(x))
	return math.Log(a/k) - k - 1
}

// gpdQuantile is the p-quantile of a generalised Pareto distribution with
// location 0, shape k and scale sigma: σ (e^{−k ln(1−p)} − 1)/k.
func gpdQuantile(p, k, sigma float64) float64 {
	return sigma * math.Expm1(-k*math.Log1p(-p)) / k
}

// ParetoSmooth returns Pareto-smoothed log importance weights for the
// log importance ratios logRatios (one per draw, natural log, up to an
// additive constant) and the estimated shape k̂ of their tail (Vehtari et al.
// 2024, §3). The ParetoTailLength(S, rEff) largest ratios are replaced by the
// expected order statistics F⁻¹((z − ½)/M), z = 1..M, of a generalised
// Pareto distribution (GPDFit) fitted to their exceedances over the largest
// ratio outside the tail; every weight is then truncated at the largest raw
// ratio. The result is in the ratios' order and scale (not normalised):
// ratios below the tail are returned unchanged. When the tail is shorter than
// MinParetoTail, or all its values are equal, the ratios are returned
// truncated only and k̂ is +Inf. logRatios must be finite.
func ParetoSmooth(logRatios []float64, rEff float64) (logWeights []float64, k float64) {
	s := len(logRatios)
	lw := make([]float64, s)
	top := math.Inf(-1)
	for _, v := range logRatios {
		top = math.Max(top, v)
	}
	for i, v := range logRatios {
		lw[i] = v - top
	}
	k = math.Inf(1)
	m := ParetoTailLength(s, rEff)
	if m >= MinParetoTail && m < s {
		order := make([]int, s)
		for i := range order {
			order[i] = i
		}
		sort.SliceStable(order, func(a, b int) bool { return lw[order[a]] < lw[order[b]] })
		tail := order[s-m:]
		lo, hi := lw[tail[0]], lw[tail[m-1]]
		// R loo's test for a constant tail: a spread below machine epsilon/100.
		if hi-lo >= 0x1p-52/100 {
			cutoff := math.Exp(lw[order[s-m-1]])
			x := make([]float64, m)
			for z, i := range tail {
				x[z] = math.Exp(lw[i]) - cutoff
			}
			var sigma float64
			k, sigma = GPDFit(x)
			if !math.IsInf(k, 0) && sigma > 0 {
				for z, i := range tail {
					p := (float64(z) + 0.5) / float64(m)
					lw[i] = math.Log(gpdQuantile(p, k, sigma) + cutoff)
				}
			}
		}
	}
	for i := range lw {
		lw[i] = math.Min(lw[i], 0) + top
	}
	return lw, k
}

// logSumExps returns ln Σ e^{x_i}, computed about the largest x_i.
func logSumExps(x []float64) float64 {
	top := math.Inf(-1)
	for _, v := range x {
		top = math.Max(top, v)
	}
	if math.IsInf(top, 0) {
		return top
	}
	var s float64
	for _, v := range x {
		s += math.Exp(v - top)
	}
	return top + math.Log(s)
}

// Estimate is a sum over observations with its standard error: Value = Σ_i
// v_i and SE = √(N · var(v)), var with divisor N − 1 (Vehtari, Gelman &
// Gabry 2017, Stat. Comput. 27, 1413, eq. 23).
type Estimate struct {
	Value float64 `json:"value"`
	SE    float64 `json:"se"`
}

// sumWithSE returns Σ v_i and √(N · var(v)).
func sumWithSE(v []float64) Estimate {
	n := float64(len(v))
	var sum float64
	for _, x := range v {
		sum += x
	}
	mean := sum / n
	var ss float64
	for _, x := range v {
		ss += (x - mean) * (x - mean)
	}
	if len(v) < 2 {
		return Estimate{Value: sum, SE: math.NaN()}
	}
	return Estimate{Value: sum, SE: math.Sqrt(n * ss / (n - 1))}
}

// LOO is the result of Pareto-smoothed importance-sampling leave-one-out
// cross-validation (Vehtari, Gelman & Gabry 2017, Stat. Comput. 27, 1413;
// PSIS as in Vehtari et al. 2024, JMLR 25, 72). Log densities are natural
// logarithms in the units of the data the pointwise log-likelihoods are
// densities of.
type LOO struct {
	// ELPD is the expected log pointwise predictive density for new data,
	// elpd_loo = Σ_i ln p(y_i | y_−i), estimated by PSIS, with its standard error.
	ELPD Estimate
	// P is the effective number of parameters p_loo = lpd − elpd_loo, where
	// lpd = Σ_i ln((1/S) Σ_s p(y_i | θ_s)), with its standard error.
	P Estimate
	// IC is the information criterion looic = −2 elpd_loo, with its standard error.
	IC Estimate
	// Pointwise holds each observation's contribution, in the input's order.
	Pointwise []LOOPoint
	// Draws is S, the number of posterior draws.
	Draws int
	// KThreshold is ParetoKThreshold(Draws): observations whose k̂ exceeds it
	// have unreliable estimates.
	KThreshold float64
}

// LOOPoint is one observation's share of a LOO estimate.
type LOOPoint struct {
	// ELPD is ln p(y_i | y_−i) estimated by PSIS: ln Σ_s w̃_s p(y_i | θ_s) with
	// the smoothed weights w̃ normalised to sum 1.
	ELPD float64 `json:"elpd_loo"`
	// LPD is the in-sample ln((1/S) Σ_s p(y_i | θ_s)).
	LPD float64 `json:"lpd"`
	// P is LPD − ELPD, the observation's share of p_loo.
	P float64 `json:"p_loo"`
	// K is the Pareto shape k̂ of the observation's importance ratios
	// 1/p(y_i | θ_s).
	K float64 `json:"pareto_k"`
}

// PSISLOO computes Pareto-smoothed importance-sampling leave-one-out
// cross-validation from pointwise log-likelihoods: logLik[i][s] is
// ln p(y_i | θ_s), observation i at posterior draw s (every observation has
// the same S draws, in the same order). The importance ratios of
// observation i are 1/p(y_i | θ_s) (Vehtari, Gelman & Gabry 2017, eq. 7),
// smoothed by ParetoSmooth with relative efficiency rEff (take 1 for draws
// thinned to be nearly independent, as R loo does for r_eff = NA). The
// values must be finite; at least two observations and two draws are needed
// (with fewer than 25 draws the tails are too short to smooth, see
// ParetoSmooth).
func PSISLOO(logLik [][]float64, rEff float64) (*LOO, error) {
	s, err := checkPointwise(logLik)
	if err != nil {
		return nil, err
	}
	n := len(logLik)
	res := &LOO{Pointwise: make([]LOOPoint, n), Draws: s, KThreshold: ParetoKThreshold(s)}
	elpd, p, ic := make([]float64, n), make([]float64, n), make([]float64, n)
	ratios := make([]float64, s)
	for i, ll := range logLik {
		for j, v := range ll {
			ratios[j] = -v
		}
		lw, k := ParetoSmooth(ratios, rEff)
		norm := logSumExps(lw)
		for j := range lw {
			lw[j] += ll[j] - norm
		}
		pt := LOOPoint{ELPD: logSumExps(lw), LPD: logSumExps(ll) - math.Log(float64(s)), K: k}
		pt.P = pt.LPD - pt.ELPD
		res.Pointwise[i] = pt
		elpd[i], p[i], ic[i] = pt.ELPD, pt.P, -2*pt.ELPD
	}
	res.ELPD, res.P, res.IC = sumWithSE(elpd), sumWithSE(p), sumWithSE(ic)
	return res, nil
}

// checkPointwise checks a pointwise log-likelihood matrix and returns its
// number of draws.
func checkPointwise(logLik [][]float64) (int, error) {
	if len(logLik) < 2 {
		return 0, fmt.Errorf("mcmc: %d observations, need at least 2", len(logLik))
	}
	s := len(logLik[0])
	if s < 2 {
		return 0, fmt.Errorf("mcmc: %d draws, need at least 2", s)
	}
	for i, ll := range logLik {
		if len(ll) != s {
			return 0, fmt.Errorf("mcmc: observation %d has %d draws, observation 0 has %d", i, len(ll), s)
		}
		for j, v := range ll {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return 0, fmt.Errorf("mcmc: log-likelihood of observation %d at draw %d is %v, need a finite number", i, j, v)
			}
		}
	}
	return s, nil
}

// WAIC is the widely applicable information criterion of Watanabe (2010,
// JMLR 11, 3571) in the form of Vehtari, Gelman & Gabry (2017, eqs. 10–12).
// It estimates the same elpd as LOO but is less reliable: its error is larger
// whenever some observations are influential (ibid., §4), so LOO is to be
// preferred.
type WAIC struct {
	// ELPD is elpd_waic = lpd − p_waic, with its standard error.
	ELPD Estimate
	// P is p_waic = Σ_i var_s ln p(y_i | θ_s) (sample variance, divisor
	// S − 1), with its standard error.
	P Estimate
	// IC is waic = −2 elpd_waic, with its standard error.
	IC Estimate
	// Pointwise is each observation's elpd_waic, in the input's order.
	Pointwise []float64
}

// ComputeWAIC computes WAIC from pointwise log-likelihoods laid out as for
// PSISLOO.
func ComputeWAIC(logLik [][]float64) (*WAIC, error) {
	s, err := checkPointwise(logLik)
	if err != nil {
		return nil, err
	}
	n := len(logLik)
	elpd, p, ic := make([]float64, n), make([]float64, n), make([]float64, n)
	for i, ll := range logLik {
		var mean float64
		for _, v := range ll {
			mean += v
		}
		mean /= float64(s)
		var ss float64
		for _, v := range ll {
			ss += (v - mean) * (v - mean)
		}
		p[i] = ss / float64(s-1)
		elpd[i] = logSumExps(ll) - math.Log(float64(s)) - p[i]
		ic[i] = -2 * elpd[i]
	}
	return &WAIC{ELPD: sumWithSE(elpd), P: sumWithSE(p), IC: sumWithSE(ic), Pointwise: elpd}, nil
}

// ErrUnpaired is returned by PairedDifference for pointwise values of
// different lengths.
var ErrUnpaired = errors.New("mcmc: pointwise values of different lengths cannot be paired")

// PairedDifference returns the difference Σ_i (a_i − b_i) between two
// models' pointwise elpd values on the same observations, with the standard
// error of the difference √(N · var(a − b)) (Vehtari, Gelman & Gabry 2017,
// eq. 24), which is smaller than the two standard errors combined because
// the same observations are hard for both models.
func PairedDifference(a, b []float64) (Estimate, error) {
	if len(a) != len(b) {
		return Estimate{}, ErrUnpaired
	}
	d := make([]float64, len(a))
	for i := range a {
		d[i] = a[i] - b[i]
	}
	return sumWithSE(d), nil
}

package prior

import (
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/stat/distuv"
)

// FractionsFromReals maps the unconstrained reals y (length N − 1) to the N
// membership fractions f_0 … f_{N−1} (the field first, then one per arm),
// written to dst (length len(y) + 1, allocated when dst is nil), and returns
// them with ln |J| of the transform. It panics if dst has the wrong length.
//
// The map is the stick-breaking transform of the Stan Reference Manual
// (section "Unit simplex" of the constraint transforms, Stan 2.x up to 2.35):
// with 0-based k,
//
//	z_k = logistic(y_k − ln(N − 1 − k))
//	f_k = (1 − f_0 − … − f_{k−1}) z_k,   k = 0 … N−2
//	f_{N−1} = 1 − f_0 − … − f_{N−2}
//
// The offset ln(N − 1 − k) puts y = 0 at the centre of the simplex, f_k = 1/N.
// The map from y to (f_0 … f_{N−2}) is triangular, so its Jacobian determinant
// is the product of the diagonal terms,
//
//	ln |J| = Σ_k [ln z_k + ln(1 − z_k) + ln(1 − f_0 − … − f_{k−1})].
//
// Everything is evaluated in log space, so that no finite y gives NaN or an
// infinite log density.
func FractionsFromReals(dst, y []float64) ([]float64, float64) {
	if dst == nil {
		dst = make([]float64, len(y)+1)
	}
	if len(dst) != len(y)+1 {
		panic(fmt.Sprintf("prior: %d fractions for %d unconstrained reals", len(dst), len(y)))
	}
	logJ := stickBreak(y, func(k int, logf float64) { dst[k] = math.Exp(logf) })
	return dst, logJ
}

// stickBreak runs the transform, handing ln f_k for each k to put, and
// returns ln |J|.
func stickBreak(y []float64, put func(k int, logf float64)) float64 {
	n := len(y) + 1
	logRest := 0.0 // ln(1 − f_0 − … − f_{k−1})
	logJ := 0.0
	for k, yk := range y {
		u := yk - math.Log(float64(n-1-k))
		logZ := -softplus(-u)
		log1mZ := -softplus(u)
		put(k, logRest+logZ)
		logJ += logZ + log1mZ + logRest
		logRest += log1mZ
	}
	put(n-1, logRest)
	return logJ
}

// RealsFromFractions is the inverse of FractionsFromReals: it maps N
// fractions f (each positive, summing to one within 1e-9) to the N − 1
// unconstrained reals, written to dst (allocated when nil).
func RealsFromFractions(dst, f []float64) ([]float64, error) {
	if len(f) == 0 {
		return nil, fmt.Errorf("prior: no fractions")
	}
	if dst == nil {
		dst = make([]float64, len(f)-1)
	}
	if len(dst) != len(f)-1 {
		panic(fmt.Sprintf("prior: %d unconstrained reals for %d fractions", len(dst), len(f)))
	}
	sum := 0.0
	for k, v := range f {
		if !(v > 0) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("prior: fraction %d = %v is not positive", k, v)
		}
		sum += v
	}
	if math.Abs(sum-1) > 1e-9 {
		return nil, fmt.Errorf("prior: fractions sum to %v, not 1", sum)
	}
	n := len(f)
	// The remaining stick is summed from the far end, which keeps it accurate
	// when the leading fractions are close to one.
	rest := 0.0
	tails := make([]float64, n)
	for k := n - 1; k >= 0; k-- {
		rest += f[k]
		tails[k] = rest
	}
	for k := range dst {
		z := f[k] / tails[k]
		dst[k] = math.Log(z) - math.Log1p(-z) + math.Log(float64(n-1-k))
	}
	return dst, nil
}

// Dirichlet is the symmetric Dirichlet distribution of N fractions with
// concentration Alpha > 0 (Alpha = 1 is flat on the simplex; below 1 it
// favours a few dominant components, above 1 even shares). Its density with
// respect to the first N − 1 fractions is
//
//	Γ(N α) / Γ(α)^N · Π_k f_k^(α − 1).
type Dirichlet struct {
	N     int
	Alpha float64
}

// Validate requires N ≥ 1 and a finite Alpha > 0.
func (d Dirichlet) Validate() error {
	if d.N < 1 {
		return fmt.Errorf("dirichlet: needs at least one component, got %d", d.N)
	}
	if !(d.Alpha > 0) || math.IsInf(d.Alpha, 0) {
		return fmt.Errorf("dirichlet: concentration = %v must be positive and finite", d.Alpha)
	}
	return nil
}

// Dim returns N − 1, the number of unconstrained reals.
func (d Dirichlet) Dim() int { return d.N - 1 }

func (d Dirichlet) logNorm() float64 {
	a, _ := math.Lgamma(float64(d.N) * d.Alpha)
	b, _ := math.Lgamma(d.Alpha)
	return a - float64(d.N)*b
}

// LogProb returns the log density of the fractions f (length N), or −Inf if
// they are not on the simplex (a fraction negative, or a sum differing from
// one by more than 1e-9).
func (d Dirichlet) LogProb(f []float64) float64 {
	if len(f) != d.N {
		return math.Inf(-1)
	}
	sum, logs := 0.0, 0.0
	for _, v := range f {
		if !(v >= 0) {
			return math.Inf(-1)
		}
		sum += v
		logs += math.Log(v)
	}
	if math.Abs(sum-1) > 1e-9 {
		return math.Inf(-1)
	}
	if d.Alpha == 1 {
		return d.logNorm()
	}
	return d.logNorm() + (d.Alpha-1)*logs
}

// LogProbReals returns the log density of the unconstrained reals y (length
// N − 1): the Dirichlet log density of FractionsFromReals(y) plus ln |J|. This
// is the term a sampler working in y adds to the log posterior.
func (d Dirichlet) LogProbReals(y []float64) float64 {
	if len(y) != d.N-1 {
		return math.Inf(-1)
	}
	logs := 0.0
	logJ := stickBreak(y, func(_ int, logf float64) { logs += logf })
	return d.logNorm() + (d.Alpha-1)*logs + logJ
}

// RealsSpread returns the standard deviation of the k-th unconstrained real
// (0-based) under the prior. Under a symmetric Dirichlet the stick-breaking
// proportions are independent, z_k ~ Beta(α, (N − 1 − k) α) (the neutrality of
// the Dirichlet: Connor & Mosimann 1969, JASA 64, 194). The logit of a
// Beta(a, b) variable is ln G_a − ln G_b for independent Gamma(a, 1) and
// Gamma(b, 1) variables, and Var ln G_a = ψ′(a), ψ′ the trigamma function, so
// the variance is ψ′(a) + ψ′(b).
func (d Dirichlet) RealsSpread(k int) float64 {
	if k < 0 || k >= d.N-1 {
		return math.NaN()
	}
	return math.Sqrt(trigamma(d.Alpha) + trigamma(float64(d.N-1-k)*d.Alpha))
}

// Rand draws N fractions into dst (allocated when nil) by normalising
// independent Gamma(α, 1) draws (Devroye 1986, Non-Uniform Random Variate
// Generation, §XI.4). For an invalid distribution, or a dst of the wrong
// length, it fills dst with NaN.
func (d Dirichlet) Rand(src rand.Source, dst []float64) []float64 {
	if dst == nil {
		dst = make([]float64, d.N)
	}
	if d.Validate() != nil || len(dst) != d.N {
		for k := range dst {
			dst[k] = math.NaN()
		}
		return dst
	}
	if src == nil {
		src = globalSource{}
	}
	g := distuv.Gamma{Alpha: d.Alpha, Beta: 1, Src: src}
	for {
		sum := 0.0
		for k := range dst {
			dst[k] = g.Rand()
			sum += dst[k]
		}
		if sum > 0 {
			for k := range dst {
				dst[k] /= sum
			}
			return dst
		}
	}
}

// softplus returns ln(1 + eˣ) without overflow.
func softplus(x float64) float64 {
	if x > 0 {
		return x + math.Log1p(math.Exp(-x))
	}
	return math.Log1p(math.Exp(x))
}

// trigamma returns ψ′(x) for x > 0: the recurrence ψ′(x) = ψ′(x + 1) + 1/x²
// up to x ≥ 10, then the asymptotic series
// ψ′(x) ≈ 1/x + 1/(2x²) + Σ_n B_2n / x^(2n+1), n = 1 … 7, with the Bernoulli
// numbers B_2 … B_14 = 1/6, −1/30, 1/42, −1/30, 5/66, −691/2730, 7/6
// (Abramowitz & Stegun 1964, 6.4.12, 6.4.6 and table 23.2).
func trigamma(x float64) float64 {
	if !(x > 0) {
		return math.NaN()
	}
	sum := 0.0
	for x < 10 {
		sum += 1 / (x * x)
		x++
	}
	r := 1 / x
	r2 := r * r
	bernoulli := [...]float64{1.0 / 6, -1.0 / 30, 1.0 / 42, -1.0 / 30, 5.0 / 66, -691.0 / 2730, 7.0 / 6}
	tail := 0.0
	for i := len(bernoulli) - 1; i >= 0; i-- {
		tail = tail*r2 + bernoulli[i]
	}
	series := r + r2/2 + r*r2*tail
	return sum + series
}

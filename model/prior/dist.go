package prior

import (
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mathext"
)

// logSqrt2Pi is ln √(2π).
var logSqrt2Pi = 0.5 * math.Log(2*math.Pi)

// Fixed holds a parameter at Value: the parameter is not sampled. As a
// distribution it is a point mass; LogProb is 0 at Value and −Inf elsewhere.
type Fixed struct {
	Value float64
}

// LogProb returns 0 at the fixed value and −Inf elsewhere.
func (f Fixed) LogProb(x float64) float64 {
	if x == f.Value {
		return 0
	}
	return math.Inf(-1)
}

// CDF returns 0 below the fixed value and 1 from it on.
func (f Fixed) CDF(x float64) float64 {
	if x < f.Value {
		return 0
	}
	return 1
}

// Quantile returns the fixed value for every p in [0, 1].
func (f Fixed) Quantile(p float64) float64 {
	if !(p >= 0 && p <= 1) {
		return math.NaN()
	}
	return f.Value
}

// Rand returns the fixed value; src is not used.
func (f Fixed) Rand(rand.Source) float64 { return f.Value }

// Support returns (Value, Value).
func (f Fixed) Support() (min, max float64) { return f.Value, f.Value }

// Spread returns 0.
func (f Fixed) Spread() float64 { return 0 }

// IsFixed returns true.
func (f Fixed) IsFixed() bool { return true }

// Validate requires a finite value.
func (f Fixed) Validate() error { return checkFinite(NameFixed, f.Value) }

// String returns "fixed(Value)".
func (f Fixed) String() string { return expression(NameFixed, f.Value) }

// Uniform is the flat distribution on [Min, Max], Min < Max.
type Uniform struct {
	Min, Max float64
}

// LogProb returns −ln(Max − Min) inside [Min, Max] and −Inf outside.
func (u Uniform) LogProb(x float64) float64 {
	if x < u.Min || x > u.Max || math.IsNaN(x) {
		return math.Inf(-1)
	}
	return -math.Log(u.Max - u.Min)
}

// CDF returns (x − Min)/(Max − Min), clamped to [0, 1].
func (u Uniform) CDF(x float64) float64 {
	switch {
	case x <= u.Min:
		return 0
	case x >= u.Max:
		return 1
	}
	return (x - u.Min) / (u.Max - u.Min)
}

// Quantile returns Min + p (Max − Min).
func (u Uniform) Quantile(p float64) float64 {
	if !(p >= 0 && p <= 1) {
		return math.NaN()
	}
	return math.Min(u.Min+p*(u.Max-u.Min), u.Max)
}

// Rand returns a uniform draw in [Min, Max).
func (u Uniform) Rand(src rand.Source) float64 {
	return u.Min + newRand(src).Float64()*(u.Max-u.Min)
}

// Support returns (Min, Max).
func (u Uniform) Support() (min, max float64) { return u.Min, u.Max }

// Spread returns (Max − Min)/√12.
func (u Uniform) Spread() float64 { return (u.Max - u.Min) / math.Sqrt(12) }

// IsFixed returns false.
func (u Uniform) IsFixed() bool { return false }

// Validate requires finite bounds with Min < Max.
func (u Uniform) Validate() error {
	if err := checkFinite(NameUniform, u.Min, u.Max); err != nil {
		return err
	}
	if !(u.Min < u.Max) {
		return fmt.Errorf("uniform: min = %s must be below max = %s", formatNumber(u.Min), formatNumber(u.Max))
	}
	return nil
}

// String returns "uniform(Min, Max)".
func (u Uniform) String() string { return expression(NameUniform, u.Min, u.Max) }

// Normal is the Gaussian distribution with mean Mu and standard deviation
// Sigma > 0.
type Normal struct {
	Mu, Sigma float64
}

// LogProb returns ln N(x; Mu, Sigma).
func (n Normal) LogProb(x float64) float64 {
	z := (x - n.Mu) / n.Sigma
	return -0.5*z*z - math.Log(n.Sigma) - logSqrt2Pi
}

// CDF returns Φ((x − Mu)/Sigma).
func (n Normal) CDF(x float64) float64 { return stdCDF((x - n.Mu) / n.Sigma) }

// Quantile returns Mu + Sigma Φ⁻¹(p), with Φ⁻¹ from Wichura's algorithm AS 241
// (Applied Statistics 37, 477, 1988; as implemented in gonum's mathext).
func (n Normal) Quantile(p float64) float64 {
	if !(p >= 0 && p <= 1) {
		return math.NaN()
	}
	return n.Mu + n.Sigma*mathext.NormalQuantile(p)
}

// Rand returns a Gaussian draw.
func (n Normal) Rand(src rand.Source) float64 {
	return n.Mu + n.Sigma*newRand(src).NormFloat64()
}

// Support returns (−Inf, +Inf).
func (n Normal) Support() (min, max float64) { return math.Inf(-1), math.Inf(1) }

// Spread returns Sigma.
func (n Normal) Spread() float64 { return n.Sigma }

// IsFixed returns false.
func (n Normal) IsFixed() bool { return false }

// Validate requires finite Mu and a finite Sigma > 0.
func (n Normal) Validate() error {
	if err := checkFinite(NameNormal, n.Mu, n.Sigma); err != nil {
		return err
	}
	if !(n.Sigma > 0) {
		return fmt.Errorf("normal: sigma = %s must be positive", formatNumber(n.Sigma))
	}
	return nil
}

// String returns "normal(Mu, Sigma)".
func (n Normal) String() string { return expression(NameNormal, n.Mu, n.Sigma) }

// TruncNormal is the Gaussian with mean Mu and standard deviation Sigma
// restricted to [Min, Max] and renormalised there. Mu need not lie inside the
// interval. The tail probabilities are computed from the complementary error
// function on the side of the mean where the interval lies, so that intervals
// far out in a tail (up to about 37 Sigma from Mu) keep full precision.
type TruncNormal struct {
	Mu, Sigma, Min, Max float64
}

// standardised returns the bounds in units of Sigma from Mu.
func (t TruncNormal) standardised() (a, b float64) {
	return (t.Min - t.Mu) / t.Sigma, (t.Max - t.Mu) / t.Sigma
}

// upper reports whether the interval lies above the mean, where upper-tail
// probabilities Q(z) = 1 − Φ(z) are the accurate ones.
func (t TruncNormal) upper() bool { return t.Min >= t.Mu }

// mass returns the Gaussian probability of [Min, Max].
func (t TruncNormal) mass() float64 {
	a, b := t.standardised()
	if t.upper() {
		return stdSurvival(a) - stdSurvival(b)
	}
	if b <= 0 {
		return stdCDF(b) - stdCDF(a)
	}
	return 1 - stdCDF(a) - stdSurvival(b)
}

// LogProb returns ln N(x; Mu, Sigma) − ln P(Min ≤ X ≤ Max) inside the interval
// and −Inf outside.
func (t TruncNormal) LogProb(x float64) float64 {
	if x < t.Min || x > t.Max || math.IsNaN(x) {
		return math.Inf(-1)
	}
	z := (x - t.Mu) / t.Sigma
	return -0.5*z*z - math.Log(t.Sigma) - logSqrt2Pi - math.Log(t.mass())
}

// CDF returns the truncated-normal cumulative probability.
func (t TruncNormal) CDF(x float64) float64 {
	switch {
	case x <= t.Min:
		return 0
	case x >= t.Max:
		return 1
	}
	a, _ := t.standardised()
	z := (x - t.Mu) / t.Sigma
	var c float64
	if t.upper() {
		c = (stdSurvival(a) - stdSurvival(z)) / t.mass()
	} else {
		c = (stdCDF(z) - stdCDF(a)) / t.mass()
	}
	return math.Max(0, math.Min(1, c))
}

// Quantile inverts CDF, working in the upper tail when the interval lies
// above the mean.
func (t TruncNormal) Quantile(p float64) float64 {
	if !(p >= 0 && p <= 1) {
		return math.NaN()
	}
	a, b := t.standardised()
	m := t.mass()
	// The tail probability is formed from the nearer bound, so that it does
	// not come out of a difference of two nearly equal numbers.
	var z float64
	if t.upper() {
		q := stdSurvival(a) - p*m
		if p > 0.5 {
			q = stdSurvival(b) + (1-p)*m
		}
		z = -mathext.NormalQuantile(math.Max(0, math.Min(1, q)))
	} else {
		c := stdCDF(a) + p*m
		if p > 0.5 {
			c = stdCDF(b) - (1-p)*m
		}
		z = mathext.NormalQuantile(math.Max(0, math.Min(1, c)))
	}
	x := t.Mu + t.Sigma*z
	return math.Max(t.Min, math.Min(t.Max, x))
}

// Rand returns a draw by inversion of the CDF.
func (t TruncNormal) Rand(src rand.Source) float64 {
	return t.Quantile(newRand(src).Float64())
}

// Support returns (Min, Max).
func (t TruncNormal) Support() (min, max float64) { return t.Min, t.Max }

// Spread returns the standard deviation of the truncated normal,
// Sigma √(1 + (aφ(a) − bφ(b))/Z − ((φ(a) − φ(b))/Z)²) with a, b the standardised
// bounds and Z their Gaussian probability (Johnson, Kotz & Balakrishnan 1994,
// Continuous Univariate Distributions vol. 1, §10.1).
func (t TruncNormal) Spread() float64 {
	a, b := t.standardised()
	z := t.mass()
	pa, pb := stdPDF(a), stdPDF(b)
	m := (pa - pb) / z
	v := 1 + (a*pa-b*pb)/z - m*m
	return t.Sigma * math.Sqrt(math.Max(v, 0))
}

// IsFixed returns false.
func (t TruncNormal) IsFixed() bool { return false }

// Validate requires finite arguments, Sigma > 0, Min < Max, and an interval
// whose Gaussian probability does not underflow.
func (t TruncNormal) Validate() error {
	if err := checkFinite(NameTruncNormal, t.Mu, t.Sigma, t.Min, t.Max); err != nil {
		return err
	}
	if !(t.Sigma > 0) {
		return fmt.Errorf("truncnormal: sigma = %s must be positive", formatNumber(t.Sigma))
	}
	if !(t.Min < t.Max) {
		return fmt.Errorf("truncnormal: min = %s must be below max = %s", formatNumber(t.Min), formatNumber(t.Max))
	}
	if !(t.mass() > 0) {
		return fmt.Errorf("truncnormal: the interval [%s, %s] lies so far from mu = %s (in units of sigma = %s) that it has no probability in double precision",
			formatNumber(t.Min), formatNumber(t.Max), formatNumber(t.Mu), formatNumber(t.Sigma))
	}
	return nil
}

// String returns "truncnormal(Mu, Sigma, Min, Max)".
func (t TruncNormal) String() string {
	return expression(NameTruncNormal, t.Mu, t.Sigma, t.Min, t.Max)
}

// LogUniform is flat in ln x on [Min, Max], 0 < Min < Max: the density is
// 1/(x ln(Max/Min)). It suits scale parameters such as arm widths.
type LogUniform struct {
	Min, Max float64
}

func (l LogUniform) logRatio() float64 { return math.Log(l.Max / l.Min) }

// LogProb returns −ln x − ln ln(Max/Min) inside [Min, Max] and −Inf outside.
func (l LogUniform) LogProb(x float64) float64 {
	if x < l.Min || x > l.Max || math.IsNaN(x) {
		return math.Inf(-1)
	}
	return -math.Log(x) - math.Log(l.logRatio())
}

// CDF returns ln(x/Min)/ln(Max/Min), clamped to [0, 1].
func (l LogUniform) CDF(x float64) float64 {
	switch {
	case x <= l.Min:
		return 0
	case x >= l.Max:
		return 1
	}
	return math.Log(x/l.Min) / l.logRatio()
}

// Quantile returns Min (Max/Min)^p.
func (l LogUniform) Quantile(p float64) float64 {
	if !(p >= 0 && p <= 1) {
		return math.NaN()
	}
	x := l.Min * math.Exp(p*l.logRatio())
	return math.Max(l.Min, math.Min(l.Max, x))
}

// Rand returns a draw by inversion of the CDF.
func (l LogUniform) Rand(src rand.Source) float64 {
	return l.Quantile(newRand(src).Float64())
}

// Support returns (Min, Max).
func (l LogUniform) Support() (min, max float64) { return l.Min, l.Max }

// Spread returns the standard deviation, from E[x] = (Max − Min)/L and
// E[x²] = (Max² − Min²)/(2L), L = ln(Max/Min) (integrals of x·1/(xL) and
// x²·1/(xL) over [Min, Max]).
func (l LogUniform) Spread() float64 {
	L := l.logRatio()
	m := (l.Max - l.Min) / L
	m2 := (l.Max - l.Min) * (l.Max + l.Min) / (2 * L)
	return math.Sqrt(math.Max(m2-m*m, 0))
}

// IsFixed returns false.
func (l LogUniform) IsFixed() bool { return false }

// Validate requires finite bounds with 0 < Min < Max.
func (l LogUniform) Validate() error {
	if err := checkFinite(NameLogUniform, l.Min, l.Max); err != nil {
		return err
	}
	if !(l.Min > 0) {
		return fmt.Errorf("loguniform: min = %s must be positive", formatNumber(l.Min))
	}
	if !(l.Min < l.Max) {
		return fmt.Errorf("loguniform: min = %s must be below max = %s", formatNumber(l.Min), formatNumber(l.Max))
	}
	return nil
}

// String returns "loguniform(Min, Max)".
func (l LogUniform) String() string { return expression(NameLogUniform, l.Min, l.Max) }

// stdCDF is Φ(z), the standard normal CDF, from erfc for accuracy in the lower tail.
func stdCDF(z float64) float64 { return 0.5 * math.Erfc(-z/math.Sqrt2) }

// stdSurvival is Q(z) = 1 − Φ(z), from erfc for accuracy in the upper tail.
func stdSurvival(z float64) float64 { return 0.5 * math.Erfc(z/math.Sqrt2) }

// stdPDF is φ(z), the standard normal density.
func stdPDF(z float64) float64 { return math.Exp(-0.5*z*z - logSqrt2Pi) }

// newRand wraps src; a nil src uses the runtime's global generator.
func newRand(src rand.Source) *rand.Rand {
	if src == nil {
		return rand.New(globalSource{})
	}
	return rand.New(src)
}

// globalSource draws from math/rand/v2's global generator.
type globalSource struct{}

func (globalSource) Uint64() uint64 { return rand.Uint64() }

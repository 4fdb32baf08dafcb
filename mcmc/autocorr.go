package mcmc

import (
	"math"

	"gonum.org/v1/gonum/dsp/fourier"
)

// DefaultWindow is the constant c of Sokal's automatic window used when a
// caller passes zero (Sokal 1997, "Monte Carlo methods in statistical
// mechanics: foundations and new algorithms", in Functional Integration,
// NATO ASI Series B 361, 131).
const DefaultWindow = 5

// fftSize returns the smallest n' ≥ n whose only prime factors are 2, 3 and
// 5, sizes for which the FFT is fast.
func fftSize(n int) int {
	best := 1
	for best < n {
		best <<= 1
	}
	for p5 := 1; p5 < best; p5 *= 5 {
		for p35 := p5; p35 < best; p35 *= 3 {
			m := p35
			for m < n {
				m <<= 1
			}
			best = min(best, m)
		}
	}
	return best
}

// acovWork computes autocovariance sums of series of one length with a
// zero-padded FFT: padding to at least 2N−1 keeps the circular correlation
// from wrapping around. The power spectra of several series are summed, so
// that one backward transform serves them all.
type acovWork struct {
	n     int
	fft   *fourier.FFT
	seq   []float64
	coeff []complex128
	power []complex128
}

func newAcovWork(n int) *acovWork {
	m := fftSize(2*n - 1)
	return &acovWork{n: n, fft: fourier.NewFFT(m), seq: make([]float64, m),
		coeff: make([]complex128, m/2+1), power: make([]complex128, m/2+1)}
}

// add adds the power spectrum of x − mean (len(x) = N) to the running sum.
func (w *acovWork) add(x []float64, mean float64) {
	for i, v := range x {
		w.seq[i] = v - mean
	}
	clear(w.seq[len(x):])
	w.fft.Coefficients(w.coeff, w.seq)
	for i, c := range w.coeff {
		w.power[i] += complex(real(c)*real(c)+imag(c)*imag(c), 0)
	}
}

// sums writes into acc[t], t = 0…N−1, the summed autocovariance sums
// Σ_series Σ_s (x_s − mean)(x_{s+t} − mean) of the series added so far, and
// clears the running sum.
func (w *acovWork) sums(acc []float64) {
	w.fft.Sequence(w.seq, w.power)
	// gonum's backward transform is unnormalised: divide by its length.
	inv := 1 / float64(len(w.seq))
	for t := range acc {
		acc[t] = w.seq[t] * inv
	}
	clear(w.power)
}

// AutocorrFunc returns the normalised autocorrelation function ρ(t),
// t = 0…N−1, of the series x (length N) about its own mean, with the
// autocovariance estimated as (1/N) Σ_s (x_s − x̄)(x_{s+t} − x̄) and computed by
// FFT. ρ(0) = 1; a constant series gives all zeros. If dst has length N it is
// used for the result.
func AutocorrFunc(dst, x []float64) []float64 {
	if len(dst) != len(x) {
		dst = make([]float64, len(x))
	} else {
		clear(dst)
	}
	if len(x) == 0 {
		return dst
	}
	var mean float64
	for _, v := range x {
		mean += v
	}
	mean /= float64(len(x))
	w := newAcovWork(len(x))
	w.add(x, mean)
	w.sums(dst)
	normalise(dst)
	return dst
}

func normalise(acf []float64) {
	if acf[0] <= 0 {
		clear(acf)
		return
	}
	inv := 1 / acf[0]
	for t := range acf {
		acf[t] *= inv
	}
}

// EnsembleAutocorr returns the autocorrelation function of an ensemble of
// equally long series (series[k] is walker k's trace): the autocovariances
// of every series about the mean of the whole ensemble are averaged, then
// normalised so that ρ(0) = 1. Taking the ensemble mean rather than each
// walker's own mean (a choice of this package) lets walkers that have not
// mixed show up as a long correlation instead of being hidden.
// Series shorter than the first are not allowed; it returns nil for an empty
// ensemble.
func EnsembleAutocorr(series [][]float64) []float64 {
	if len(series) == 0 || len(series[0]) == 0 {
		return nil
	}
	n := len(series[0])
	var mean float64
	for _, x := range series {
		for _, v := range x[:n] {
			mean += v
		}
	}
	mean /= float64(n * len(series))
	acf := make([]float64, n)
	w := newAcovWork(n)
	for _, x := range series {
		w.add(x[:n], mean)
	}
	w.sums(acf)
	normalise(acf)
	return acf
}

// IntegratedTime returns the integrated autocorrelation time
//
//	τ(M) = 1 + 2 Σ_{t=1}^{M} ρ(t)
//
// of an autocorrelation function, with M chosen by Sokal's automatic window:
// the smallest M with M ≥ c·τ(M) (Sokal 1997; c = 5 is his usual choice
// and c ≤ 0 means DefaultWindow). It also returns M. If no such M exists
// before the end of acf the series is too short for a reliable estimate: the
// estimate with M = len(acf)−1 is returned together with ok = false.
func IntegratedTime(acf []float64, c float64) (tau float64, window int, ok bool) {
	if c <= 0 {
		c = DefaultWindow
	}
	if len(acf) == 0 {
		return math.NaN(), 0, false
	}
	tau = 1
	for m := 1; m < len(acf); m++ {
		tau += 2 * acf[m]
		if float64(m) >= c*tau {
			return tau, m, true
		}
	}
	return tau, len(acf) - 1, false
}

// AutocorrTime returns the integrated autocorrelation time, in samples, of an
// ensemble of equally long series (series[k] is walker k's trace of one
// parameter), from the ensemble-averaged autocorrelation function
// (EnsembleAutocorr) and Sokal's window with constant c (0 means
// DefaultWindow). ok is false when the series are too short for the window
// (see IntegratedTime); the returned τ is then a lower bound.
func AutocorrTime(series [][]float64, c float64) (tau float64, ok bool) {
	acf := EnsembleAutocorr(series)
	if acf == nil {
		return math.NaN(), false
	}
	if acf[0] == 0 {
		// A constant ensemble: no information.
		return math.NaN(), false
	}
	tau, _, ok = IntegratedTime(acf, c)
	return tau, ok
}

// EffectiveSize returns the effective sample size N·K/τ of K series of N
// samples each, with τ from AutocorrTime (window constant c, 0 for the
// default).
func EffectiveSize(series [][]float64, c float64) float64 {
	if len(series) == 0 {
		return 0
	}
	tau, _ := AutocorrTime(series, c)
	return float64(len(series)*len(series[0])) / tau
}

// AcceptanceFractions returns accepted[k]/steps for every walker k: the
// fraction of its proposals that were accepted.
func AcceptanceFractions(accepted []int, steps int) []float64 {
	out := make([]float64, len(accepted))
	if steps <= 0 {
		return out
	}
	for k, a := range accepted {
		out[k] = float64(a) / float64(steps)
	}
	return out
}

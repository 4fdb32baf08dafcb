package mcmc

import (
	"math"
	"math/rand/v2"
	"testing"
)

// ar1 returns w independent stationary AR(1) series x_t = ρ x_{t−1} + √(1−ρ²) ε_t
// of length n, unit variance, started from the stationary distribution.
func ar1(w, n int, rho float64, seed uint64) [][]float64 {
	r := rand.New(rand.NewPCG(seed, 1))
	s := math.Sqrt(1 - rho*rho)
	out := make([][]float64, w)
	for k := range out {
		x := make([]float64, n)
		x[0] = r.NormFloat64()
		for t := 1; t < n; t++ {
			x[t] = rho*x[t-1] + s*r.NormFloat64()
		}
		out[k] = x
	}
	return out
}

// The integrated autocorrelation time of an AR(1) process is
// τ = 1 + 2 Σ_{t≥1} ρ^t = (1 + ρ)/(1 − ρ), since its autocorrelation is
// ρ(t) = ρ^|t| (Sokal 1997). The estimate must lie within 10%. The length is
// chosen so that 10% is 4 standard errors by Sokal's variance formula
// var(τ̂) ≈ 2(2M+1)τ²/N (Sokal 1997; the equation from memory) with window
// M ≈ cτ, c = 5. With -short the slowest case, ρ = 0.99, is left out.
func TestAutocorrTimeAR1(t *testing.T) {
	const walkers = 16
	rhos := []float64{0, 0.5, 0.9, 0.99}
	if testing.Short() {
		rhos = rhos[:3] // ρ = 0.99 needs 6.4 million draws
	}
	for i, rho := range rhos {
		want := (1 + rho) / (1 - rho)
		m := DefaultWindow*want + 1
		total := 2 * (2*m + 1) * (4 / 0.1) * (4 / 0.1)
		n := int(math.Ceil(total / walkers))
		series := ar1(walkers, n, rho, uint64(100+i))
		got, ok := AutocorrTime(series, 0)
		if !ok {
			t.Errorf("ρ = %v: window incomplete", rho)
		}
		t.Logf("ρ = %v: τ = %.3f, want %.3f (%d × %d draws)", rho, got, want, walkers, n)
		if math.Abs(got-want) > 0.1*want {
			t.Errorf("ρ = %v: τ = %.3f, want %.3f within 10%%", rho, got, want)
		}
		ess := EffectiveSize(series, 0)
		if math.Abs(ess*got-float64(walkers*n)) > 1e-6*float64(walkers*n) {
			t.Errorf("ρ = %v: ESS·τ = %v, want the draw count %d", rho, ess*got, walkers*n)
		}
	}
}

// The FFT autocorrelation must equal the direct sum of its definition,
// ρ(t) = Σ_s (x_s − x̄)(x_{s+t} − x̄) / Σ_s (x_s − x̄)², for the single-series and
// the ensemble (ensemble mean, summed over walkers) forms.
func TestAutocorrFuncMatchesDefinition(t *testing.T) {
	series := ar1(3, 257, 0.7, 5)
	direct := func(xs [][]float64, perSeriesMean bool) []float64 {
		n := len(xs[0])
		var gm float64
		for _, x := range xs {
			for _, v := range x {
				gm += v
			}
		}
		gm /= float64(n * len(xs))
		acf := make([]float64, n)
		for _, x := range xs {
			m := gm
			if perSeriesMean {
				m = 0
				for _, v := range x {
					m += v
				}
				m /= float64(n)
			}
			for lag := 0; lag < n; lag++ {
				for s := 0; s+lag < n; s++ {
					acf[lag] += (x[s] - m) * (x[s+lag] - m)
				}
			}
		}
		for lag := n - 1; lag >= 0; lag-- {
			acf[lag] /= acf[0]
		}
		return acf
	}
	for name, c := range map[string]struct{ got, want []float64 }{
		"single":   {AutocorrFunc(nil, series[0]), direct(series[:1], true)},
		"ensemble": {EnsembleAutocorr(series), direct(series, false)},
	} {
		for lag := range c.want {
			if math.Abs(c.got[lag]-c.want[lag]) > 1e-12 {
				t.Fatalf("%s: ρ(%d) = %.15g, direct sum %.15g", name, lag, c.got[lag], c.want[lag])
			}
		}
	}
	if acf := AutocorrFunc(nil, []float64{2, 2, 2}); acf[0] != 0 || acf[2] != 0 {
		t.Errorf("constant series: %v, want zeros", acf)
	}
}

// Sokal's window on an exact exponential autocorrelation ρ(t) = ρ^t: the
// truncated sum is τ(M) = 1 + 2ρ(1 − ρ^M)/(1 − ρ) and M is the first lag
// with M ≥ c·τ(M).
func TestIntegratedTimeWindow(t *testing.T) {
	for _, rho := range []float64{0.5, 0.9} {
		acf := make([]float64, 2000)
		for i := range acf {
			acf[i] = math.Pow(rho, float64(i))
		}
		tau, m, ok := IntegratedTime(acf, 5)
		wantM := 0
		for k := 1; ; k++ {
			tk := 1 + 2*rho*(1-math.Pow(rho, float64(k)))/(1-rho)
			if float64(k) >= 5*tk {
				wantM = k
				break
			}
		}
		wantTau := 1 + 2*rho*(1-math.Pow(rho, float64(wantM)))/(1-rho)
		if !ok || m != wantM || math.Abs(tau-wantTau) > 1e-12 {
			t.Errorf("ρ = %v: τ = %v, M = %d, ok %v; want τ = %v, M = %d", rho, tau, m, ok, wantTau, wantM)
		}
	}
	// Too short for the window.
	if _, _, ok := IntegratedTime([]float64{1, 0.99, 0.98, 0.97}, 5); ok {
		t.Error("a 4-lag function with slow decay should not fill the window")
	}
}

func TestAcceptanceFractions(t *testing.T) {
	got := AcceptanceFractions([]int{0, 5, 10}, 10)
	if got[0] != 0 || got[1] != 0.5 || got[2] != 1 {
		t.Errorf("got %v", got)
	}
}

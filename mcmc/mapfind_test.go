package mcmc

import (
	"math"
	"math/rand/v2"
	"testing"
)

// correlatedGaussian returns the log-density −½ xᵀ A x of a zero-mean Gaussian in n
// dimensions whose precision A = Lᵀ L has a random lower-triangular L with a unit
// diagonal: strongly correlated, maximum 0 at the origin.
func correlatedGaussian(n int, seed uint64) func([]float64) float64 {
	rng := rand.New(rand.NewPCG(seed, 1))
	L := make([][]float64, n)
	for i := range L {
		L[i] = make([]float64, i+1)
		for j := range i {
			L[i][j] = 0.6 * rng.NormFloat64()
		}
		L[i][i] = 1
	}
	return func(x []float64) float64 {
		var s float64
		for i := range L {
			var v float64
			for j, a := range L[i] {
				v += a * x[j]
			}
			s += v * v
		}
		return -0.5 * s
	}
}

func TestFindMAPReportsConvergence(t *testing.T) {
	// Nelder–Mead on a correlated 20-dimensional Gaussian (closed form: maximum 0 at the
	// origin). A small budget cannot reach the maximum and must say so; a generous one
	// must settle within 1e-3 of it and say that too.
	const n = 20
	f := correlatedGaussian(n, 7)
	x0 := make([]float64, n)
	for i := range x0 {
		x0[i] = 1
	}
	r, err := FindMAP(f, x0, &MAPSettings{MaxEvaluations: 300})
	if err != nil {
		t.Fatal(err)
	}
	if r.Converged {
		t.Errorf("300 evaluations: reported converged at %.3g below the maximum", -r.LogDensity)
	}
	r, err = FindMAP(f, x0, &MAPSettings{MaxEvaluations: 400000, Restarts: 50})
	if err != nil {
		t.Fatal(err)
	}
	if !r.Converged {
		t.Errorf("400000 evaluations: not converged after %d rounds (%.3g below the maximum, last gain %.2g)", r.Rounds, -r.LogDensity, r.LastGain)
	}
	if math.Abs(r.LogDensity) > 1e-3 {
		t.Errorf("maximum %.3g, want 0 within 1e-3 (%d rounds, %d evaluations)", r.LogDensity, r.Rounds, r.Evaluations)
	}
	// A search continued from a point it cannot improve on (here the maximum itself) has
	// settled even when its budget allows no restart.
	r, err = FindMAP(f, make([]float64, n), &MAPSettings{MaxEvaluations: 3000, Restarts: -1})
	if err != nil {
		t.Fatal(err)
	}
	if !r.Converged || r.Rounds != 1 {
		t.Errorf("started at the maximum: converged %v after %d rounds (gain %.2g), want converged after 1", r.Converged, r.Rounds, r.LastGain)
	}
}

package arms

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestMixtureMatchesDensities checks Mixture against Σ f_m ρ_m from Densities, at random
// points over the whole disk, for testArms (multi-turn, kinked, short and leading arms)
// with and without a width slope and with a wide end softening, so that both end factors
// of a winding are below one at once. The tolerance allows for the rounding of the
// centre line's radius, which the Gaussian of an offset of ~10 widths amplifies ~100-fold.
func TestMixtureMatchesDensities(t *testing.T) {
	r := rand.New(rand.NewPCG(4, 9))
	for _, lay := range []Layout{
		{Arms: testArms(), R0: testR0},
		{Arms: testArms(), R0: testR0, WidthSlope: 0.03, EdgeSoftening: 20 * deg},
	} {
		d, err := NewDensity(lay)
		if err != nil {
			t.Fatal(err)
		}
		f := make([]float64, d.NumArms()+1)
		for k := range f {
			f[k] = r.Float64()
		}
		f[2] = 0 // an arm left out of the mixture
		dens := make([]float64, len(f))
		for range 20000 {
			R := 16 * math.Sqrt(r.Float64())
			beta := 2 * math.Pi * (r.Float64() - 0.5)
			d.Densities(dens, R, beta)
			var want float64
			for m, v := range dens {
				want += f[m] * v
			}
			got := d.Mixture(f, R, beta)
			if !(math.Abs(got-want) <= 1e-11*want) {
				t.Fatalf("R %g β %g: Mixture %.17g, Σ f Densities %.17g", R, beta, got, want)
			}
		}
	}
}

package arms

import (
	"math"
	"math/rand/v2"
	"testing"
)

// mixerLayouts are the layouts of the Mixer tests: testArms (multi-turn, kinked, short and
// leading arms) as they are, and with a width slope and an end softening wide enough that
// both end factors of a winding are below one at once.
func mixerLayouts() []Layout {
	return []Layout{
		{Arms: testArms(), R0: testR0},
		{Arms: testArms(), R0: testR0, WidthSlope: 0.03, EdgeSoftening: 20 * deg},
	}
}

// mixerPoint draws a point (R, β) uniform over the disk within 16 kpc, or, near, within 12
// widths of one of a random arm's windings, where the winding's Gaussian is neither 1 nor
// negligible.
func mixerPoint(r *rand.Rand, lay Layout, near bool) (R, beta float64) {
	R = 16 * math.Sqrt(r.Float64())
	beta = 2 * math.Pi * (r.Float64() - 0.5)
	if near {
		a := lay.Arms[r.IntN(len(lay.Arms))]
		first, last := a.Windings(beta, lay.soft())
		n := first + r.IntN(last-first+1)
		R = math.Abs(a.Radius(beta+twoPi*float64(n)) + 12*a.Width*(2*r.Float64()-1))
	}
	return R, beta
}

// TestMixerMatchesDensities checks Mixer against Σ f_m ρ_m from Densities, at random
// points over the whole disk, for testArms (multi-turn, kinked, short and leading arms)
// with and without a width slope and with a wide end softening, so that both end factors
// of a winding are below one at once; with the field factored out (f_0 > 0, where windings
// below Negligible of the field's term are left out), with a field too small to factor out
// and with none. The tolerance allows 5e-13 of the mixture for rounding (of the centre line's
// radius, which the Gaussian of an offset of ~10 widths amplifies ~100-fold), and, for the
// windings and end factors left out, 24 Negligible times the field's term (6 arms, at
// most 2 windings each at these points, each off by less than 2 Negligible). Half the points lie within 12 widths of
// an arm, where a winding's Gaussian is neither 1 nor negligible.
func TestMixerMatchesDensities(t *testing.T) {
	r := rand.New(rand.NewPCG(4, 9))
	for _, lay := range mixerLayouts() {
		d, err := NewDensity(lay)
		if err != nil {
			t.Fatal(err)
		}
		for _, f0 := range []float64{-1, 1e-120, 0} {
			f := make([]float64, d.NumArms()+1)
			for k := range f {
				f[k] = r.Float64()
			}
			f[2] = 0 // an arm left out of the mixture
			if f0 >= 0 {
				f[0] = f0
			}
			var m Mixer
			m.Reset(d, f)
			dens := make([]float64, len(f))
			for i := range 20000 {
				R, beta := mixerPoint(r, lay, i%2 == 1)
				d.Densities(dens, R, beta)
				var want float64
				for m, v := range dens {
					want += f[m] * v
				}
				F, S := m.At(R, beta)
				got := math.Exp(F) * S
				// Rounding, and the windings left out: each below Negligible of the field's term.
				tol := 5e-13*want + 24*Negligible*f[0]*dens[0]
				if !(math.Abs(got-want) <= tol) {
					t.Fatalf("f0 %g R %g β %g: Mixer %.17g, Σ f Densities %.17g", f[0], R, beta, got, want)
				}
			}
		}
	}
}

// TestLogApprox checks logApprox against math.Log within logApproxErr, over arguments from
// 1e-9 to 1e9, at and around the powers of two and their √2 multiples, where the reduction
// switches.
func TestLogApprox(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	var xs []float64
	for range 100000 {
		xs = append(xs, math.Exp(r.Float64()*41.4-20.7))
	}
	for e := -30; e <= 30; e++ {
		for _, m := range []float64{1, math.Sqrt2} {
			x := math.Ldexp(m, e)
			xs = append(xs, x, math.Nextafter(x, 0), math.Nextafter(x, math.Inf(1)))
		}
	}
	var worst float64
	for _, x := range xs {
		d := math.Abs(logApprox(x) - math.Log(x))
		if !(d <= logApproxErr) {
			t.Fatalf("logApprox(%g) = %.17g, ln = %.17g", x, logApprox(x), math.Log(x))
		}
		worst = max(worst, d)
	}
	t.Logf("largest error %.3g (bound %g)", worst, logApproxErr)
}

// TestMixerLeavesOutNegligible checks the bound on what Mixer leaves out: against the same
// Mixer with the relative cut switched off (so that only windings whose Gaussian is below
// e^−70 are left out, as in Densities), S, the mixture in units of the field's term, may
// differ by the windings and end factors left out, less than 2 Negligible per winding (at
// most 12 windings at these points), and by the rounding of a sum in another order. Points lie within 12 widths of an arm or anywhere on the disk.
func TestMixerLeavesOutNegligible(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 3))
	for _, lay := range mixerLayouts() {
		d, err := NewDensity(lay)
		if err != nil {
			t.Fatal(err)
		}
		for _, f0 := range []float64{0.5, 0.01, 1e-6} {
			f := make([]float64, d.NumArms()+1)
			for k := range f {
				f[k] = r.Float64()
			}
			f[0] = f0
			var cut, full Mixer
			cut.Reset(d, f)
			full.Reset(d, f)
			for k := range full.arms {
				full.arms[k].lnCut = math.Inf(1)
			}
			left := 0
			for i := range 20000 {
				R, beta := mixerPoint(r, lay, i%2 == 1)
				_, got := cut.At(R, beta)
				_, want := full.At(R, beta)
				if got != want {
					left++
				}
				if !(math.Abs(got-want) <= 24*Negligible+4e-16*want) {
					t.Fatalf("f0 %g R %g β %g: S %.17g, without the cut %.17g", f0, R, beta, got, want)
				}
			}
			if left == 0 {
				t.Errorf("f0 %g: no winding was left out at any point", f0)
			}
		}
	}
}

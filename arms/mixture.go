package arms

import (
	"math"

	"github.com/mirabilis-astro/mirabilis/internal/fastexp"
)

// windingSteps holds the factors that carry an arm's density from one winding to the next
// without a logarithm or an exponential of its own.
type windingSteps struct {
	// step1 and step2 are R(β + 2π)/R(β) = exp(−2π tan ψ) below and beyond the kink: the
	// windings of a log-periodic arm differ by 2π tan ψ in ln R.
	step1, step2 float64
	// edgeSpan is exp(−Δβ/τ), Δβ = BetaEnd − BetaStart: the product e^−u e^−v of the two
	// end factors' exponentials (u + v = Δβ/τ), so that one exponential gives both.
	edgeSpan float64
}

func newWindingSteps(c *curve, span, tau float64) windingSteps {
	return windingSteps{
		step1:    math.Exp(-twoPi * c.t1),
		step2:    math.Exp(-twoPi * c.t2),
		edgeSpan: math.Exp(-span / tau),
	}
}

// Mixture returns Σ_m f[m] ρ_m(R, β), the mixture of the field (m = 0) and arm densities per
// kpc² weighted by f (length NumArms()+1), at radius R (kpc) and azimuth beta (radians, any
// real value). It adds the same terms as Densities (windings whose Gaussian factor is below
// e^−70 left out) in the same order, with the windings' radii carried from one to the next
// by the factor exp(−2π tan ψ) and the two end factors of a winding from one exponential,
// so that it agrees with Σ f[m]·Densities to rounding. Arms with f[m] = 0 are skipped. It
// panics if len(f) != NumArms()+1. It does not allocate.
func (d *Density) Mixture(f []float64, R, beta float64) float64 {
	if len(f) != len(d.arms)+1 {
		panic("arms: Mixture: len(f) != NumArms()+1")
	}
	r := R
	if !(r >= minRadius) {
		r = minRadius
	}
	sum := f[0] * fastexp.Exp(d.lnField-R*d.invScale)
	invR := 1 / r
	arms := d.arms
	f = f[1 : len(arms)+1]
	for k := range arms {
		if f[k] == 0 {
			continue
		}
		sum += f[k] * d.armSteps(&arms[k], r, beta, invR)
	}
	return sum
}

// armSteps is arm (ρ_k in linear form) with the windings' radii and end factors from
// windingSteps.
func (d *Density) armSteps(c *armConst, R, beta, invR float64) float64 {
	w := c.w0
	if d.slope != 0 {
		w = widthAt(c.w0, d.slope, R-d.r0)
	}
	invW := 1 / w
	first, last := windings(beta, c.lo, c.hi)
	bn := beta + twoPi*float64(first)
	below := bn < c.kink
	var rk float64
	if below {
		rk = fastexp.Exp(c.a1 - c.t1*bn)
	} else {
		rk = fastexp.Exp(c.a2 - c.t2*bn)
	}
	var s float64
	for n := first; ; {
		cs := c.cos2
		if below {
			cs = c.cos1
		}
		x := (R - rk) * cs * invW
		if h := 0.5 * x * x; h < maxHalfSquare {
			s += d.edgeSteps(c, bn) * cs * fastexp.Exp(-h)
		}
		if n++; n > last {
			break
		}
		bn = beta + twoPi*float64(n)
		switch {
		case below && bn < c.kink:
			rk *= c.fast.step1
		case !below:
			rk *= c.fast.step2
		default: // the winding crosses the kink
			below = false
			rk = fastexp.Exp(c.a2 - c.t2*bn)
		}
	}
	return s * invW * c.norm * invR
}

// edgeSteps is edge((β_n − start)/τ, (end − β_n)/τ) with e^−v = exp(−Δβ/τ)/e^−u.
func (d *Density) edgeSteps(c *armConst, bn float64) float64 {
	u := (bn - c.start) * d.invSoft
	v := (c.end - bn) * d.invSoft
	p, q := 1.0, 1.0
	switch {
	case u < 37:
		eu := fastexp.Exp(-u)
		p += eu
		if v < 37 {
			q += c.fast.edgeSpan / eu
		}
	case v < 37:
		q += fastexp.Exp(-v)
	}
	return 1 / (p * q)
}

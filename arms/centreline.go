package arms

import "math"

// ArmSpan returns the azimuths, in radians, that bound arm k's density (0-based, in Layout
// order): lo and hi, between which its windings are counted (BetaStart − WindingReach·τ and
// BetaEnd + WindingReach·τ), the arm's range start and end, and the kink's azimuth (+Inf for
// an arm without one). Over the plane, ∫ ρ_k dA = ∫ from lo to hi of dβ ∫ dR of the
// centre-line profile (see CentreLine): every winding that LogArm counts is one stretch of
// unfolded azimuth. It panics if k is out of range.
func (d *Density) ArmSpan(k int) (lo, hi, start, end, kink float64) {
	c := &d.arms[k]
	return c.lo, c.hi, c.start, c.end, c.kink
}

// CentreLine returns what arm k's density is at unfolded azimuth beta (radians): the centre
// line's radius R_k(β) (kpc), the cosine of the local pitch angle ψ(β), and the end factor
// divided by its integral, E(β)/Z. The density of the arm's winding at β is then
// ρ = E(β)/Z · cos ψ · N((R − R_k) cos ψ; 0, w(R)) / R (see Width), so that in
// galactocentric polar coordinates its mass element is
// E(β)/Z · cos ψ · N((R − R_k) cos ψ; 0, w(R)) dR dβ. It panics if k is out of range.
func (d *Density) CentreLine(k int, beta float64) (R, cosPsi, share float64) {
	c := &d.arms[k]
	lnR, cs, _ := c.lnR(beta)
	e := edge((beta-c.start)*d.invSoft, (c.end-beta)*d.invSoft)
	return math.Exp(lnR), cs, e * math.Exp(-c.lnZ)
}

// Width returns arm k's width w_k(R) = max(w_k + g (R − R0), MinWidth) in kpc at radius R
// (kpc), as the density uses it. It panics if k is out of range.
func (d *Density) Width(k int, R float64) float64 {
	return widthAt(d.arms[k].w0, d.slope, R-d.r0)
}

// WidthSlope returns the width slope g of the layout (kpc per kpc).
func (d *Density) WidthSlope() float64 { return d.slope }

package mock

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/mirabilis-astro/mirabilis/arms"
	"github.com/mirabilis-astro/mirabilis/model"
)

// placer draws the places of sources from the spatial density of the model's likelihood
// (MODEL.md §4, §5 and §9): a component m chosen with the Galaxy's fraction f_m, a point of
// the plane from its density ρ_m(R, β), a height from the layer N(z; 0, H), and the source
// kept when its distance lies in [d_min, d_max] and with the selection's probability
// S(l, b, d). The kept places then follow Σ_m f_m ρ_m N S over the distance range, the
// density whose share along each sightline the likelihood integrates.
type placer struct {
	spec  *model.Spec
	p     *model.Params
	cum   []float64 // cumulative Galaxy fractions, field first
	arms  []armDrawer
	noLay bool // draw every source in the plane of the Sun (b = 0), for vertical = "none"
}

// place is one drawn source's place.
type place struct {
	comp    int     // 0 the field, k+1 arm k
	R, beta float64 // kpc and rad; beta is the arm's own unwrapped azimuth on arms
	z       float64 // kpc above the mid-plane
	l, b, d float64 // rad, rad, kpc: as seen from the Sun
}

func newPlacer(spec *model.Spec, p *model.Params, fractions []float64) (*placer, error) {
	pl := &placer{spec: spec, p: p, noLay: !spec.Vertical}
	var c float64
	for _, f := range fractions {
		c += f
		pl.cum = append(pl.cum, c)
	}
	for k := range p.Layout.Arms {
		pl.arms = append(pl.arms, newArmDrawer(p, k))
	}
	return pl, nil
}

// draw proposes one place from the Galaxy, before the distance range and the selection:
// ok is false when the proposal was rejected and another must be drawn. An error means the
// arm's proposal did not bound its density (see armDrawer).
func (pl *placer) draw(rng *rand.Rand) (pc place, ok bool, err error) {
	u := rng.Float64()
	for pc.comp < len(pl.cum)-1 && u > pl.cum[pc.comp] {
		pc.comp++
	}
	if pc.comp == 0 {
		// ρ_0 = exp(−R/h)/(2π h²) per unit area: R is Gamma(2, h), β uniform.
		h := pl.spec.DiskScale
		pc.R = -h * math.Log(rng.Float64()*rng.Float64())
		pc.beta = (2*rng.Float64() - 1) * math.Pi
	} else {
		// Proposals are drawn until one is accepted: the component stays the one chosen.
		a := &pl.arms[pc.comp-1]
		for !ok {
			if pc.R, pc.beta, ok, err = a.draw(rng); err != nil {
				return pc, false, err
			}
		}
	}
	if !pl.noLay {
		pc.z = pl.p.ScaleHeight * rng.NormFloat64()
	}
	// The in-plane position relative to the Sun, then the height relative to the Sun:
	// z = d sin b + z⊙.
	R0 := pl.p.Motion.R0()
	sb, cb := math.Sincos(pc.beta)
	px, py := R0-pc.R*cb, pc.R*sb
	dIn := math.Hypot(px, py)
	dz := 0.0
	if !pl.noLay {
		dz = pc.z - pl.p.ZSun
	}
	pc.d = math.Hypot(dIn, dz)
	pc.l = math.Atan2(py, px)
	if pc.l < 0 {
		pc.l += 2 * math.Pi
	}
	pc.b = math.Atan2(dz, dIn)
	if pc.d < pl.spec.DMin || pc.d > pl.spec.DMax {
		return pc, false, nil
	}
	sel := &pl.spec.Selection
	if !sel.Direction(pc.l, pc.b) {
		return pc, false, nil
	}
	if sel.HalfDistance != 0 && rng.Float64() >= sel.Completeness(pc.d) {
		return pc, false, nil
	}
	return pc, true, nil
}

// armDrawer draws points of the plane from one arm's density ρ_k by rejection against the
// model's own log-density (arms.Density.LogArm), so that whatever the model's density holds
// — ends softened over τ, the width w_k(R) at the point's own radius, a kink, several
// windings through one point — the draws hold too.
//
// The proposal takes an azimuth β uniform over the windings' reach [β_start − Nτ, β_end + Nτ]
// (N = arms.WindingReach; beyond it the end factor is below 1e-13) and a radius
// R ~ N(R_k(β), c w_k(R_k(β)) / cos ψ(β)), c = spread. Per unit of R and β its density at a
// point is P = Σ_n N(R; R_k(β_n), s_n) / (β_hi − β_lo) over the windings β_n in reach, and
// the target is T = R ρ_k(R, β) = Σ_n E(β_n) N(δ_n; 0, w(R)) cos ψ_n / Z_k. Winding by
// winding T_n/P_n = (β_hi − β_lo)/Z_k · E(β_n) · (c w_n/w(R)) exp(−δ_n²/2 (1/w(R)² − 1/(c w_n)²)),
// at most bound = (β_hi − β_lo)/Z_k · c · widthRoom unless the width changes by a factor of
// widthRoom within the proposal's reach; a point where T/P exceeds the bound is reported as
// an error rather than drawn too rarely.
type armDrawer struct {
	k      int
	arm    arms.Arm
	dens   *arms.Density
	r0, g  float64
	lo, hi float64
	bound  float64
}

const (
	// spread widens the proposal's radius beyond the arm's width, so that the Gaussian of
	// the target, of width w(R) with R near R_k, stays below the proposal's.
	spread = 1.5
	// widthRoom is how much narrower than at the centre line the arm may be where a point
	// is proposed, before the proposal fails to bound the target.
	widthRoom = 2
)

func newArmDrawer(p *model.Params, k int) armDrawer {
	a := p.Layout.Arms[k]
	tau := p.Layout.EdgeSoftening
	if tau == 0 {
		tau = arms.DefaultEdgeSoftening
	}
	span := a.BetaEnd - a.BetaStart
	// Z_k = ∫ E dβ = Δβ / (1 − exp(−Δβ/τ)) (MODEL.md §4).
	z := span / -math.Expm1(-span/tau)
	lo, hi := a.BetaStart-arms.WindingReach*tau, a.BetaEnd+arms.WindingReach*tau
	return armDrawer{k: k, arm: a, dens: p.Density, r0: p.Layout.R0, g: p.Layout.WidthSlope,
		lo: lo, hi: hi, bound: (hi - lo) / z * spread * widthRoom}
}

// scale returns the proposal's spread in R at the unwrapped azimuth beta and the centre line's radius there.
func (a *armDrawer) scale(beta float64) (rk, s float64) {
	rk = a.arm.Radius(beta)
	return rk, spread * a.arm.WidthAt(rk, a.r0, a.g) / math.Cos(a.arm.PitchAt(beta))
}

// draw proposes one point and accepts it with probability T/(bound·P).
func (a *armDrawer) draw(rng *rand.Rand) (R, beta float64, ok bool, err error) {
	beta = a.lo + rng.Float64()*(a.hi-a.lo)
	rk, s := a.scale(beta)
	R = rk + s*rng.NormFloat64()
	if R <= 0 {
		return R, beta, false, nil
	}
	// P summed over the windings in reach through the point.
	var P float64
	first := math.Ceil((a.lo - beta) / (2 * math.Pi))
	for n := first; beta+2*math.Pi*n <= a.hi; n++ {
		rn, sn := a.scale(beta + 2*math.Pi*n)
		x := (R - rn) / sn
		P += math.Exp(-0.5*x*x) / (sn * math.Sqrt(2*math.Pi))
	}
	P /= a.hi - a.lo
	T := R * math.Exp(a.dens.LogArm(a.k, R, beta))
	ratio := T / P
	if ratio > a.bound {
		return R, beta, false, fmt.Errorf("mock: arm %s: its width changes too fast with radius near R = %.3g kpc for the draw (density %.3g times the proposal's bound)",
			a.arm.Name, R, ratio/a.bound)
	}
	return R, beta, rng.Float64()*a.bound < ratio, nil
}

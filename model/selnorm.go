package model

import (
	"fmt"
	"math"
	"slices"

	"github.com/mirabilis-astro/mirabilis/arms"
	"github.com/mirabilis-astro/mirabilis/internal/fastexp"
	"github.com/mirabilis-astro/mirabilis/model/quad"
)

// The selection's normalisation: with a survey selection S(l, b, d) (Selection), each
// component's density is divided by its selected share, so that a source's likelihood is a
// density of its data and the fractions f_m are the Galaxy's, not the catalog's:
//
//	Z_m = ∫ ρ_m S dV over d in [DMin, DMax],   ρ_m = Σ_m(R, β) · N(z; 0, H),  z = d sin b + z⊙,
//
// (with vertical "none": ∫ Σ_m(R, β) S(l, 0, s) dA over the projected distance s in
// [DMin, DMax]). It is computed at every parameter set in three nested steps:
//
//   - the height, in closed form: at a point of the plane at heliocentric (x, y), the
//     declination band admits heights z (relative to the Sun) in intervals bounded by the
//     roots of (P + p_z z)² = sin²δ_e (s² + z²), P = p_x x + p_y y, p the celestial pole in
//     Galactic axes and s² = x² + y² (the declination δ of (x, y, z) obeys
//     sin δ = (P + p_z z)/√(s² + z²)); the 3-D distance limits cut |z| to
//     [√(DMin² − s²), √(DMax² − s²)]; the layer's share in the remaining intervals is a
//     difference of normal CDFs, and the distance term S(√(s² + z²)) is taken to second
//     order in z² with the truncated second moment (by Gauss–Legendre nodes in z where the
//     layer is thick against s, near the Sun);
//   - across: along the radial line from the Galactic centre at azimuth β, in R, split
//     where the line crosses an excluded longitude's edge, the circles s = DMin and
//     s = DMax, and the place where the band's edge meets the mid-plane (graded over the
//     scale H/|dz/dR| on which the layer passes through the edge), Gauss–Legendre on each
//     piece; an arm's line without any of these takes Gauss–Hermite nodes across the arm;
//   - along: in azimuth, by adaptive Gauss–Kronrod (7/15) panels, an arm over its unfolded
//     range (every winding the density counts is one stretch of it, counted once; beyond
//     16τ of its ends the end factor's mass is below 1e-8 and is left out) with breakpoints
//     at its ends and its kink, the field over [−π, π] with breakpoints where the radial
//     line passes the Sun and touches the circles DMin, DMax.
//
// Measured against brute-force integrals (testdata/selnorm) the values are within 7e-6 of
// Z_m; a field and two arms cost 4 500 (whole sky) to 20 000 plane points, a third to half
// of them the field's (BenchmarkNormalisationCases). The field's share depends on R0, the
// disk and the layer only, and a normaliser takes it again while they are unchanged.
//
// The density is the one the likelihood's numerator uses (arms.Density: the same widths,
// end factors and kink), so that the departure of ∫ ρ_m dA from one cancels.

const (
	// armReach is how far across an arm, in widths, its line integral runs: the mass beyond
	// is 4e-8.
	armReach = 5.5
	// normTol is the outer quadrature's tolerance on Σ |K15 − G7|, relative to the
	// component's value; the K15 sums it accepts are far more accurate than that.
	normTol = 3e-5
	// maxOuterPanel is the longest first panel in azimuth (rad).
	maxOuterPanel = 1.0
	// maxOuterSplits bounds the number of bisections of one component's azimuth integral.
	maxOuterSplits = 400
	// sunReach is the distance (kpc) from the Sun within which a radial line gets
	// breakpoints graded toward its nearest point to the Sun.
	sunReach = 1.0
	// tailReach is how far beyond an arm's ends, in units of the end softening τ, its
	// azimuth integral runs.
	tailReach = 16.0
	// layerReach is how far from the mid-plane, in scale heights, the layer is integrated:
	// its share beyond is 1e-19.
	layerReach = 9.0
	// underflowU is where the normal density underflows: exp(−u²/2) is 0 for u beyond it.
	underflowU = 38.61
	// bandReach is how far from the mid-plane, in scale heights, a band edge is looked for
	// above a plane point: beyond it the layer's share is 4e-11, and a point whose edge lies
	// farther is taken as wholly in or wholly out of the band.
	bandReach = 6.5
)

// grading are the offsets, in units of a transition's scale, of the breakpoints placed on
// each side of a steep transition (the layer passing through the band's edge).
var grading = [...]float64{2, 6}

// armPiece and fieldPiece are the longest pieces across, in widths w/cos ψ of the arm and in
// scale lengths h of the field disk; softPiece is the field's longest piece in units of the
// completeness's softness.
const armPiece, fieldPiece, softPiece = 2.0, 3.0, 4.0

var (
	glX, glW   = gaussLegendre(4) // across, on each piece (and near the Sun, in height)
	ghX, ghW   = gaussHermite(6)  // across an arm without breakpoints
	kx, kw, kg = quad.UnitRule()  // along
)

// gaussLegendre returns the n-point Gauss–Legendre nodes and weights on [−1, 1], by
// Newton's method on the Legendre recurrence (Abramowitz & Stegun 1964, 25.4.29).
func gaussLegendre(n int) (x, w []float64) {
	x, w = make([]float64, n), make([]float64, n)
	for i := range (n + 1) / 2 {
		z := math.Cos(math.Pi * (float64(i) + 0.75) / (float64(n) + 0.5))
		var dp float64
		for range 100 {
			p0, p1 := 1.0, 0.0
			for j := 1; j <= n; j++ {
				p0, p1 = ((2*float64(j)-1)*z*p0-(float64(j)-1)*p1)/float64(j), p0
			}
			dp = float64(n) * (z*p0 - p1) / (z*z - 1)
			dz := p0 / dp
			z -= dz
			if math.Abs(dz) < 1e-16 {
				break
			}
		}
		x[i], x[n-1-i] = -z, z
		w[i] = 2 / ((1 - z*z) * dp * dp)
		w[n-1-i] = w[i]
	}
	return x, w
}

// gaussHermite returns the n-point Gauss–Hermite nodes and weights for the weight
// φ(t) = exp(−t²/2)/√(2π): the nodes of the weight exp(−x²) by Newton's method on the
// orthonormal Hermite recurrence (Abramowitz & Stegun 1964, 25.4.46), scaled by √2.
func gaussHermite(n int) (x, w []float64) {
	x, w = make([]float64, n), make([]float64, n)
	const pim4 = 0.7511255444649425 // π^(−1/4)
	var z float64
	xs := make([]float64, n)
	for i := range (n + 1) / 2 {
		switch i {
		case 0:
			z = math.Sqrt(float64(2*n+1)) - 1.85575*math.Pow(float64(2*n+1), -1.0/6)
		case 1:
			z -= 1.14 * math.Pow(float64(n), 0.426) / z
		case 2:
			z = 1.86*z - 0.86*xs[0]
		case 3:
			z = 1.91*z - 0.91*xs[1]
		default:
			z = 2*z - xs[i-2]
		}
		var pp float64
		for range 100 {
			p1, p2 := pim4, 0.0
			for j := 1; j <= n; j++ {
				p1, p2 = z*math.Sqrt(2/float64(j))*p1-math.Sqrt(float64(j-1)/float64(j))*p2, p1
			}
			pp = math.Sqrt(2*float64(n)) * p2
			dz := p1 / pp
			z -= dz
			if math.Abs(dz) < 1e-15 {
				break
			}
		}
		xs[i] = z
		wi := 2 / (pp * pp) / math.Sqrt(math.Pi)
		x[i], x[n-1-i] = math.Sqrt2*z, -math.Sqrt2*z
		w[i], w[n-1-i] = wi, wi
	}
	slices.Reverse(x)
	return x, w
}

// cut is a breakpoint on a radial line: at R (kpc), with the scale (kpc) of the steep
// transition there, or 0 for a jump.
type cut struct{ at, scale float64 }

// fieldKey holds what the field's share depends on besides the selection: R0, the disk's
// scale length, and with the layer H and z⊙ (kpc).
type fieldKey struct{ r0, scale, h, zsun float64 }

// span is one panel of the outer (azimuth) integral with its K15 value and error estimate.
type span struct{ a, b, k, e float64 }

// normaliser computes the Z_m of one selection. Its fixed part describes the selection and
// the distance range; setGeometry supplies R0, H and z⊙ of a parameter set. Its scratch
// space is reused, so that an evaluation does not allocate once it has grown. A
// normaliser is used by one goroutine at a time.
type normaliser struct {
	px, py, pz   float64 // the north celestial pole in Galactic axes
	cutLo, cutHi bool    // whether the band has a lower, an upper declination limit
	sinLo, sinHi float64
	excl         [][4]float64 // excluded longitudes: cos, sin of either edge (start, end)
	exclWide     []bool       // whether the range is wider than π
	rays         [][2]float64 // cos l, sin l of every exclusion edge
	farEdges     []float64    // azimuths β = π − l of the edges' longitudes l (exclusions, band at b = 0)
	dmin, dmax   float64
	compl        bool
	half, soft   float64
	invSoft      float64 // 1/soft
	vertical     bool

	r0, h, zsun float64
	tol         float64
	dens        *arms.Density
	invScale    float64 // 1/h of the field disk
	m2          float64 // H² + z⊙², the layer's second moment about the Sun's height
	nearK       float64 // 3 m2²/8: the bound on S's expansion in z² is |S′|(1/soft + 1/s) nearK/s²
	bandMargin  float64 // 1.01 bandReach H: how far in sin δ, times s, a band edge is looked for
	reach2      float64 // (|z⊙| + layerReach H)²: the layer's reach from the Sun's height, squared
	slope       float64

	cuts []cut
	pts  []float64
	brk  []float64
	todo []span

	// field, fieldZ: the field's share last computed, and what it depends on (fieldSet once
	// there is one).
	field    fieldKey
	fieldZ   float64
	fieldSet bool

	// points counts the plane points at which the layer's share was computed.
	points int
}

// newNormaliser returns the normaliser of selection sel over distances [dmin, dmax] (kpc),
// with the vertical layer or (vertical false) in the plane.
func newNormaliser(sel Selection, vertical bool, dmin, dmax float64) *normaliser {
	n := &normaliser{dmin: dmin, dmax: dmax, vertical: vertical, tol: normTol}
	n.px, n.py, n.pz = icrsToGalactic[0][2], icrsToGalactic[1][2], icrsToGalactic[2][2]
	if sel.hasBand() && sel.DecMin > -math.Pi/2 {
		n.cutLo, n.sinLo = true, math.Sin(sel.DecMin)
	}
	if sel.hasBand() && sel.DecMax < math.Pi/2 {
		n.cutHi, n.sinHi = true, math.Sin(sel.DecMax)
	}
	for _, e := range sel.ExcludeL {
		width := math.Mod(e[1]-e[0], 2*math.Pi)
		if width < 0 {
			width += 2 * math.Pi
		}
		s0, c0 := math.Sincos(e[0])
		s1, c1 := math.Sincos(e[1])
		n.excl = append(n.excl, [4]float64{c0, s0, c1, s1})
		n.exclWide = append(n.exclWide, width > math.Pi)
		for _, l := range e {
			s, c := math.Sincos(l)
			n.rays = append(n.rays, [2]float64{c, s})
		}
	}
	if sel.HalfDistance > 0 {
		n.compl, n.half, n.soft = true, sel.HalfDistance, sel.Softness
		n.invSoft = 1 / sel.Softness
	}
	n.setFarEdges(sel)
	return n
}

// setFarEdges lists the azimuths at which a radial line from the Galactic centre runs
// parallel to an edge of the selection in the plane: an excluded range's edge at longitude l
// or a longitude where the band's edge crosses b = 0. There the line meets the edge ever
// farther out, and the field's line integral changes steeply with β (over about
// sin l / h radians when the edge passes near the centre): the outer integral breaks there.
// The line at β runs toward longitude l = π − β.
func (n *normaliser) setFarEdges(sel Selection) {
	add := func(l float64) {
		b := math.Remainder(math.Pi-l, 2*math.Pi)
		n.farEdges = append(n.farEdges, b)
	}
	for _, e := range sel.ExcludeL {
		add(e[0])
		add(e[1])
	}
	// At b = 0, sin δ = p_x cos l + p_y sin l = ρ cos(l − l_p).
	rho, lp := math.Hypot(n.px, n.py), math.Atan2(n.py, n.px)
	for _, cut := range [2]struct {
		on bool
		a  float64
	}{{n.cutLo, n.sinLo}, {n.cutHi, n.sinHi}} {
		if cut.on && math.Abs(cut.a) < rho {
			c := math.Acos(cut.a / rho)
			add(lp + c)
			add(lp - c)
		}
	}
}

// completeness returns S(d) and dS/dd at distance d (kpc).
func (n *normaliser) completeness(d float64) (s, ds float64) {
	if !n.compl {
		return 1, 0
	}
	e := fastexp.Exp((d - n.half) * n.invSoft)
	s = 1 / (1 + e)
	return s, -s * (1 - s) * n.invSoft
}

// excluded reports whether the direction of the plane point (x, y) lies in an excluded
// longitude range.
func (n *normaliser) excluded(x, y float64) bool {
	for i, e := range n.excl {
		// The range runs counter-clockwise from edge e0 to edge e1: (x, y) lies past e0
		// and before e1. A range wider than π is the complement of the narrower one.
		past := e[0]*y-e[1]*x >= 0
		before := x*e[3]-y*e[2] >= 0
		if n.exclWide[i] {
			if past || before {
				return true
			}
		} else if past && before {
			return true
		}
	}
	return false
}

// inBand reports whether height z (kpc, relative to the Sun) above the plane point with
// P = p_x x + p_y y and projected distance s lies in the declination band.
func (n *normaliser) inBand(P, s, z float64) bool {
	f := (P + n.pz*z) / math.Sqrt(s*s+z*z)
	return (!n.cutLo || f >= n.sinLo) && (!n.cutHi || f <= n.sinHi)
}

// bandRoots appends to r the heights z at which sin δ = a above the plane point (P, s): the
// roots of (p_z² − a²) z² + 2 P p_z z + P² − a² s² = 0 with P + p_z z of the sign of a.
func (n *normaliser) bandRoots(P, s, a float64, r *[4]float64, k int) int {
	A := n.pz*n.pz - a*a
	B := P * n.pz
	C := P*P - a*a*s*s
	keep := func(z float64) {
		if a == 0 || (P+n.pz*z)*a > 0 {
			r[k] = z
			k++
		}
	}
	if math.Abs(A) < 1e-13 {
		if B != 0 {
			keep(-C / (2 * B))
		}
		return k
	}
	disc := B*B - A*C
	if disc < 0 {
		return k
	}
	q := -(B + math.Copysign(math.Sqrt(disc), B))
	keep(q / A)
	if q != 0 {
		keep(C / q)
	}
	return k
}

// band stores in iv the intervals of height z (kpc, relative to the Sun) that the
// declination band admits above the plane point (P, s), and returns their number.
func (n *normaliser) band(P, s float64, iv *[3][2]float64) int {
	var r [4]float64
	nr := 0
	if n.cutLo {
		nr = n.bandRoots(P, s, n.sinLo, &r, nr)
	}
	if n.cutHi {
		nr = n.bandRoots(P, s, n.sinHi, &r, nr)
	}
	for i := 1; i < nr; i++ { // insertion sort of at most four roots
		for j := i; j > 0 && r[j] < r[j-1]; j-- {
			r[j], r[j-1] = r[j-1], r[j]
		}
	}
	k := 0
	lo := math.Inf(-1)
	for i := 0; i <= nr; i++ {
		hi := math.Inf(1)
		if i < nr {
			hi = r[i]
		}
		if !(hi > lo) {
			continue
		}
		var zt float64
		switch {
		case math.IsInf(lo, -1) && math.IsInf(hi, 1):
			zt = 0
		case math.IsInf(lo, -1):
			zt = hi - 1 - math.Abs(hi) - s
		case math.IsInf(hi, 1):
			zt = lo + 1 + math.Abs(lo) + s
		default:
			zt = 0.5 * (lo + hi)
		}
		if n.inBand(P, s, zt) {
			if k > 0 && iv[k-1][1] == lo {
				iv[k-1][1] = hi
			} else if k < len(iv) {
				iv[k] = [2]float64{lo, hi}
				k++
			}
		}
		lo = hi
	}
	return k
}

// oneEdge stores in iv[0] the heights (relative to the Sun) that one edge of the band admits
// above the plane point (P, s) within layerReach·H of the mid-plane, whose sin δ is fm: the
// lower edge (sin δ ≥ sinLo) when lower is set, else the upper one. It returns 1, or 0 when
// the edge admits none of the layer, or −1 when the edge crosses the layer twice there (band
// then finds the intervals).
func (n *normaliser) oneEdge(P, s, fm float64, lower bool, iv *[3][2]float64) int {
	a := n.sinHi
	if lower {
		a = n.sinLo
	}
	var r [4]float64
	nr := n.bandRoots(P, s, a, &r, 0)
	z0 := -n.zsun
	wlo, whi := z0-layerReach*n.h, z0+layerReach*n.h
	var root float64
	count := 0
	for _, z := range r[:nr] {
		if z > wlo && z < whi {
			root, count = z, count+1
		}
	}
	switch count {
	case 0:
		if (lower && fm < a) || (!lower && fm > a) {
			return 0
		}
		iv[0] = [2]float64{math.Inf(-1), math.Inf(1)}
	case 1:
		// sin δ rises through the edge where f′ ∝ p_z s² − P z is positive.
		if up := n.pz*s*s-P*root > 0; up == lower {
			iv[0] = [2]float64{root, math.Inf(1)}
		} else {
			iv[0] = [2]float64{math.Inf(-1), root}
		}
	default:
		return -1
	}
	return 1
}

// stdNormalUpper returns Q(u) = 1 − Φ(u) = erfc(u/√2)/2 by the Chebyshev fit to erfc of
// Press et al. (Numerical Recipes in C, 2nd ed. 1992, §6.2, erfcc), good to 1.2e-7 of
// erfc everywhere, with one exponential where math.Erfc takes two: the layer's share needs
// 1e-7, not the last place.
func stdNormalUpper(u float64) float64 {
	z := math.Abs(u) * (1 / math.Sqrt2)
	t := 1 / (1 + 0.5*z)
	r := t * fastexp.Exp(-z*z-1.26551223+t*(1.00002368+t*(0.37409196+t*(0.09678418+
		t*(-0.18628806+t*(0.27886807+t*(-1.13520398+t*(1.48851587+t*(-0.82215223+t*0.17087277)))))))))
	if u < 0 {
		return 1 - 0.5*r
	}
	return 0.5 * r
}

// layerShare returns, for heights z (relative to the Sun) in [a, b], the layer's share
// ∫ N(z + z⊙; 0, H) dz and its second moment ∫ z² N(z + z⊙; 0, H) dz (the latter only
// when second is set).
func (n *normaliser) layerShare(a, b float64, second bool) (m0, m2 float64) {
	u1, u2 := (a+n.zsun)/n.h, (b+n.zsun)/n.h
	switch {
	case u1 > 0:
		m0 = stdNormalUpper(u1)
		if u2 < layerReach {
			m0 -= stdNormalUpper(u2)
		}
	case u2 < 0:
		m0 = stdNormalUpper(-u2)
		if u1 > -layerReach {
			m0 -= stdNormalUpper(-u1)
		}
	default:
		m0 = 1
		if u2 < layerReach {
			m0 -= stdNormalUpper(u2)
		}
		if u1 > -layerReach {
			m0 -= stdNormalUpper(-u1)
		}
	}
	if !second {
		return m0, 0
	}
	const invSqrt2Pi = 0.3989422804014327
	// φ(u) underflows to 0 beyond |u| = 38.61 (e^{−745.14}): no exponential is needed there.
	var f1, f2, g1, g2 float64
	if u1 > -underflowU {
		f1 = invSqrt2Pi * fastexp.Exp(-0.5*u1*u1)
		g1 = u1 * f1
	}
	if u2 < underflowU {
		f2 = invSqrt2Pi * fastexp.Exp(-0.5*u2*u2)
		g2 = u2 * f2
	}
	h, zs := n.h, n.zsun
	// z = H u − z⊙: ∫ z² = H² ∫ u² φ − 2 H z⊙ ∫ u φ + z⊙² ∫ φ.
	m2 = h*h*(m0+g1-g2) - 2*h*zs*(f1-f2) + zs*zs*m0
	return m0, m2
}

// layerExact returns ∫ N(z + z⊙; 0, H) (S(√(s² + z²)) − S(s)) dz over [a, b] by
// Gauss–Legendre nodes on the part within layerReach·H of the mid-plane.
func (n *normaliser) layerExact(a, b, s, s0 float64) float64 {
	lo, hi := max(a, -n.zsun-layerReach*n.h), min(b, -n.zsun+layerReach*n.h)
	if !(hi > lo) {
		return 0
	}
	const invSqrt2Pi = 0.3989422804014327
	var sum float64
	parts := max(1, int(math.Ceil((hi-lo)/(3*n.h))))
	w := (hi - lo) / float64(parts)
	for p := range parts {
		c, hw := lo+(float64(p)+0.5)*w, 0.5*w
		for i, x := range glX {
			z := c + hw*x
			u := (z + n.zsun) / n.h
			sd, _ := n.completeness(math.Sqrt(s*s + z*z))
			sum += hw * glW[i] * invSqrt2Pi * fastexp.Exp(-0.5*u*u) / n.h * (sd - s0)
		}
	}
	return sum
}

// visible returns the selected share V of the layer above the plane point at heliocentric
// (x, y) (kpc): ∫ N(z + z⊙; 0, H) S(l, b, d) dz over d in [DMin, DMax], or with vertical
// "none" S(l, 0, s) for s in [DMin, DMax].
func (n *normaliser) visible(x, y float64) float64 {
	n.points++
	s2 := x*x + y*y
	s := math.Sqrt(s2)
	if s >= n.dmax || (!n.vertical && s < n.dmin) {
		return 0
	}
	if len(n.excl) > 0 && n.excluded(x, y) {
		return 0
	}
	P := n.px*x + n.py*y
	inv := 1 / s
	if !n.vertical {
		f := P * inv
		if (n.cutLo && f < n.sinLo) || (n.cutHi && f > n.sinHi) {
			return 0
		}
		c, _ := n.completeness(s)
		return c
	}
	var iv [3][2]float64
	k := 1
	iv[0] = [2]float64{math.Inf(-1), math.Inf(1)}
	if n.cutLo || n.cutHi {
		// Within bandReach·H of the mid-plane the latitude moves by at most bandReach·H/s
		// and sin δ by no more: a band edge farther than that in sin δ leaves the layer
		// wholly in or wholly out.
		fm := P * inv
		if n.zsun != 0 {
			fm = (P - n.pz*n.zsun) / math.Sqrt(s2+n.zsun*n.zsun)
		}
		margin := n.bandMargin * inv
		nearLo := n.cutLo && math.Abs(fm-n.sinLo) <= margin
		nearHi := n.cutHi && math.Abs(fm-n.sinHi) <= margin
		switch {
		case !nearLo && !nearHi:
			if (n.cutLo && fm < n.sinLo) || (n.cutHi && fm > n.sinHi) {
				return 0
			}
		case nearLo != nearHi:
			// The other edge, if any, admits the whole layer or none of it.
			if (nearLo && n.cutHi && fm > n.sinHi) || (nearHi && n.cutLo && fm < n.sinLo) {
				return 0
			}
			if k = n.oneEdge(P, s, fm, nearLo, &iv); k < 0 {
				k = n.band(P, s, &iv)
			}
			if k == 0 {
				return 0
			}
		default:
			k = n.band(P, s, &iv)
		}
	}
	lc := layerCall{s: s, s0: 1}
	if n.compl {
		// S(√(s² + z²)) to second order in z² is good to (S″/2)(z²/2s)², below 1e-5 of S
		// unless the layer is thick against s; there the nodes take S itself.
		lc.s0, lc.ds = n.completeness(s)
		lc.near = n.m2*0.5*inv > 0.3*n.soft || -lc.ds*(n.invSoft+inv)*n.nearK*inv*inv > 1e-5*lc.s0
		lc.second = !lc.near
	}
	// The common case: the whole layer is seen, out to layerReach·H from the mid-plane.
	if k == 1 && s >= n.dmin && n.dmax*n.dmax-s2 > n.reach2 && math.IsInf(iv[0][0], -1) && math.IsInf(iv[0][1], 1) {
		v := lc.s0
		if lc.second {
			v += lc.ds * 0.5 * inv * n.m2
		}
		if lc.near {
			v += n.layerExact(math.Inf(-1), math.Inf(1), s, lc.s0)
		}
		return v
	}
	zD := math.Sqrt(n.dmax*n.dmax - s2)
	zd := 0.0
	if s < n.dmin {
		zd = math.Sqrt(n.dmin*n.dmin - s2)
	}
	for _, v := range iv[:k] {
		if zd > 0 {
			n.addLayer(&lc, max(v[0], -zD), min(v[1], -zd))
			n.addLayer(&lc, max(v[0], zd), min(v[1], zD))
		} else {
			n.addLayer(&lc, max(v[0], -zD), min(v[1], zD))
		}
	}
	// S(√(s² + z²)) = S(s) + S′(s) z²/(2s) + O(z⁴).
	return lc.s0*lc.m0 + lc.ds*0.5*inv*lc.m2 + lc.extra
}

// layerCall gathers the layer's share m0, its second moment m2 and the correction extra of
// the exact nodes over the height intervals above one plane point at projected distance s,
// where S(s) = s0 and S′(s) = ds.
type layerCall struct {
	s, s0, ds     float64
	near, second  bool
	m0, m2, extra float64
}

// addLayer adds to lc the layer's part at heights (relative to the Sun) in [a, b].
func (n *normaliser) addLayer(lc *layerCall, a, b float64) {
	// Beyond layerReach·H of the mid-plane the layer's share is below 1e-19.
	wlo, whi := -n.zsun-layerReach*n.h, -n.zsun+layerReach*n.h
	if !(b > a) || b <= wlo || a >= whi {
		return
	}
	if a <= wlo && b >= whi {
		lc.m0++
		if lc.second {
			lc.m2 += n.m2
		}
	} else {
		v0, v2 := n.layerShare(a, b, lc.second)
		lc.m0 += v0
		lc.m2 += v2
	}
	if lc.near {
		lc.extra += n.layerExact(a, b, lc.s, lc.s0)
	}
}

// addCut records a breakpoint at R with transition scale (0 for a jump) if it lies in
// (lo, hi) or, for a transition, within reach of it.
func (n *normaliser) addCut(R, scale, lo, hi float64) {
	if scale > hi-lo {
		return // a transition broader than the segment: the integrand is smooth on it
	}
	reach := scale * grading[len(grading)-1]
	if R > lo-reach && R < hi+reach {
		n.cuts = append(n.cuts, cut{R, scale})
	}
}

// lineCuts collects in n.cuts the breakpoints of the radial line at azimuth β (cos, sin)
// between radii lo and hi (kpc).
func (n *normaliser) lineCuts(cb, sb, lo, hi float64) {
	n.cuts = n.cuts[:0]
	r0 := n.r0
	for _, ray := range n.rays {
		den := sb*ray[0] + cb*ray[1]
		if den == 0 {
			continue
		}
		R := r0 * ray[1] / den
		if x, y := r0-R*cb, R*sb; R > 0 && x*ray[0]+y*ray[1] > 0 {
			n.addCut(R, 0, lo, hi)
		}
	}
	for _, d := range [2]float64{n.dmin, n.dmax} {
		if disc := d*d - r0*r0*sb*sb; disc > 0 {
			sq := math.Sqrt(disc)
			for _, R := range [2]float64{r0*cb - sq, r0*cb + sq} {
				if R > 0 {
					n.addCut(R, 0, lo, hi)
				}
			}
		}
	}
	if n.cutLo {
		n.edgeCuts(cb, sb, n.sinLo, lo, hi)
	}
	if n.cutHi {
		n.edgeCuts(cb, sb, n.sinHi, lo, hi)
	}
	if dist := r0 * math.Abs(sb); dist < sunReach && r0*cb > lo-3*dist && r0*cb < hi+3*dist {
		n.addCut(r0*cb, max(dist, 1e-6), lo, hi)
	}
}

// edgeCuts adds the points of the radial line at azimuth β where the mid-plane
// (z = −z⊙ relative to the Sun; z = 0 with vertical "none") meets the declination
// a = sin δ_e, with the scale H/|dz/dR| over which the layer passes through it.
func (n *normaliser) edgeCuts(cb, sb, a, lo, hi float64) {
	r0, q := n.r0, 0.0
	if n.vertical {
		q = -n.zsun
	}
	// P = P0 + R P1 along the line; s² = R² − 2 R r0 cos β + r0².
	P1 := -n.px*cb + n.py*sb
	K := n.px*r0 + n.pz*q
	A := P1*P1 - a*a
	B := K*P1 + a*a*r0*cb
	C := K*K - a*a*(r0*r0+q*q)
	var roots [2]float64
	nr := 0
	if math.Abs(A) < 1e-13 {
		if B != 0 {
			roots[0], nr = -C/(2*B), 1
		}
	} else if disc := B*B - A*C; disc >= 0 {
		qq := -(B + math.Copysign(math.Sqrt(disc), B))
		roots[0], nr = qq/A, 1
		if qq != 0 {
			roots[1], nr = C/qq, 2
		}
	}
	for _, R := range roots[:nr] {
		P := K + R*P1
		if R <= 0 || !(a == 0 || P*a > 0) {
			continue
		}
		scale := 0.0
		if n.vertical {
			// G(R, z) = (P + p_z z)² − a² (s² + z²) = 0: dz/dR = −G_R/G_z.
			gR := 2*P*P1 - a*a*(2*R-2*r0*cb)
			gZ := 2*P*n.pz - 2*a*a*q
			scale = n.h * math.Abs(gZ/gR)
			if !(scale <= hi-lo) {
				continue
			}
		}
		n.addCut(R, scale, lo, hi)
	}
}

// panels fills n.pts with the ends of the pieces of [lo, hi]: the breakpoints in n.cuts,
// graded on both sides of each transition.
func (n *normaliser) panels(lo, hi float64) {
	p := append(n.pts[:0], lo, hi)
	in := func(v float64) bool { return v > lo && v < hi }
	for _, c := range n.cuts {
		if in(c.at) {
			p = append(p, c.at)
		}
		if c.scale > 0 {
			for _, g := range grading {
				if v := c.at - g*c.scale; in(v) {
					p = append(p, v)
				}
				if v := c.at + g*c.scale; in(v) {
					p = append(p, v)
				}
			}
		}
	}
	slices.Sort(p)
	n.pts = p
}

// lineSum integrates weight(R)·V along the radial line at azimuth β over the pieces in
// n.pts, by Gauss–Legendre nodes, splitting pieces longer than maxLen; kind −1 is the
// field disk (weight R exp(−R/h)), kind k ≥ 0 arm k centred on rk with cos ψ = c.
func (n *normaliser) lineSum(kind int, cb, sb, rk, c, maxLen float64) float64 {
	const invSqrt2Pi = 0.3989422804014327
	var sum float64
	for i := 1; i < len(n.pts); i++ {
		a, b := n.pts[i-1], n.pts[i]
		if !(b > a) {
			continue
		}
		parts := max(1, int(math.Ceil((b-a)/maxLen)))
		w := (b - a) / float64(parts)
		for p := range parts {
			mid, hw := a+(float64(p)+0.5)*w, 0.5*w
			for j, x := range glX {
				R := mid + hw*x
				v := n.visible(n.r0-R*cb, R*sb)
				if v == 0 {
					continue
				}
				var f float64
				if kind < 0 {
					f = R * fastexp.Exp(-R*n.invScale)
				} else {
					wd := n.dens.Width(kind, R)
					u := (R - rk) * c / wd
					f = c * invSqrt2Pi * fastexp.Exp(-0.5*u*u) / wd
				}
				sum += hw * glW[j] * f * v
			}
		}
	}
	return sum
}

// armLine returns arm k's selected mass per unit azimuth at unfolded azimuth β:
// E(β)/Z · ∫ cos ψ N((R − R_k) cos ψ; 0, w(R)) V(R, β) dR.
func (n *normaliser) armLine(k int, beta float64) float64 {
	rk, c, e := n.dens.CentreLine(k, beta)
	if !(e > 0) {
		return 0
	}
	sb, cb := math.Sincos(beta)
	wk := n.dens.Width(k, rk)
	wOut := n.dens.Width(k, rk+armReach*wk/c)
	wIn := n.dens.Width(k, rk-armReach*wk/c)
	half := armReach * max(wk, wOut) / c
	lo, hi := rk-half, rk+half
	n.lineCuts(cb, sb, lo, hi)
	g := n.slope
	if len(n.cuts) == 0 && lo > 0 && wIn > arms.MinWidth && math.Abs(g)*armReach < 0.3*c {
		// R = R_k + t w_k/(c − t g) maps N((R − R_k) c; 0, w(R)) c dR to φ(t) c/(c − t g) dt.
		var sum float64
		for i, t := range ghX {
			den := c - t*g
			R := rk + t*wk/den
			sum += ghW[i] * c / den * n.visible(n.r0-R*cb, R*sb)
		}
		return e * sum
	}
	lo = max(lo, 0)
	n.panels(lo, hi)

	return e * n.lineSum(k, cb, sb, rk, c, armPiece*min(wk, wIn)/c)
}

// fieldLine returns the field disk's selected mass per unit azimuth at azimuth β, without
// the constant 1/(2π h²): ∫ R exp(−R/h) V(R, β) dR over the part of the line within DMax
// of the Sun.
func (n *normaliser) fieldLine(beta float64) float64 {
	sb, cb := math.Sincos(beta)
	// The line sees nothing beyond the circle s = DMax about the Sun.
	disc := n.dmax*n.dmax - n.r0*n.r0*sb*sb
	if !(disc > 0) {
		return 0
	}
	sq := math.Sqrt(disc)
	lo, hi := max(0, n.r0*cb-sq), n.r0*cb+sq
	if !(hi > lo) {
		return 0
	}
	n.lineCuts(cb, sb, lo, hi)
	n.panels(lo, hi)
	maxLen := fieldPiece / n.invScale
	if n.compl {
		maxLen = min(maxLen, softPiece*n.soft)
	}
	return n.lineSum(-1, cb, sb, 0, 0, maxLen)
}

func (n *normaliser) line(kind int, beta float64) float64 {
	if kind < 0 {
		return n.fieldLine(beta)
	}
	return n.armLine(kind, beta)
}

// kronrod returns the K15 value of the line integral over [a, b] in azimuth and its
// estimated error |K15 − G7|.
func (n *normaliser) kronrod(kind int, a, b float64) (k, e float64) {
	c, h := 0.5*(a+b), 0.5*(b-a)
	var g float64
	for i, x := range kx {
		v := n.line(kind, c+h*x)
		k += kw[i] * v
		g += kg[i] * v
	}
	return h * k, math.Abs(h * (k - g))
}

// outer integrates the line integral of component kind over the azimuth breakpoints in
// brk (sorted), by adaptive Gauss–Kronrod panels.
func (n *normaliser) outer(kind int, brk []float64) float64 {
	n.todo = n.todo[:0]
	var total, err float64
	for i := 1; i < len(brk); i++ {
		a, b := brk[i-1], brk[i]
		if !(b > a) {
			continue
		}
		parts := max(1, int(math.Ceil((b-a)/maxOuterPanel)))
		w := (b - a) / float64(parts)
		for p := range parts {
			pa, pb := a+float64(p)*w, a+float64(p+1)*w
			k, e := n.kronrod(kind, pa, pb)
			n.todo = append(n.todo, span{pa, pb, k, e})
			total += k
			err += e
		}
	}
	for range maxOuterSplits {
		if err <= n.tol*math.Abs(total) {
			break
		}
		worst := 0
		for i := range n.todo {
			if n.todo[i].e > n.todo[worst].e {
				worst = i
			}
		}
		s := n.todo[worst]
		m := 0.5 * (s.a + s.b)
		k1, e1 := n.kronrod(kind, s.a, m)
		k2, e2 := n.kronrod(kind, m, s.b)
		total += k1 + k2 - s.k
		err += e1 + e2 - s.e
		n.todo[worst] = span{s.a, m, k1, e1}
		n.todo = append(n.todo, span{m, s.b, k2, e2})
	}
	// Add the panels afresh, so that the total carries no rounding from the updates.
	total = 0
	for _, s := range n.todo {
		total += s.k
	}
	return total
}

// values stores Z_m of the field (m = 0) and of each arm (m = k+1) in z under the density
// d, Sun–centre distance r0 (kpc), layer scale height h and the Sun's height zsun (kpc).
func (n *normaliser) values(z []float64, d *arms.Density, r0, h, zsun float64, diskScale float64) {
	n.dens, n.r0, n.h, n.zsun = d, r0, h, zsun
	n.m2 = h*h + zsun*zsun
	n.nearK = 3 * n.m2 * n.m2 / 8
	n.bandMargin = 1.01 * bandReach * h
	n.reach2 = (math.Abs(zsun) + layerReach*h) * (math.Abs(zsun) + layerReach*h)
	n.invScale = 1 / diskScale
	n.slope = d.WidthSlope()
	// The field's share depends on R0, the disk's scale length and (with the layer) H and
	// z⊙ only: a parameter set that keeps them, as when they are fixed, takes it again.
	key := fieldKey{r0, diskScale, h, zsun}
	if !n.vertical {
		key.h, key.zsun = 0, 0
	}
	if !n.fieldSet || key != n.field {
		n.fieldZ, n.field, n.fieldSet = n.fieldShare(r0, diskScale), key, true
	}
	z[0] = n.fieldZ
	for k := range d.NumArms() {
		lo, hi, start, end, kink := d.ArmSpan(k)
		// Beyond tailReach·τ of the ends the end factor's mass, τ e^{−tailReach}, is below
		// 1e-8 of the arm's.
		tau := (start - lo) / arms.WindingReach
		lo, hi = max(lo, start-tailReach*tau), min(hi, end+tailReach*tau)
		brk := [5]float64{lo, start, end, hi, hi}
		if kink > lo && kink < hi {
			brk[4] = kink
		}
		slices.Sort(brk[:])
		z[k+1] = n.outer(k, brk[:])
	}
}

// fieldShare returns Z of the field disk with scale length diskScale (kpc) under n's
// geometry and layer.
func (n *normaliser) fieldShare(r0, diskScale float64) float64 {
	// The field: breakpoints where the radial line runs parallel to an edge of the
	// selection and where it touches the circles DMin and DMax about the Sun; between the
	// two lines that touch DMin, the line that passes through the Sun needs none.
	brk := append(n.brk[:0], n.farEdges...)
	brk = append(brk, -math.Pi, math.Pi)
	if !(n.dmin > 0 && n.dmin < r0) {
		brk = append(brk, 0)
	}
	for _, dd := range [2]float64{n.dmin, n.dmax} {
		if dd > 0 && dd < r0 {
			a := math.Asin(dd / r0)
			brk = append(brk, -a, a)
		}
	}
	slices.Sort(brk)
	n.brk = brk
	return n.outer(-1, brk) / (2 * math.Pi * diskScale * diskScale)
}

// Normalisation stores in z (allocated when shorter than NumComponents) and returns Z_m, the
// selected share of each component's density under p (field first, then the arms): the
// integral of ρ_m S over the distance range, ρ_m the component's density with the layer
// (with Vertical false, the in-plane density with S at b = 0). Without a selection every
// Z_m is 1 and nothing is integrated.
func (s *Spec) Normalisation(p *Params, z []float64) []float64 {
	nc := s.NumComponents()
	if cap(z) < nc {
		z = make([]float64, nc)
	}
	z = z[:nc]
	if !s.Selection.Active() || !s.Galaxy {
		for m := range z {
			z[m] = 1
		}
		return z
	}
	n := newNormaliser(s.Selection, s.Vertical, s.DMin, s.DMax)
	n.values(z, p.Density, p.Motion.R0(), p.ScaleHeight, p.ZSun, s.DiskScale)
	return z
}

// setLogNorm sets p.LogNorm = ln Σ_m f_m Z_m (0 without a selection). It is an error when the
// selection sees none of the model's sources.
func (s *Spec) setLogNorm(p *Params) error {
	p.LogNorm = 0
	if !s.Selection.Active() || !s.Galaxy {
		return nil
	}
	z := s.Normalisation(p, nil)
	v, ok := logMixtureShare(z, p.frac)
	if !ok {
		return fmt.Errorf("the selection sees no part of the model's Galaxy (selected share %g)", math.Exp(v))
	}
	p.LogNorm = v
	return nil
}

// logMixtureShare returns ln Σ_m f_m Z_m, and false where the sum is not positive and finite.
func logMixtureShare(z, frac []float64) (float64, bool) {
	var sum float64
	for m, f := range frac {
		sum += f * z[m]
	}
	v := math.Log(sum)
	return v, sum > 0 && !math.IsInf(sum, 1)
}

// selState is the normalisation's part of an indexed evaluation's state, in storage reused
// from one evaluation to the next.
type selState struct {
	norm    *normaliser
	z       []float64
	logNorm float64 // ln Σ_m f_m Z_m; 0 without a selection
}

// setNormalisation computes st.sel.logNorm for the parameter set of st, as setLogNorm does
// for Params. It returns false where the selection sees nothing of the model.
func (st *state) setNormalisation(spec *Spec) bool {
	ss := &st.sel
	ss.logNorm = 0
	if !spec.Selection.Active() || !spec.Galaxy {
		return true
	}
	if ss.norm == nil {
		ss.norm = newNormaliser(spec.Selection, spec.Vertical, spec.DMin, spec.DMax)
	}
	nc := spec.NumComponents()
	if cap(ss.z) < nc {
		ss.z = make([]float64, nc)
	}
	ss.z = ss.z[:nc]
	ss.norm.values(ss.z, &st.density, st.layout.R0, st.scaleHeight, st.zSun, spec.DiskScale)
	v, ok := logMixtureShare(ss.z, st.frac)
	ss.logNorm = v
	return ok
}

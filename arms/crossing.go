package arms

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"github.com/mirabilis-astro/mirabilis/internal/roots"
)

// Galactocentric returns the cylindrical radius R (kpc) and azimuth β (radians, in (−π, π])
// of the in-plane heliocentric position (x, y) (kpc; x toward the centre, y toward l = 90°),
// for Sun–centre distance R0 (kpc): R = √((R0 − x)² + y²), β = atan2(y, R0 − x).
func Galactocentric(R0, x, y float64) (R, beta float64) {
	u := R0 - x
	return math.Hypot(u, y), math.Atan2(y, u)
}

// Heliocentric returns the in-plane heliocentric position (x, y) in kpc of the point at
// radius R (kpc) and azimuth beta (radians), for Sun–centre distance R0 (kpc):
// x = R0 − R cos β, y = R sin β. It inverts Galactocentric.
func Heliocentric(R0, R, beta float64) (x, y float64) {
	s, c := math.Sincos(beta)
	return R0 - R*c, R * s
}

// Crossing is a point where an arm's centre line meets a line of sight or the Sun–centre line.
type Crossing struct {
	// D is the in-plane distance from the Sun, in kpc. For a source at latitude b the distance
	// along the line of sight is D / cos b.
	D float64
	// Beta is the azimuth β_n of the arm's winding there, in radians, unfolded: it lies in the
	// arm's range (or its margin) and may differ from the point's azimuth by a multiple of 2π.
	Beta float64
	// R is the radius of the crossing, in kpc.
	R float64
}

// crossingStep is the spacing in kpc of the grid on which Crossings brackets its roots.
const crossingStep = 0.02

// Crossings appends to dst every point where the centre line of a meets the in-plane line
// of sight from the Sun at Galactic longitude l (radians), at in-plane distances D in
// (0, dmax] (kpc), for Sun–centre distance R0 (kpc), and returns the extended slice, sorted by
// distance. Each winding of the centre line with azimuth in
// [BetaStart − margin, BetaEnd + margin] (margin ≥ 0, radians) is followed; a line of sight
// may cross one arm several times.
//
// For each winding n the crossings are the roots in D of ln R(D) − ln R_k(β(D) + 2πn). They are
// bracketed by sign changes on a grid of 0.02 kpc, where every local minimum of the residual's
// magnitude is also searched (golden section) for a pair of roots closer than the grid step,
// as a grazing line of sight has; each root is then refined by bisection to about 1e-12 kpc.
// The azimuth along a straight line seen from the centre is monotone, so the residual is
// continuous except where the line passes through the centre itself.
func (a Arm) Crossings(dst []Crossing, R0, l, dmax, margin float64) ([]Crossing, error) {
	if err := a.Validate(); err != nil {
		return dst, err
	}
	switch {
	case !finite(R0) || R0 <= 0:
		return dst, fmt.Errorf("arms: crossings of arm %q: R0 = %g kpc: must be positive and finite", a.Name, R0)
	case !finite(l):
		return dst, fmt.Errorf("arms: crossings of arm %q: longitude %g rad: must be finite", a.Name, l)
	case !finite(dmax) || dmax <= 0:
		return dst, fmt.Errorf("arms: crossings of arm %q: dmax = %g kpc: must be positive and finite", a.Name, dmax)
	case !finite(margin) || margin < 0:
		return dst, fmt.Errorf("arms: crossings of arm %q: margin = %g rad: must be non-negative and finite", a.Name, margin)
	}
	sl, cl := math.Sincos(l)
	lo, hi := a.BetaStart-margin, a.BetaEnd+margin

	// β runs monotonically from 0 at the Sun to its value at dmax.
	_, bEnd := Galactocentric(R0, dmax*cl, dmax*sl)
	bMin, bMax := math.Min(0, bEnd), math.Max(0, bEnd)
	first := int(math.Ceil((lo - bMax) / twoPi))
	last := int(math.Floor((hi - bMin) / twoPi))
	if first > last {
		return dst, nil
	}
	s := sightline{c: newCurve(&a), r0: R0, cl: cl, sl: sl}
	start := len(dst)

	steps := int(math.Ceil(dmax / crossingStep))
	h := dmax / float64(steps)
	for n := first; n <= last; n++ {
		shift := twoPi * float64(n)
		accept := func(d float64) {
			if d <= 0 || d > dmax {
				return
			}
			R, beta := s.position(d)
			bn := beta + shift
			if bn < lo || bn > hi {
				return
			}
			// Reject a "root" at the jump of β where the line passes through the centre.
			if r := s.residual(d, shift); !(math.Abs(r) < 1e-6) {
				return
			}
			dst = append(dst, Crossing{D: d, Beta: bn, R: R})
		}
		f := func(d float64) float64 { return s.residual(d, shift) }

		var g0, g1 float64 // residuals at grid points i−2 and i−1
		for i := 0; i <= steps; i++ {
			d := float64(i) * h
			if i == steps {
				d = dmax
			}
			g := f(d)
			if g == 0 {
				accept(d)
			}
			if i >= 1 {
				dPrev := d - h
				if g1*g < 0 {
					accept(roots.Bisect(f, dPrev, d, g1))
				}
				// A local minimum of |g| without a sign change may hide a pair of roots.
				if i >= 2 && g0*g1 > 0 && g1*g > 0 &&
					math.Abs(g1) < math.Abs(g0) && math.Abs(g1) <= math.Abs(g) {
					pairRoots(f, dPrev-h, d, g1, accept)
				}
				if i == 1 && g1*g > 0 && math.Abs(g1) <= math.Abs(g) {
					pairRoots(f, 0, d, g1, accept)
				}
				if i == steps && g1*g > 0 && math.Abs(g) < math.Abs(g1) {
					pairRoots(f, dPrev, d, g, accept)
				}
			}
			g0, g1 = g1, g
		}
	}
	slices.SortFunc(dst[start:], func(x, y Crossing) int { return cmp.Compare(x.D, y.D) })
	return dst, nil
}

// sightline is one line of sight in the plane with the centre line of one arm.
type sightline struct {
	c          curve
	r0, cl, sl float64
}

func (s *sightline) position(d float64) (R, beta float64) {
	return Galactocentric(s.r0, d*s.cl, d*s.sl)
}

// residual is ln R(d) − ln R_k(β(d) + shift).
func (s *sightline) residual(d, shift float64) float64 {
	R, beta := s.position(d)
	lnRk, _, _ := s.c.lnR(beta + shift)
	return math.Log(R) - lnRk
}

// pairRoots looks in [a, b] for the minimum of |f|, where f keeps the sign of fRef at the
// ends, by golden-section search on sign(fRef)·f; if f changes sign there it reports the two
// roots on either side of the minimum.
func pairRoots(f func(float64) float64, a, b, fRef float64, report func(float64)) {
	sg := 1.0
	if fRef < 0 {
		sg = -1
	}
	g := func(x float64) float64 { return sg * f(x) }
	xm, gm := roots.GoldenMin(g, a, b, func(gx float64) bool { return gx < 0 })
	if !(gm < 0) {
		return
	}
	report(roots.Bisect(g, a, xm, g(a)))
	report(roots.Bisect(g, xm, b, gm))
}

// SunLine appends to dst the points where the centre line of a crosses the Sun–centre line,
// that is the windings β = 2πn inside [BetaStart, BetaEnd], for Sun–centre distance R0 (kpc),
// and returns the extended slice ordered nearest the Sun first. There D = |R − R0| is the
// distance from the Sun, toward l = 0 when R < R0 and toward l = 180° when R > R0. The slice
// is unchanged when the range holds no such winding; the formal value of the spiral there is
// then a.Radius(0).
func (a Arm) SunLine(dst []Crossing, R0 float64) ([]Crossing, error) {
	if err := a.Validate(); err != nil {
		return dst, err
	}
	if !finite(R0) || R0 <= 0 {
		return dst, fmt.Errorf("arms: Sun-line crossings of arm %q: R0 = %g kpc: must be positive and finite", a.Name, R0)
	}
	c := newCurve(&a)
	start := len(dst)
	for n := int(math.Ceil(a.BetaStart / twoPi)); n <= int(math.Floor(a.BetaEnd/twoPi)); n++ {
		bn := twoPi * float64(n)
		lnR, _, _ := c.lnR(bn)
		R := math.Exp(lnR)
		dst = append(dst, Crossing{D: math.Abs(R - R0), Beta: bn, R: R})
	}
	slices.SortFunc(dst[start:], func(x, y Crossing) int { return cmp.Compare(x.D, y.D) })
	return dst, nil
}

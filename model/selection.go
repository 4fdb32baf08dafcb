package model

import (
	"fmt"
	"math"
	"sort"
)

// Selection is a survey's selection function S(l, b, d) ∈ [0, 1]: the probability that a
// source at Galactic (l, b) and distance d enters the catalog, known and not fitted. It is
// the product of the terms that are set: a band of ICRS declination the survey sees,
// ranges of Galactic longitude it leaves out, and a completeness that falls with distance.
// The zero value selects everything.
type Selection struct {
	// DecMin and DecMax bound the band of ICRS declination the survey sees (rad). Both zero:
	// no band.
	DecMin, DecMax float64
	// ExcludeL are ranges [from, to] of Galactic longitude (rad) left out. A range with
	// from > to wraps through 0: [350°, 10°] leaves out the 20° around l = 0.
	ExcludeL [][2]float64
	// HalfDistance is the distance (kpc) at which the completeness is one half, Softness
	// the distance (kpc) over which it falls: S(d) = 1/(1 + exp((d − HalfDistance)/Softness)).
	// HalfDistance == 0: no distance term.
	HalfDistance, Softness float64
}

// Active reports whether any term of the selection is set.
func (s *Selection) Active() bool {
	return s.hasBand() || len(s.ExcludeL) > 0 || s.HalfDistance != 0
}

// hasBand reports whether the declination band is set.
func (s *Selection) hasBand() bool { return s.DecMin != 0 || s.DecMax != 0 }

// Validate checks the selection for values that describe no survey.
func (s *Selection) Validate() error {
	if s.hasBand() {
		if !(s.DecMin >= -math.Pi/2 && s.DecMin < s.DecMax && s.DecMax <= math.Pi/2) {
			return fmt.Errorf("model: declination band [%g, %g] deg: want −90 ≤ lower < upper ≤ 90", s.DecMin/deg, s.DecMax/deg)
		}
	}
	for _, r := range s.ExcludeL {
		if !isFiniteNumber(r[0]) || !isFiniteNumber(r[1]) || r[0] == r[1] {
			return fmt.Errorf("model: excluded longitudes [%g, %g] deg: want two different finite longitudes", r[0]/deg, r[1]/deg)
		}
	}
	if s.HalfDistance != 0 && !(s.HalfDistance > 0 && s.Softness > 0 && isFiniteNumber(s.HalfDistance) && isFiniteNumber(s.Softness)) {
		return fmt.Errorf("model: completeness half distance %g kpc, softness %g kpc: want both positive", s.HalfDistance, s.Softness)
	}
	return nil
}

// Completeness returns the distance term S(d) = 1/(1 + exp((d − HalfDistance)/Softness))
// of the selection at distance d (kpc): one half at HalfDistance, falling over Softness;
// 1 when there is no distance term. It is the logistic function of (HalfDistance − d)/Softness
// (common practice, no source: a smooth step for a flux limit).
func (s *Selection) Completeness(d float64) float64 {
	if s.HalfDistance == 0 {
		return 1
	}
	return 1 / (1 + math.Exp((d-s.HalfDistance)/s.Softness))
}

// LogCompleteness returns ln S(d) (see Completeness), finite however far d lies beyond
// HalfDistance: −ln(1 + eˣ) = −x − ln(1 + e⁻ˣ) for x = (d − HalfDistance)/Softness > 0.
func (s *Selection) LogCompleteness(d float64) float64 {
	if s.HalfDistance == 0 {
		return 0
	}
	x := (d - s.HalfDistance) / s.Softness
	if x > 0 {
		return -x - math.Log1p(math.Exp(-x))
	}
	return -math.Log1p(math.Exp(x))
}

// declinationCoefficients returns (A, B) of sin δ = A sin b + B cos b at Galactic longitude
// l (rad): the ICRS z component of the Galactic unit vector (cos b cos l, cos b sin l, sin b),
// through the rows of ICRSToGalacticMatrix. A = sin δ of the north Galactic pole.
func declinationCoefficients(sinL, cosL float64) (a, b float64) {
	m := &icrsToGalactic
	return m[2][2], m[0][2]*cosL + m[1][2]*sinL
}

// excluded reports whether longitude l (rad) lies in one of the excluded ranges.
func (s *Selection) excluded(l float64) bool {
	if len(s.ExcludeL) == 0 {
		return false
	}
	l = wrapTwoPi(l)
	for _, r := range s.ExcludeL {
		from, to := wrapTwoPi(r[0]), wrapTwoPi(r[1])
		if from <= to {
			if l >= from && l <= to {
				return true
			}
		} else if l >= from || l <= to {
			return true
		}
	}
	return false
}

// wrapTwoPi returns x reduced to [0, 2π).
func wrapTwoPi(x float64) float64 {
	x = math.Mod(x, 2*math.Pi)
	if x < 0 {
		x += 2 * math.Pi
	}
	if x >= 2*math.Pi {
		x = 0
	}
	return x
}

// unseen returns why the survey does not see Galactic (l, b) (rad), or "" if it does.
func (s *Selection) unseen(l, b float64) string {
	switch {
	case s.excluded(l):
		return "its longitude lies in a range the selection leaves out"
	case !s.Direction(l, b):
		_, dec := GalacticToICRS(l/deg, b/deg)
		return fmt.Sprintf("its declination %.4f° lies outside the selection's band [%.6g°, %.6g°]", dec, s.DecMin/deg, s.DecMax/deg)
	}
	return ""
}

// Direction reports whether the survey sees the direction Galactic (l, b) (rad): its
// declination lies inside the band and its longitude in no excluded range.
func (s *Selection) Direction(l, b float64) bool {
	if s.excluded(l) {
		return false
	}
	if !s.hasBand() {
		return true
	}
	sinL, cosL := math.Sincos(l)
	sinB, cosB := math.Sincos(b)
	a, c := declinationCoefficients(sinL, cosL)
	sd := a*sinB + c*cosB
	return sd >= math.Sin(s.DecMin) && sd <= math.Sin(s.DecMax)
}

// BandLatitudes returns the intervals [b1, b2] of Galactic latitude (rad, within
// [−π/2, π/2], increasing and disjoint) whose directions at longitude l (rad) the survey
// sees: where sin δ = A sin b + B cos b lies between the sines of the band's limits. It is
// nil when l is excluded, and the whole [−π/2, π/2] when there is no band.
//
// sin δ(b) = C sin(b + φ) with C = √(A² + B²), φ = atan2(B, A); the interval's ends are the
// latitudes where it crosses a limit, found in closed form, and its pieces are told apart
// by the value at their midpoints.
func (s *Selection) BandLatitudes(l float64) [][2]float64 {
	if s.excluded(l) {
		return nil
	}
	if !s.hasBand() {
		return [][2]float64{{-math.Pi / 2, math.Pi / 2}}
	}
	sinL, cosL := math.Sincos(l)
	a, c := declinationCoefficients(sinL, cosL)
	amp, phi := math.Hypot(a, c), math.Atan2(c, a)
	lo, hi := math.Sin(s.DecMin), math.Sin(s.DecMax)
	f := func(b float64) float64 { return a*math.Sin(b) + c*math.Cos(b) }
	cuts := []float64{-math.Pi / 2, math.Pi / 2}
	add := func(b float64) {
		// b modulo 2π into [−π/2, π/2] if it falls there.
		b = math.Remainder(b, 2*math.Pi)
		if b > -math.Pi/2 && b < math.Pi/2 {
			cuts = append(cuts, b)
		}
	}
	for _, v := range [2]float64{lo, hi} {
		if r := v / amp; r > -1 && r < 1 {
			x := math.Asin(r)
			add(x - phi)
			add(math.Pi - x - phi)
		}
	}
	sort.Float64s(cuts)
	in := func(v float64) bool { return v >= lo && v <= hi }
	var out [][2]float64
	for k := 0; k+1 < len(cuts); k++ {
		b1, b2 := cuts[k], cuts[k+1]
		if !(b2 > b1) || !in(f(0.5*(b1+b2))) {
			continue
		}
		if n := len(out); n > 0 && out[n-1][1] == b1 {
			out[n-1][1] = b2
			continue
		}
		out = append(out, [2]float64{b1, b2})
	}
	return out
}

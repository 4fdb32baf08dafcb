package arms

import (
	"fmt"
	"math"
)

const (
	twoPi     = 2 * math.Pi
	invTwoPi  = 1 / twoPi
	halfLn2Pi = 0.91893853320467274178032973640561763986139747363778 // ½ ln 2π

	// MinWidth is the floor, in kpc, of an arm's width w_k(R) = max(w_k + g (R − R0), MinWidth).
	MinWidth = 0.01

	// DefaultEdgeSoftening is the default softening τ of an arm's ends, in radians (3°).
	DefaultEdgeSoftening = 3 * math.Pi / 180

	// WindingReach is how far beyond an arm's azimuth range, in units of the end softening τ,
	// its windings are still counted: a point at azimuth β takes the windings β + 2πn that lie
	// in [β_start − WindingReach·τ, β_end + WindingReach·τ]. Beyond that the end factor E_k is
	// below 1e-13.
	WindingReach = 30
)

// Arm is one spiral arm: a log-periodic spiral centre line over an azimuth range, and a width.
// All angles are in radians, all lengths in kpc; azimuths follow the package convention
// (β = 0 at the Sun, increasing with Galactic rotation) and may take any real value, so that a
// range can span several turns.
//
// The centre line is
//
//	ln R(β) = ln RRef − ∫ from BetaRef to β of tan ψ(β′) dβ′,
//
// where ψ(β) = Pitch everywhere when Kinked is false, and otherwise ψ(β) = Pitch for
// β < BetaKink and ψ(β) = Pitch2 for β ≥ BetaKink. The radius is continuous at the kink, and
// BetaRef and BetaKink are independent of each other.
type Arm struct {
	// Name identifies the arm, e.g. "Corvid". It must not be empty.
	Name string

	// RRef is the radius of the centre line at azimuth BetaRef, in kpc (> 0).
	RRef float64

	// BetaRef is the reference azimuth, in radians.
	BetaRef float64

	// Pitch is the pitch angle ψ in radians, or ψ_1 below the kink when Kinked is set. It must
	// lie strictly between −π/2 and π/2. Positive values make the radius decrease as β grows.
	Pitch float64

	// Kinked switches on the kink at BetaKink.
	Kinked bool

	// Pitch2 is the pitch angle ψ_2 from BetaKink on, in radians; used only when Kinked is set.
	Pitch2 float64

	// BetaKink is the azimuth of the kink, in radians; used only when Kinked is set.
	BetaKink float64

	// BetaStart and BetaEnd bound the azimuth range over which the arm exists, in radians
	// (BetaStart < BetaEnd). The range may exceed 2π.
	BetaStart, BetaEnd float64

	// Width is the Gaussian width w of the arm across its centre line at R = R0, in kpc (> 0).
	Width float64
}

// ParamError reports an invalid arm parameter or layout setting.
type ParamError struct {
	// Arm is the name of the arm concerned, or "" for a setting of the whole Layout.
	Arm string
	// Field is the name of the offending struct field, e.g. "Pitch" or "R0".
	Field string
	// Value is the offending value (in the field's own units: radians or kpc).
	Value float64
	// Reason says what was expected.
	Reason string
}

// Error implements the error interface.
func (e *ParamError) Error() string {
	if e.Arm == "" {
		return fmt.Sprintf("arms: %s = %g: %s", e.Field, e.Value, e.Reason)
	}
	return fmt.Sprintf("arms: arm %q: %s = %g: %s", e.Arm, e.Field, e.Value, e.Reason)
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// Validate reports the first invalid parameter of a as a *ParamError, or nil: an empty name,
// a non-positive or non-finite RRef or Width, a pitch angle outside (−π/2, π/2), a non-finite
// azimuth, or an empty azimuth range (BetaEnd ≤ BetaStart).
func (a Arm) Validate() error {
	bad := func(field string, v float64, reason string) error {
		return &ParamError{Arm: a.Name, Field: field, Value: v, Reason: reason}
	}
	switch {
	case a.Name == "":
		return bad("Name", 0, "an arm needs a name")
	case !finite(a.RRef) || a.RRef <= 0:
		return bad("RRef", a.RRef, "reference radius must be positive and finite (kpc)")
	case !finite(a.BetaRef):
		return bad("BetaRef", a.BetaRef, "reference azimuth must be finite (rad)")
	case !finite(a.Pitch) || math.Abs(a.Pitch) >= math.Pi/2:
		return bad("Pitch", a.Pitch, "pitch angle must lie strictly between −π/2 and π/2 rad")
	case a.Kinked && (!finite(a.Pitch2) || math.Abs(a.Pitch2) >= math.Pi/2):
		return bad("Pitch2", a.Pitch2, "pitch angle beyond the kink must lie strictly between −π/2 and π/2 rad")
	case a.Kinked && !finite(a.BetaKink):
		return bad("BetaKink", a.BetaKink, "kink azimuth must be finite (rad)")
	case !finite(a.BetaStart):
		return bad("BetaStart", a.BetaStart, "start of the azimuth range must be finite (rad)")
	case !finite(a.BetaEnd):
		return bad("BetaEnd", a.BetaEnd, "end of the azimuth range must be finite (rad)")
	case a.BetaEnd <= a.BetaStart:
		return bad("BetaEnd", a.BetaEnd, fmt.Sprintf("empty azimuth range: BetaEnd must exceed BetaStart = %g rad", a.BetaStart))
	case !finite(a.Width) || a.Width <= 0:
		return bad("Width", a.Width, "width must be positive and finite (kpc)")
	}
	return nil
}

// curve holds the centre line in the form ln R(β) = a − t β on each side of the kink,
// with the cosine of the local pitch angle and its logarithm.
type curve struct {
	kink                 float64 // +Inf without a kink
	a1, t1, cos1, lnCos1 float64 // β < kink
	a2, t2, cos2, lnCos2 float64 // β ≥ kink
}

// newCurve precomputes the centre line of a, which must be valid.
//
// With F(β) = ∫ from β_kink to β of tan ψ = t1 (β − β_kink) below the kink and t2 (β − β_kink)
// from it on, ln R(β) = ln R_ref + F(β_ref) − F(β); without a kink ln R(β) = ln R_ref − t1 (β − β_ref).
func newCurve(a *Arm) curve {
	t1 := math.Tan(a.Pitch)
	c1 := math.Cos(a.Pitch)
	lnRRef := math.Log(a.RRef)
	if !a.Kinked {
		a1 := lnRRef + t1*a.BetaRef
		lc := math.Log(c1)
		return curve{kink: math.Inf(1), a1: a1, t1: t1, cos1: c1, lnCos1: lc, a2: a1, t2: t1, cos2: c1, lnCos2: lc}
	}
	t2 := math.Tan(a.Pitch2)
	c2 := math.Cos(a.Pitch2)
	fRef := t1 * (a.BetaRef - a.BetaKink)
	if a.BetaRef >= a.BetaKink {
		fRef = t2 * (a.BetaRef - a.BetaKink)
	}
	base := lnRRef + fRef
	return curve{
		kink: a.BetaKink,
		a1:   base + t1*a.BetaKink, t1: t1, cos1: c1, lnCos1: math.Log(c1),
		a2: base + t2*a.BetaKink, t2: t2, cos2: c2, lnCos2: math.Log(c2),
	}
}

// lnR returns ln R(β) with the cosine of the local pitch angle and its logarithm.
func (c *curve) lnR(beta float64) (lnR, cosPsi, lnCos float64) {
	if beta < c.kink {
		return c.a1 - c.t1*beta, c.cos1, c.lnCos1
	}
	return c.a2 - c.t2*beta, c.cos2, c.lnCos2
}

// LogRadius returns ln R(β), the natural logarithm of the centre line's radius (R in kpc) at
// azimuth β (radians, any real value: windings are not folded). The arm must be valid.
func (a Arm) LogRadius(beta float64) float64 {
	c := newCurve(&a)
	lnR, _, _ := c.lnR(beta)
	return lnR
}

// Radius returns the centre line's radius R(β) in kpc at azimuth β (radians).
func (a Arm) Radius(beta float64) float64 { return math.Exp(a.LogRadius(beta)) }

// PitchAt returns the local pitch angle ψ(β) in radians: Pitch, or with a kink Pitch below
// BetaKink and Pitch2 from it on.
func (a Arm) PitchAt(beta float64) float64 {
	if a.Kinked && beta >= a.BetaKink {
		return a.Pitch2
	}
	return a.Pitch
}

// Offset returns δ⊥ = (R − R(β_n)) cos ψ(β_n) in kpc, the distance across the arm of a point
// at radius R (kpc) from the winding at azimuth betaN (radians, unfolded). It is positive
// outside the centre line.
func (a Arm) Offset(R, betaN float64) float64 {
	c := newCurve(&a)
	lnR, cs, _ := c.lnR(betaN)
	return (R - math.Exp(lnR)) * cs
}

// WidthAt returns the arm's width w(R) = max(Width + slope·(R − R0), MinWidth) in kpc at
// radius R (kpc), for Sun–centre distance R0 (kpc) and width slope g = slope (kpc per kpc).
func (a Arm) WidthAt(R, R0, slope float64) float64 {
	return widthAt(a.Width, slope, R-R0)
}

func widthAt(w0, slope, dR float64) float64 {
	w := w0 + slope*dR
	if !(w >= MinWidth) {
		return MinWidth
	}
	return w
}

// Windings returns the inclusive range first…last of winding numbers n whose azimuths
// β_n = β + 2πn count for a point at azimuth beta (radians, any real value), given the end
// softening soft = τ (radians, > 0): those with β_n in
// [BetaStart − WindingReach·τ, BetaEnd + WindingReach·τ], or, when none is, the single winding
// nearest that interval, so that every point gets a density from every arm.
func (a Arm) Windings(beta, soft float64) (first, last int) {
	return windings(beta, a.BetaStart-WindingReach*soft, a.BetaEnd+WindingReach*soft)
}

func windings(beta, lo, hi float64) (first, last int) {
	first = int(math.Ceil((lo - beta) * invTwoPi))
	last = int(math.Floor((hi - beta) * invTwoPi))
	if first > last {
		// No winding falls inside: β + 2π·last < lo and β + 2π·first > hi, first = last+1.
		below := lo - (beta + twoPi*float64(last))
		above := beta + twoPi*float64(first) - hi
		if below <= above {
			first = last
		} else {
			last = first
		}
	}
	return first, last
}

// logSigmoid returns ln σ(x) = −ln(1 + e^{−x}) without overflow or cancellation.
func logSigmoid(x float64) float64 {
	if x >= 0 {
		if x > 37 { // e^{−37} < 2^{−53}: ln σ(x) rounds to 0 against any O(1) term.
			return 0
		}
		return -math.Log1p(math.Exp(-x))
	}
	return x - math.Log1p(math.Exp(x))
}

// LogEdge returns ln E(β), the logarithm of the factor that softens the arm's ends,
// E(β) = σ((β − BetaStart)/τ) σ((BetaEnd − β)/τ), σ the logistic function, for azimuth β and
// softening soft = τ > 0 (both radians).
func (a Arm) LogEdge(beta, soft float64) float64 {
	return logSigmoid((beta-a.BetaStart)/soft) + logSigmoid((a.BetaEnd-beta)/soft)
}

// LogEdgeNorm returns ln Z, Z = ∫ E(β) dβ = Δβ / (1 − exp(−Δβ/τ)) over the whole real line,
// Δβ = BetaEnd − BetaStart, for softening soft = τ > 0 (radians). (The closed form follows from
// ∫ σ(u) σ(D − u) du = D / (1 − e^{−D}).)
func (a Arm) LogEdgeNorm(soft float64) float64 {
	return logEdgeNorm(a.BetaEnd-a.BetaStart, soft)
}

func logEdgeNorm(span, soft float64) float64 {
	return math.Log(span) - math.Log(-math.Expm1(-span/soft))
}

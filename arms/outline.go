package arms

import (
	"fmt"
	"math"
)

// Point is a position in the Galactic plane by radius R (kpc) and azimuth Beta (radians,
// unfolded along an arm). Heliocentric converts it to x, y.
type Point struct {
	R, Beta float64
}

// Outline is an arm drawn as three polylines sampled at the same azimuths: its centre line
// and the two curves at δ⊥ = ∓w(R) across it, Inner on the side of smaller radius and Outer on
// the side of larger radius.
type Outline struct {
	Centre, Inner, Outer []Point
}

// DefaultOutlineStep is the default azimuth step of Outline, in radians (1°).
const DefaultOutlineStep = math.Pi / 180

// Outline samples arm a from BetaStart to BetaEnd at azimuth steps of at most step radians
// (zero means DefaultOutlineStep), adding the kink azimuth when it falls inside the range,
// for Sun–centre distance R0 (kpc) and width slope g = slope (kpc per kpc).
//
// An edge point lies at the same azimuth β as its centre point, at the radius R_e where
// (R_e − R(β)) cos ψ(β) = ±w(R_e), the arm's own measure of distance across it.
func (a Arm) Outline(R0, slope, step float64) (Outline, error) {
	if err := a.Validate(); err != nil {
		return Outline{}, err
	}
	switch {
	case !finite(R0) || R0 <= 0:
		return Outline{}, fmt.Errorf("arms: outline of arm %q: R0 = %g kpc: must be positive and finite", a.Name, R0)
	case !finite(slope):
		return Outline{}, fmt.Errorf("arms: outline of arm %q: width slope %g: must be finite", a.Name, slope)
	case !finite(step) || step < 0:
		return Outline{}, fmt.Errorf("arms: outline of arm %q: step %g rad: must be positive and finite, or zero for the default", a.Name, step)
	}
	if step == 0 {
		step = DefaultOutlineStep
	}
	span := a.BetaEnd - a.BetaStart
	n := int(math.Ceil(span / step))
	if n < 1 {
		n = 1
	}
	if n > 1<<20 {
		return Outline{}, fmt.Errorf("arms: outline of arm %q: step %g rad is too small for a range of %g rad", a.Name, step, span)
	}
	c := newCurve(&a)
	size := n + 2
	o := Outline{
		Centre: make([]Point, 0, size),
		Inner:  make([]Point, 0, size),
		Outer:  make([]Point, 0, size),
	}
	add := func(beta float64) {
		lnR, cs, _ := c.lnR(beta)
		R := math.Exp(lnR)
		o.Centre = append(o.Centre, Point{R: R, Beta: beta})
		o.Inner = append(o.Inner, Point{R: edgeRadius(R, cs, -1, a.Width, slope, R0), Beta: beta})
		o.Outer = append(o.Outer, Point{R: edgeRadius(R, cs, +1, a.Width, slope, R0), Beta: beta})
	}
	kinkInside := a.Kinked && a.BetaKink > a.BetaStart && a.BetaKink < a.BetaEnd
	for i := 0; i <= n; i++ {
		beta := a.BetaStart + span*float64(i)/float64(n)
		if i == n {
			beta = a.BetaEnd
		}
		if kinkInside && i > 0 && beta > a.BetaKink && o.Centre[len(o.Centre)-1].Beta < a.BetaKink {
			add(a.BetaKink)
		}
		add(beta)
	}
	return o, nil
}

// edgeRadius solves R_e = R + side·w(R_e)/cs for w(R) = max(w0 + g (R − R0), MinWidth),
// cs = cos ψ > 0. When the slope is so steep that neither branch has a solution, it falls back
// to the width at the centre line.
func edgeRadius(R, cs, side, w0, g, R0 float64) float64 {
	// Linear branch: R_e (1 − side·g/cs) = R + side (w0 − g R0)/cs.
	if den := 1 - side*g/cs; den > 0 {
		re := (R + side*(w0-g*R0)/cs) / den
		if w0+g*(re-R0) >= MinWidth {
			return re
		}
	}
	// Floor branch.
	re := R + side*MinWidth/cs
	if w0+g*(re-R0) <= MinWidth {
		return re
	}
	return R + side*widthAt(w0, g, R-R0)/cs
}

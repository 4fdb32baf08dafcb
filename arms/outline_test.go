package arms

import (
	"math"
	"testing"
)

// The outline's centre points lie on the centre line; its edge points lie at the same azimuth
// with (R_e − R_k(β)) cos ψ(β) = ∓w_k(R_e), the across-arm offset and width law of package model, Arms,
// including where the width sits on its 0.01 kpc floor; the kink azimuth is included.
func TestOutline(t *testing.T) {
	const R0 = 8.15
	for _, g := range []float64{0, 0.02, -0.04, 0.3} {
		for _, a := range []Arm{plainArm(), kinkedArm()} {
			o, err := a.Outline(R0, g, 2*deg)
			if err != nil {
				t.Fatal(err)
			}
			n := len(o.Centre)
			if n < int((a.BetaEnd-a.BetaStart)/(2*deg))+1 || len(o.Inner) != n || len(o.Outer) != n {
				t.Fatalf("%s: %d, %d, %d points", a.Name, n, len(o.Inner), len(o.Outer))
			}
			if o.Centre[0].Beta != a.BetaStart || o.Centre[n-1].Beta != a.BetaEnd {
				t.Errorf("%s: outline runs from %g to %g, want %g to %g", a.Name, o.Centre[0].Beta, o.Centre[n-1].Beta, a.BetaStart, a.BetaEnd)
			}
			kinkSeen := false
			for i := range n {
				beta := o.Centre[i].Beta
				if i > 0 && (beta <= o.Centre[i-1].Beta || beta-o.Centre[i-1].Beta > 2*deg+1e-12) {
					t.Fatalf("%s: azimuth step %g → %g", a.Name, o.Centre[i-1].Beta, beta)
				}
				kinkSeen = kinkSeen || (a.Kinked && beta == a.BetaKink)
				Rk := math.Exp(refLnRadius(a, beta))
				c := math.Cos(refPitch(a, beta))
				if math.Abs(o.Centre[i].R-Rk) > 1e-12*Rk {
					t.Errorf("%s, β = %g: centre at R = %g, want %g", a.Name, beta, o.Centre[i].R, Rk)
				}
				for _, e := range []struct {
					p    Point
					side float64
				}{{o.Inner[i], -1}, {o.Outer[i], 1}} {
					if e.p.Beta != beta {
						t.Errorf("edge at β = %g beside centre at %g", e.p.Beta, beta)
					}
					off := (e.p.R - Rk) * c
					want := e.side * refWidth(a, e.p.R, R0, g)
					if g < 0.2 && math.Abs(off-want) > 1e-12 {
						t.Errorf("%s, g = %g, β = %g, side %g: offset %g, want %g", a.Name, g, beta, e.side, off, want)
					}
					if off*e.side <= 0 {
						t.Errorf("%s, g = %g, β = %g: edge on the wrong side (offset %g)", a.Name, g, beta, off)
					}
				}
			}
			if a.Kinked && !kinkSeen {
				t.Errorf("%s: kink azimuth %g missing from the outline", a.Name, a.BetaKink)
			}
		}
	}
	if _, err := plainArm().Outline(0, 0, 0); err == nil {
		t.Error("R0 = 0 accepted")
	}
	if _, err := plainArm().Outline(R0, 0, -1); err == nil {
		t.Error("negative step accepted")
	}
	o, err := plainArm().Outline(R0, 0, 0)
	if err != nil || len(o.Centre) != int(math.Ceil(5/DefaultOutlineStep))+1 {
		t.Errorf("default step: %d points, %v", len(o.Centre), err)
	}
}

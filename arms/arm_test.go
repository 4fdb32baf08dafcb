package arms

import (
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"
)

const deg = math.Pi / 180

// glPanels integrates f over [a, b] with m panels of an n-point Gauss–Legendre rule
// (nodes from gonum's integrate/quad).
func glPanels(f func(float64) float64, a, b float64, m, n int) float64 {
	x := make([]float64, n)
	w := make([]float64, n)
	quad.Legendre{}.FixedLocations(x, w, -1, 1)
	h := (b - a) / float64(m)
	var sum float64
	for p := range m {
		lo := a + float64(p)*h
		for i := range x {
			sum += 0.5 * h * w[i] * f(lo+0.5*h*(x[i]+1))
		}
	}
	return sum
}

func plainArm() Arm {
	return Arm{Name: "Corvid", RRef: 7.5, BetaRef: 0.3, Pitch: 12 * deg,
		BetaStart: -1, BetaEnd: 4, Width: 0.3}
}

func kinkedArm() Arm {
	return Arm{Name: "Lantern", RRef: 9.2, BetaRef: -0.4, Pitch: 9 * deg, Kinked: true,
		Pitch2: 17 * deg, BetaKink: 1.1, BetaStart: -2, BetaEnd: 5, Width: 0.25}
}

// A logarithmic spiral's radius changes by the factor exp(2π tan ψ) per turn
// (standard property of the logarithmic spiral; common practice, no source).
func TestRadiusPerTurn(t *testing.T) {
	for _, psi := range []float64{-10, 0, 5, 12, 25, 40, 70} {
		a := plainArm()
		a.Pitch = psi * deg
		for _, beta := range []float64{-7, -1, 0, 0.3, 2, 11} {
			got := a.Radius(beta) / a.Radius(beta+2*math.Pi)
			want := math.Exp(2 * math.Pi * math.Tan(psi*deg))
			if math.Abs(got/want-1) > 1e-12 {
				t.Errorf("ψ = %g°, β = %g: R(β)/R(β+2π) = %.15g, want exp(2π tan ψ) = %.15g", psi, beta, got, want)
			}
		}
	}
}

// The centre line passes through (R_ref, β_ref), with or without a kink, on either side of
// it (package model, Arms: the spiral is defined through that point).
func TestReferencePoint(t *testing.T) {
	for _, a := range []Arm{plainArm(), kinkedArm()} {
		for _, bref := range []float64{-1.5, 0.2, 1.1, 3} {
			a.BetaRef = bref
			if got := a.Radius(bref); math.Abs(got-a.RRef) > 1e-12*a.RRef {
				t.Errorf("%s, β_ref = %g: R(β_ref) = %.15g, want R_ref = %g", a.Name, bref, got, a.RRef)
			}
		}
	}
}

// With a kink, ln R is continuous at β_kink and its slope is −tan ψ_1 below and −tan ψ_2 above
// (package model, Arms; the slope by central differences, common practice, no source).
func TestKinkContinuity(t *testing.T) {
	for _, bref := range []float64{-1, 1.1, 2.5} {
		a := kinkedArm()
		a.BetaRef = bref
		k := a.BetaKink
		const e = 1e-9
		lo, hi := a.LogRadius(k-e), a.LogRadius(k+e)
		if math.Abs(hi-lo) > 1e-8 {
			t.Errorf("β_ref = %g: ln R jumps at the kink: %.12g below, %.12g above", bref, lo, hi)
		}
		const h = 1e-4
		for _, c := range []struct {
			beta, psi float64
		}{{k - 0.3, a.Pitch}, {k + 0.3, a.Pitch2}, {k - 2, a.Pitch}, {k + 3, a.Pitch2}} {
			slope := (a.LogRadius(c.beta+h) - a.LogRadius(c.beta-h)) / (2 * h)
			if math.Abs(slope+math.Tan(c.psi)) > 1e-9 {
				t.Errorf("β_ref = %g, β = %g: d ln R/dβ = %.12g, want −tan ψ = %.12g", bref, c.beta, slope, -math.Tan(c.psi))
			}
			if got := a.PitchAt(c.beta); got != c.psi {
				t.Errorf("β = %g: PitchAt = %g, want %g", c.beta, got, c.psi)
			}
		}
		if got := a.PitchAt(k); got != a.Pitch2 {
			t.Errorf("PitchAt(β_kink) = %g, want ψ_2 = %g (ψ_2 from the kink on)", got, a.Pitch2)
		}
	}
}

// ln R_k(β) = ln R_ref − ∫_{β_ref}^{β} tan ψ(β′) dβ′ (package model, Arms), against the integral of
// tan ψ(β′) by composite Gauss–Legendre, split at the kink as usual for a piecewise integrand.
func TestKinkedIntegral(t *testing.T) {
	a := kinkedArm()
	psi := func(b float64) float64 {
		if b < a.BetaKink {
			return a.Pitch
		}
		return a.Pitch2
	}
	tanPsi := func(b float64) float64 { return math.Tan(psi(b)) }
	integral := func(from, to float64) float64 {
		sign := 1.0
		if to < from {
			from, to, sign = to, from, -1
		}
		if from < a.BetaKink && a.BetaKink < to {
			return sign * (glPanels(tanPsi, from, a.BetaKink, 8, 5) + glPanels(tanPsi, a.BetaKink, to, 8, 5))
		}
		return sign * glPanels(tanPsi, from, to, 8, 5)
	}
	for _, bref := range []float64{-1.7, 0, 1.1, 2.9} {
		a.BetaRef = bref
		for _, beta := range []float64{-6, -2, 0.5, 1.1, 1.5, 4, 9.5} {
			want := math.Log(a.RRef) - integral(bref, beta)
			if got := a.LogRadius(beta); math.Abs(got-want) > 1e-12 {
				t.Errorf("β_ref = %g, β = %g: ln R = %.15g, numerical integral gives %.15g", bref, beta, got, want)
			}
		}
	}
}

// The windings counted for a point at β are those with β + 2πn in
// [β_start − 30τ, β_end + 30τ], or else the single one nearest that interval (package model, Arms);
// checked against a direct enumeration of n.
func TestWindings(t *testing.T) {
	const tau = 3 * deg
	for _, r := range [][2]float64{{-1, 4}, {0.2, 0.3}, {-3, 12}, {5, 5.01}, {-20, -19}} {
		a := plainArm()
		a.BetaStart, a.BetaEnd = r[0], r[1]
		lo, hi := r[0]-30*tau, r[1]+30*tau
		for i := range 400 {
			beta := -3*math.Pi + 6*math.Pi*float64(i)/399
			var ns []int
			for n := -40; n <= 40; n++ {
				if bn := beta + 2*math.Pi*float64(n); bn >= lo && bn <= hi {
					ns = append(ns, n)
				}
			}
			if len(ns) == 0 {
				best, dist := 0, math.Inf(1)
				for n := -40; n <= 40; n++ {
					bn := beta + 2*math.Pi*float64(n)
					if d := math.Max(lo-bn, bn-hi); d < dist {
						best, dist = n, d
					}
				}
				ns = []int{best}
			}
			first, last := a.Windings(beta, tau)
			if first != ns[0] || last != ns[len(ns)-1] {
				t.Fatalf("range %v, β = %g: Windings = %d…%d, want %d…%d", r, beta, first, last, ns[0], ns[len(ns)-1])
			}
		}
	}
}

// δ⊥ = (R − R_k(β_n)) cos ψ_k(β_n) and w_k(R) = max(w_k + g (R − R0), 0.01 kpc), as defined in
// package model, Arms.
func TestOffsetAndWidth(t *testing.T) {
	a := kinkedArm()
	for _, beta := range []float64{-1, 0.5, 1.1, 3} {
		Rk := a.Radius(beta)
		for _, dR := range []float64{-0.7, 0, 0.2, 3} {
			want := dR * math.Cos(a.PitchAt(beta))
			if got := a.Offset(Rk+dR, beta); math.Abs(got-want) > 1e-12 {
				t.Errorf("β = %g, R − R_k = %g: offset %g, want %g", beta, dR, got, want)
			}
		}
	}
	const R0 = 8.15
	for _, c := range []struct{ R, g, want float64 }{
		{R0, 0.3, 0.25}, {10.15, 0.02, 0.29}, {4.15, 0.02, 0.17}, {4.15, 0.1, 0.01}, {4.15, 0.06, 0.01}, {0, -0.02, 0.413},
	} {
		if got := a.WidthAt(c.R, R0, c.g); math.Abs(got-c.want) > 1e-14 {
			t.Errorf("w(R = %g, g = %g) = %g, want %g", c.R, c.g, got, c.want)
		}
	}
}

func logistic(x float64) float64 { return 1 / (1 + math.Exp(-x)) }

// E(β) = σ((β − β_start)/τ) σ((β_end − β)/τ) (package model, Arms), against the logistic function
// written out: at either end it is ½ · 1/(1 + e^{−Δβ/τ}), at the middle σ(Δβ/2τ)².
func TestLogEdge(t *testing.T) {
	for _, tau := range []float64{1 * deg, 3 * deg, 10 * deg} {
		for _, span := range []float64{0.02, 0.1, 1, 5, 14} {
			a := plainArm()
			a.BetaEnd = a.BetaStart + span
			endWant := 0.5 / (1 + math.Exp(-span/tau))
			for _, beta := range []float64{a.BetaStart, a.BetaEnd} {
				if got := math.Exp(a.LogEdge(beta, tau)); math.Abs(got/endWant-1) > 1e-13 {
					t.Errorf("τ = %g, Δβ = %g, β = %g: E = %.15g, want %.15g", tau, span, beta, got, endWant)
				}
			}
			mid := a.BetaStart + span/2
			midWant := logistic(span/(2*tau)) * logistic(span/(2*tau))
			if got := math.Exp(a.LogEdge(mid, tau)); math.Abs(got/midWant-1) > 1e-13 {
				t.Errorf("τ = %g, Δβ = %g: E(middle) = %.15g, want %.15g", tau, span, got, midWant)
			}
			for _, off := range []float64{-40, -3, -0.5, 0.7, 2, 35} {
				beta := a.BetaStart + off*tau
				want := math.Log(logistic((beta-a.BetaStart)/tau)) + math.Log(logistic((a.BetaEnd-beta)/tau))
				if got := a.LogEdge(beta, tau); math.Abs(got-want) > 1e-12*math.Max(1, math.Abs(want)) {
					t.Errorf("τ = %g, Δβ = %g, β = start%+gτ: ln E = %.15g, want %.15g", tau, span, off, got, want)
				}
			}
			// Far outside, ln E stays finite and follows ln σ(x) ≈ x.
			beta := a.BetaStart - 2000*tau
			if got := a.LogEdge(beta, tau); math.IsInf(got, 0) || math.Abs(got+2000) > 1e-6*2000+span/tau {
				t.Errorf("τ = %g, Δβ = %g: ln E 2000τ before the start = %g, want about −2000", tau, span, got)
			}
		}
	}
}

// Z = ∫ E(β) dβ = Δβ / (1 − exp(−Δβ/τ)) (package model, Arms), against composite Gauss–Legendre
// integration of E over the whole line (beyond ±60τ of the ends E < e^{−60}).
func TestLogEdgeNorm(t *testing.T) {
	for _, tau := range []float64{1 * deg, 3 * deg} {
		for _, span := range []float64{0.2 * tau, tau, 2 * tau, 9.5 * tau, 1, 13} {
			a := plainArm()
			a.BetaEnd = a.BetaStart + span
			lo, hi := a.BetaStart-60*tau, a.BetaEnd+60*tau
			m := int(math.Ceil((hi - lo) / (0.5 * tau)))
			num := glPanels(func(b float64) float64 { return math.Exp(a.LogEdge(b, tau)) }, lo, hi, m, 8)
			if got := math.Exp(a.LogEdgeNorm(tau)); math.Abs(got/num-1) > 1e-12 {
				t.Errorf("τ = %g, Δβ = %g: Z = %.15g, numerical integral %.15g", tau, span, got, num)
			}
		}
	}
}

// Validation rejects each kind of bad parameter with a *ParamError naming the field
// (package model, Arms; the ranges |ψ| < 90°, w > 0, a non-empty azimuth range).
func TestValidate(t *testing.T) {
	if err := plainArm().Validate(); err != nil {
		t.Fatalf("valid arm rejected: %v", err)
	}
	if err := kinkedArm().Validate(); err != nil {
		t.Fatalf("valid kinked arm rejected: %v", err)
	}
	cases := []struct {
		field string
		edit  func(*Arm)
	}{
		{"Name", func(a *Arm) { a.Name = "" }},
		{"RRef", func(a *Arm) { a.RRef = 0 }},
		{"RRef", func(a *Arm) { a.RRef = math.Inf(1) }},
		{"BetaRef", func(a *Arm) { a.BetaRef = math.NaN() }},
		{"Pitch", func(a *Arm) { a.Pitch = math.Pi / 2 }},
		{"Pitch", func(a *Arm) { a.Pitch = -100 * deg }},
		{"Pitch2", func(a *Arm) { a.Kinked, a.Pitch2 = true, 95*deg }},
		{"BetaKink", func(a *Arm) { a.Kinked, a.Pitch2, a.BetaKink = true, 0.2, math.Inf(-1) }},
		{"BetaStart", func(a *Arm) { a.BetaStart = math.NaN() }},
		{"BetaEnd", func(a *Arm) { a.BetaEnd = a.BetaStart }},
		{"BetaEnd", func(a *Arm) { a.BetaEnd = a.BetaStart - 1 }},
		{"Width", func(a *Arm) { a.Width = 0 }},
		{"Width", func(a *Arm) { a.Width = -0.2 }},
	}
	for _, c := range cases {
		a := plainArm()
		c.edit(&a)
		err := a.Validate()
		var pe *ParamError
		if !errors.As(err, &pe) || pe.Field != c.field {
			t.Errorf("bad %s: got error %v, want a *ParamError for %s", c.field, err, c.field)
		}
	}
	// Pitch2 and BetaKink are ignored without a kink.
	a := plainArm()
	a.Pitch2, a.BetaKink = 3, math.NaN()
	if err := a.Validate(); err != nil {
		t.Errorf("unkinked arm with unused kink fields rejected: %v", err)
	}
}

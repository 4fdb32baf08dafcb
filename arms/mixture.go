package arms

import (
	"math"

	"github.com/mirabilis-astro/mirabilis/internal/fastexp"
)

// Negligible is the share of the field's term f_0 ρ_0 below which Mixer leaves a winding of
// an arm, or the part e^−u (e^−v) of one of its end factors, out of the mixture: each winding
// is then off by less than 2 Negligible of the field's term, and even fifty windings change
// the mixture by less than 1e-12 of itself, as the field's term is one of its (positive)
// terms.
const Negligible = 1e-14

// lnNegligible is ln Negligible.
var lnNegligible = math.Log(Negligible)

// minFolded is the smallest field fraction f_0 that Mixer factors out of the mixture: the
// arms' terms relative to the field then stay far from overflow.
const minFolded = 1e-100

// Mixer evaluates the mixture Σ_m f_m ρ_m(R, β) of one Density's field (m = 0) and arms
// with fixed fractions f, in the form the likelihood's inner loop wants: the product
// e^F · S of the field's term e^F = f_0 ρ_0(R), kept as its logarithm F, and the sum
// S = 1 + Σ_k f_k ρ_k / (f_0 ρ_0) of the terms relative to it. The field then costs no
// exponential, and a winding's term one, of the sum of its logarithms.
//
// A winding whose term is below Negligible times the field's is left out, and whether it is
// is told from its Gaussian exponent δ²/2w², first bounded from below without an
// exponential through |R − R_k| ≥ R (1 − e^−Δ), Δ = |ln R − ln R_k|; so are the end factors'
// exponentials that would change the term by less than that. So are windings whose
// Gaussian factor is below e^−70, as in Densities. With f_0 below 1e-100 (or zero) the field
// is not factored out: F = 0 and S is the whole mixture, each winding left out only when its
// Gaussian factor is below e^−70.
//
// The zero Mixer is not usable; Reset it first. Like Density, a Mixer may be read by many
// goroutines at once, but Reset must not run concurrently with anything else.
type Mixer struct {
	d      *Density
	f0     float64
	lnF0   float64 // ln f_0 + ln ρ_0(0), with the field factored out
	folded bool
	arms   []mixArm
}

// mixArm holds one arm's constants for a Mixer, copied from its armConst so that the inner
// loop reads one record per arm.
type mixArm struct {
	curve
	lo, hi, start, end float64 // as in armConst
	w0, lnW0, invW0    float64 // w_k, ln w_k, 1/w_k
	edgeSpan           float64 // as in armConst
	// lnC is ln(f_k/(√(2π) Z_k)), less ln f_0 ρ_0(0) when the field is factored out: a
	// winding's term is E cos ψ exp(lnC − δ²/2w² [+ R/h]) / (w R).
	lnC float64
	// lnCut is lnC + ln max cos ψ − ln Negligible with the field factored out (+Inf without):
	// with the upper bound of −ln(w R) [+ R/h] added, the exponent δ²/2w² beyond which a
	// winding is negligible.
	lnCut float64
}

// Reset makes m the mixture of d's components with fractions f (length d.NumArms()+1, each
// ≥ 0). It keeps d, which must not be Reset while m is in use. It panics if len(f) is wrong.
// It does not allocate when m has held as many arms before.
func (m *Mixer) Reset(d *Density, f []float64) {
	if len(f) != len(d.arms)+1 {
		panic("arms: Mixer.Reset: len(f) != NumArms()+1")
	}
	m.d, m.f0 = d, f[0]
	m.folded = f[0] >= minFolded
	m.lnF0 = math.Log(f[0]) + d.lnField
	if cap(m.arms) < len(d.arms) {
		m.arms = make([]mixArm, 0, len(d.arms))
	}
	m.arms = m.arms[:0]
	for k := range d.arms {
		if !(f[k+1] > 0) {
			continue
		}
		c := &d.arms[k]
		a := mixArm{curve: c.curve, lo: c.lo, hi: c.hi, start: c.start, end: c.end,
			w0: c.w0, lnW0: math.Log(c.w0), invW0: 1 / c.w0, edgeSpan: c.edgeSpan,
			lnC: math.Log(f[k+1]) - halfLn2Pi - c.lnZ, lnCut: math.Inf(1)}
		if m.folded {
			a.lnC -= m.lnF0
			a.lnCut = a.lnC + math.Log(max(c.cos1, c.cos2)) - lnNegligible
		}
		m.arms = append(m.arms, a)
	}
}

// At returns F and S, the mixture at radius R (kpc) and azimuth beta (radians, any real
// value) being e^F · S per kpc². S is finite and positive unless the field is not factored
// out and the mixture underflows. It does not allocate.
//
// Arm k adds Σ_n E cos ψ exp(lnC − δ²/2w² + R/h) / (w R) over the windings that are not
// negligible (without the field factored out, R/h is left out).
func (m *Mixer) At(R, beta float64) (F, S float64) {
	d := m.d
	r := R
	if !(r >= minRadius) {
		r = minRadius
	}
	lnR := logApprox(r) // within logApproxErr
	var rh float64
	if m.folded {
		rh = R * d.invScale
		F, S = m.lnF0-rh, 1
	} else {
		S = m.f0 * fastexp.Exp(d.lnField-R*d.invScale)
	}
	var sum float64 // Σ over arms of the arm's term times R
	for k := range m.arms {
		a := &m.arms[k]
		w, lnW, invW := a.w0, a.lnW0, a.invW0
		if d.slope != 0 {
			// ln w bounded from below, so that cut errs on the safe side.
			w = widthAt(a.w0, d.slope, r-d.r0)
			lnW, invW = logApprox(w)-logApproxErr, 1/w
		}
		// raw bounds the log of the term relative to the field's before its Gaussian, less
		// ln Negligible (−ln R bounded from above through logApprox); cut is the Gaussian
		// exponent beyond which a winding is negligible.
		raw := a.lnCut + rh - lnR + logApproxErr - lnW
		cut := raw
		if cut > maxHalfSquare {
			cut = maxHalfSquare
		}
		if !(cut > 0) {
			continue
		}
		lim := 2 * cut // the bound on x² = (δ/w)²
		first, last := windings(beta, a.lo, a.hi)
		var s float64
		for n := first; n <= last; n++ {
			bn := beta + twoPi*float64(n)
			lnRk, cs := a.a2-a.t2*bn, a.cos2
			if bn < a.kink {
				lnRk, cs = a.a1-a.t1*bn, a.cos1
			}
			// |x| = |R − R_k| cos ψ / w, and with Δ = |ln R − ln R_k| ≥ e > 0, |R − R_k| is
			// R (e^Δ − 1) ≥ R e (1 + e/2) beyond the centre line, R (1 − e^−Δ) ≥
			// R e (1 − e/2) inside it (e ≤ 1; 1 − e^−Δ ≥ 1/2 for larger e).
			dl := lnRk - lnR
			e := math.Abs(dl) - logApproxErr
			k := 1 + 0.5*e
			if dl < 0 {
				if e > 1 {
					e = 1
				}
				k = 1 - 0.5*e
			}
			if y := r * e * k * cs * invW; e > 0 && y*y > lim {
				continue
			}
			x := (r - fastexp.Exp(lnRk)) * cs * invW
			h := 0.5 * x * x
			if !(h < cut) {
				continue
			}
			// The end factors E = 1/((1 + e^−u)(1 + e^−v)), an exponential of u (v) taken
			// only where e^−u (e^−v) is not negligible against the term's bound.
			u, v := (bn-a.start)*d.invSoft, (a.end-bn)*d.invSoft
			reach := raw - h
			if reach > edgeReach {
				reach = edgeReach
			}
			p, q := 1.0, 1.0
			switch {
			case u < reach:
				eu := fastexp.Exp(-u)
				p += eu
				if v < reach {
					q += a.edgeSpan / eu
				}
			case v < reach:
				q += fastexp.Exp(-v)
			}
			s += cs * fastexp.Exp(a.lnC+rh-h) / (p * q)
		}
		sum += s * invW
	}
	return F, S + sum/r
}

// edgeReach is the u beyond which e^−u is below half a unit in the last place of 1.
const edgeReach = 37

// logApproxErr bounds |logApprox(x) − ln x|.
const logApproxErr = 1e-5

// logApprox returns ln x within logApproxErr, for normal x > 0, cheaper than math.Log: with
// x = 2^e m, m in [√½, √2), ln x = e ln 2 + 2 atanh s, s = (m − 1)/(m + 1), |s| ≤ 0.172, from
// the series of atanh to s⁵, whose remainder is below 2s⁷/(7(1 − s²)) < 1.3e-6.
func logApprox(x float64) float64 {
	b := math.Float64bits(x)
	e := int(b>>52) - 1023
	m := math.Float64frombits(b&(1<<52-1) | 1023<<52)
	if m > math.Sqrt2 {
		m *= 0.5
		e++
	}
	s := (m - 1) / (m + 1)
	s2 := s * s
	return float64(e)*math.Ln2 + 2*s*(1+s2*(1.0/3+s2*(1.0/5)))
}

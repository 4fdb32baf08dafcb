package arms

import (
	"fmt"
	"math"
)

// DefaultDiskScale is the default scale length h of the field disk, in kpc.
const DefaultDiskScale = 3.0

// minRadius is the smallest radius, in kpc, used in the 1/R factor of the arm densities, so
// that the Galactic centre itself gets a finite density.
const minRadius = 1e-9

// maxOffset bounds |δ/w| so that its square stays finite however far a point is from an arm.
const maxOffset = 1e100

// Layout is the whole set of spiral arms with the settings they share. Its zero-valued
// settings take the documented defaults.
type Layout struct {
	// Arms are the spiral arms, in the order of their densities in Density.LogDensities.
	// Names must be distinct.
	Arms []Arm

	// R0 is the Sun–centre distance in kpc (> 0).
	R0 float64

	// WidthSlope is the width slope g, in kpc of width per kpc of radius, shared by all arms:
	// w_k(R) = max(w_k + g (R − R0), MinWidth). Zero keeps widths constant.
	WidthSlope float64

	// EdgeSoftening is the softening τ of every arm's ends, in radians. Zero means
	// DefaultEdgeSoftening (3°).
	EdgeSoftening float64

	// DiskScale is the scale length h of the field disk ρ_0(R) = exp(−R/h) / (2π h²), in kpc.
	// Zero means DefaultDiskScale (3 kpc).
	DiskScale float64
}

// soft returns τ with its default applied.
func (l *Layout) soft() float64 {
	if l.EdgeSoftening == 0 {
		return DefaultEdgeSoftening
	}
	return l.EdgeSoftening
}

// scale returns h with its default applied.
func (l *Layout) scale() float64 {
	if l.DiskScale == 0 {
		return DefaultDiskScale
	}
	return l.DiskScale
}

// Validate reports the first invalid setting or arm of l, or nil. Errors are *ParamError
// values, wrapped with the arm's index where an arm is at fault.
func (l Layout) Validate() error {
	switch {
	case !finite(l.R0) || l.R0 <= 0:
		return &ParamError{Field: "R0", Value: l.R0, Reason: "Sun–centre distance must be positive and finite (kpc)"}
	case !finite(l.WidthSlope):
		return &ParamError{Field: "WidthSlope", Value: l.WidthSlope, Reason: "width slope must be finite"}
	case !finite(l.EdgeSoftening) || l.EdgeSoftening < 0:
		return &ParamError{Field: "EdgeSoftening", Value: l.EdgeSoftening, Reason: "end softening must be positive and finite (rad), or zero for the default"}
	case !finite(l.DiskScale) || l.DiskScale < 0:
		return &ParamError{Field: "DiskScale", Value: l.DiskScale, Reason: "disk scale length must be positive and finite (kpc), or zero for the default"}
	}
	for k := range l.Arms {
		if err := l.Arms[k].Validate(); err != nil {
			return fmt.Errorf("arm %d: %w", k, err)
		}
		for j := range k {
			if l.Arms[j].Name == l.Arms[k].Name {
				return fmt.Errorf("arm %d: %w", k, &ParamError{Arm: l.Arms[k].Name, Field: "Name", Reason: fmt.Sprintf("name already used by arm %d", j)})
			}
		}
	}
	return nil
}

// armConst holds everything about one arm that the density needs, computed once per layout.
type armConst struct {
	curve
	lo, hi     float64 // the azimuths between which windings are counted
	start, end float64 // the arm's azimuth range
	w0         float64 // width at R0
	lnZ        float64 // ln of the end factor's integral
	norm       float64 // 1/(√(2π) Z): the constant factor of the linear density
	// edgeSpan is exp(−Δβ/τ), Δβ = end − start: the product e^−u e^−v of the two end
	// factors' exponentials (u + v = Δβ/τ), so that one exponential gives both.
	edgeSpan float64
}

// Density evaluates the logarithms of the field and arm densities of one Layout, with all
// per-arm constants computed in advance. A Density is built by NewDensity and may be refilled
// for new parameters by Reset; evaluating it does not allocate. A Density may be read by many
// goroutines at once, but Reset must not run concurrently with anything else.
//
// The densities are per unit area of the Galactic plane, in kpc⁻². Each integrates to one over
// the plane: ρ_0 exactly, and each arm up to its ends' tails beyond WindingReach·τ (below
// 1e-13) when the width slope g is zero; a slope g ≠ 0 makes an arm's integral
// 1 + (g/cos ψ)² to leading order, about 1.0004 for g = 0.02.
//
// The zero Density holds no layout; use NewDensity, or Reset before the first evaluation.
type Density struct {
	arms     []armConst
	r0       float64
	slope    float64
	invSoft  float64
	invScale float64
	lnField  float64 // −ln(2π h²)
}

// NewDensity validates l and returns its Density.
func NewDensity(l Layout) (*Density, error) {
	d := new(Density)
	if err := d.Reset(l); err != nil {
		return nil, err
	}
	return d, nil
}

// Reset validates l and refills d with its constants. It reuses d's storage, so it does not
// allocate when l has no more arms than d held before. On error d is left unchanged.
func (d *Density) Reset(l Layout) error {
	if err := l.Validate(); err != nil {
		return err
	}
	tau, h := l.soft(), l.scale()
	if cap(d.arms) < len(l.Arms) {
		d.arms = make([]armConst, len(l.Arms))
	}
	d.arms = d.arms[:len(l.Arms)]
	for k := range l.Arms {
		a := &l.Arms[k]
		d.arms[k] = armConst{
			curve: newCurve(a),
			lo:    a.BetaStart - WindingReach*tau,
			hi:    a.BetaEnd + WindingReach*tau,
			start: a.BetaStart,
			end:   a.BetaEnd,
			w0:    a.Width,
			lnZ:   logEdgeNorm(a.BetaEnd-a.BetaStart, tau),
		}
		d.arms[k].norm = math.Exp(-halfLn2Pi - d.arms[k].lnZ)
		d.arms[k].edgeSpan = math.Exp(-(a.BetaEnd - a.BetaStart) / tau)
	}
	d.r0 = l.R0
	d.slope = l.WidthSlope
	d.invSoft = 1 / tau
	d.invScale = 1 / h
	d.lnField = -math.Log(twoPi * h * h)
	return nil
}

// NumArms returns the number of arms K; LogDensities fills K+1 values.
func (d *Density) NumArms() int { return len(d.arms) }

// LogField returns ln ρ_0(R) = −R/h − ln(2π h²), the log-density of the field disk per kpc²
// at radius R (kpc).
func (d *Density) LogField(R float64) float64 { return d.lnField - R*d.invScale }

// LogArm returns ln ρ_k(R, β), the log-density per kpc² of arm k (0-based, in Layout order) at
// radius R (kpc) and azimuth beta (radians, any real value). It is finite everywhere, however
// far the point is from the arm. It panics if k is out of range.
func (d *Density) LogArm(k int, R, beta float64) float64 {
	lnR, r := logRadius(R)
	return d.logArm(&d.arms[k], r, beta, lnR)
}

// LogDensities stores ln ρ_0(R) in dst[0] and ln ρ_k(R, β) of arm k in dst[k+1], for a point at
// radius R (kpc) and azimuth beta (radians, any real value); all values are per kpc² and
// finite. It panics if len(dst) != NumArms()+1. It does not allocate.
func (d *Density) LogDensities(dst []float64, R, beta float64) {
	if len(dst) != len(d.arms)+1 {
		panic("arms: LogDensities: len(dst) != NumArms()+1")
	}
	dst[0] = d.lnField - R*d.invScale
	lnR, r := logRadius(R)
	arms := d.arms
	dst = dst[1 : len(arms)+1]
	for k := range arms {
		dst[k] = d.logArm(&arms[k], r, beta, lnR)
	}
}

func logRadius(R float64) (lnR, r float64) {
	if !(R >= minRadius) {
		R = minRadius
	}
	return math.Log(R), R
}

// logArm is ln ρ_k: the logarithm of
//
//	Σ_n E(β_n) exp(ln cos ψ(β_n) − δ_n²/(2w²)),
//
// less ln w, ½ ln 2π, ln Z and ln R. The sum is scaled by the largest exponent, so that only
// one logarithm is taken; the end factors E are taken as they are, and when they underflow
// (only possible for a single winding far beyond an end) logArmTail works in logarithms.
func (d *Density) logArm(c *armConst, R, beta, lnR float64) float64 {
	w := c.w0
	if d.slope != 0 {
		w = widthAt(c.w0, d.slope, R-d.r0)
	}
	invW := 1 / w
	first, last := windings(beta, c.lo, c.hi)
	var m, s float64 // largest exponent and Σ E exp(exponent − m)
	for n := first; n <= last; n++ {
		bn := beta + twoPi*float64(n)
		lnRk, cs, lnCs := c.lnR(bn)
		x := (R - math.Exp(lnRk)) * cs * invW
		if math.Abs(x) > maxOffset {
			x = maxOffset
		}
		t := lnCs - 0.5*x*x
		if n != first && t < m-skipGap {
			continue
		}
		e := edge((bn-c.start)*d.invSoft, (c.end-bn)*d.invSoft)
		switch {
		case n == first:
			m, s = t, e
		case t > m:
			s = s*math.Exp(m-t) + e
			m = t
		default:
			s += e * math.Exp(t-m)
		}
	}
	if !(s > minSum) {
		return d.logArmTail(c, R, beta, lnR, invW)
	}
	return m + math.Log(s*invW) - halfLn2Pi - c.lnZ - lnR
}

const (
	// skipGap is how far, in the log, a winding's exponent may fall below the largest before
	// it is left out. Every counted winding has E > e^{−31} unless it is the only one, so a
	// skipped term is below e^{−40} of the sum, under the float64 rounding of 1.
	skipGap = 71
	// minSum is the smallest scaled sum trusted; below it the end factors have underflowed.
	minSum = 1e-280
)

// logArmTail is logArm computed with ln E throughout (log-sum-exp).
func (d *Density) logArmTail(c *armConst, R, beta, lnR, invW float64) float64 {
	first, last := windings(beta, c.lo, c.hi)
	var m, s float64
	for n := first; n <= last; n++ {
		bn := beta + twoPi*float64(n)
		lnRk, cs, lnCs := c.lnR(bn)
		x := (R - math.Exp(lnRk)) * cs * invW
		if math.Abs(x) > maxOffset {
			x = maxOffset
		}
		t := lnCs - 0.5*x*x + logEdge((bn-c.start)*d.invSoft, (c.end-bn)*d.invSoft)
		switch {
		case n == first:
			m, s = t, 1
		case t > m:
			s = s*math.Exp(m-t) + 1
			m = t
		default:
			s += math.Exp(t - m)
		}
	}
	return m + math.Log(s*invW) - halfLn2Pi - c.lnZ - lnR
}

// edge returns E = σ(u) σ(v) = 1/((1 + e^{−u})(1 + e^{−v})), possibly underflowing to zero.
func edge(u, v float64) float64 {
	p, q := 1.0, 1.0
	if u < 37 {
		p += math.Exp(-u)
	}
	if v < 37 {
		q += math.Exp(-v)
	}
	return 1 / (p * q)
}

// logEdge returns ln σ(u) + ln σ(v) for u + v > 0, as −ln((1 + e^{−u})(1 + e^{−v})) with a
// single logarithm where no exponential can overflow.
func logEdge(u, v float64) float64 {
	if u > 37 && v > 37 {
		return 0
	}
	if u < -700 || v < -700 {
		return logSigmoid(u) + logSigmoid(v)
	}
	p, q := 1.0, 1.0
	if u < 37 {
		p += math.Exp(-u)
	}
	if v < 37 {
		q += math.Exp(-v)
	}
	return -math.Log(p * q)
}

// Densities stores ρ_0(R) in dst[0] and ρ_k(R, β) of arm k in dst[k+1] as plain densities per
// kpc² (not logarithms), for a point at radius R (kpc) and azimuth beta (radians, any real
// value). It costs about half of LogDensities, for a mixture that is summed in plain
// numbers: a winding whose Gaussian factor exp(−δ²/2w²) is below e^−70 (δ beyond about 11.8
// widths) is left out, so each density is exact to within 1e-30 kpc⁻², far below any field
// density in the distance range; use LogDensities where such values matter. It panics if
// len(dst) != NumArms()+1. It does not allocate.
func (d *Density) Densities(dst []float64, R, beta float64) {
	if len(dst) != len(d.arms)+1 {
		panic("arms: Densities: len(dst) != NumArms()+1")
	}
	lnR, r := logRadius(R)
	dst[0] = math.Exp(d.lnField - R*d.invScale)
	invR := 1 / r
	arms := d.arms
	dst = dst[1 : len(arms)+1]
	for k := range arms {
		dst[k] = d.arm(&arms[k], r, lnR, beta, invR)
	}
}

// maxHalfSquare is the largest δ²/(2w²) whose Gaussian factor Densities keeps: e^−70 is
// 4e-31, and every other factor of an arm's density is at most of order one per kpc².
const maxHalfSquare = 70

// maxOffsetLinear is √(2·maxHalfSquare): the |δ|/w beyond which Densities leaves a winding out.
var maxOffsetLinear = math.Sqrt(2 * maxHalfSquare)

// arm is ρ_k in linear form: Σ_n E(β_n) cos ψ(β_n) exp(−δ_n²/(2w²)) / (√(2π) w Z R).
func (d *Density) arm(c *armConst, R, lnR, beta, invR float64) float64 {
	w := c.w0
	if d.slope != 0 {
		w = widthAt(c.w0, d.slope, R-d.r0)
	}
	invW := 1 / w
	first, last := windings(beta, c.lo, c.hi)
	var s float64
	for n := first; n <= last; n++ {
		bn := beta + twoPi*float64(n)
		lnRk, cs, _ := c.lnR(bn)
		// Far from the winding the Gaussian underflows; tell without an exponential:
		// |R − R_k| ≥ R (1 − e^−Δ) ≥ R Δ/(1 + Δ) for Δ = |ln R − ln R_k|.
		if dl := math.Abs(lnR - lnRk); R*dl/(1+dl)*cs*invW > maxOffsetLinear {
			continue
		}
		x := (R - math.Exp(lnRk)) * cs * invW
		h := 0.5 * x * x
		if !(h < maxHalfSquare) {
			continue
		}
		s += edge((bn-c.start)*d.invSoft, (c.end-bn)*d.invSoft) * cs * math.Exp(-h)
	}
	return s * invW * c.norm * invR
}

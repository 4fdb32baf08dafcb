package model

import (
	"fmt"
	"math"
)

// RotationCurve is a circular-speed law Θ(R) of the Galaxy.
type RotationCurve interface {
	// Theta returns the circular speed Θ (km/s) at Galactocentric radius R (kpc, R ≥ 0).
	Theta(R float64) float64
	// Slope returns dΘ/dR (km/s per kpc) at R. Where the curve has a kink (the edge of the
	// core, the end nodes of a NodesCurve) it returns the slope on the outer side.
	Slope(R float64) float64
}

// DefaultCoreRadius is the default R_core (kpc): inside it every rotation curve rises as a
// solid body, Θ(R) = Θ(R_core) R / R_core, so that rotation vanishes at the centre.
const DefaultCoreRadius = 2.0

// CurveFamily names a family of rotation curves, as written in configuration files.
type CurveFamily string

// The rotation-curve families. Each rises as a solid body inside the core radius.
const (
	// CurveLinear is Θ(R) = Θ0 + (dΘ/dR)(R − R0).
	CurveLinear CurveFamily = "linear"
	// CurvePower is Θ(R) = Θ0 (R/R0)^α.
	CurvePower CurveFamily = "power"
	// CurveNodes has free speeds Θ_j at chosen radii, interpolated between them and flat
	// beyond both ends; Θ0 = Θ(R0) is then derived.
	CurveNodes CurveFamily = "nodes"
)

// Interpolation selects how a NodesCurve joins its nodes, as written in configuration
// files. The empty value means MonotoneCubic.
type Interpolation string

// The interpolants of a NodesCurve.
const (
	// MonotoneCubic is the piecewise cubic Hermite interpolant whose node slopes are the
	// weighted harmonic means of the neighbouring secants (Fritsch & Butland 1984, SIAM J.
	// Sci. Stat. Comput. 5, 300), zero at local extrema, which keeps the curve monotone
	// wherever the data are (the conditions of Fritsch & Carlson 1980, SIAM J. Numer. Anal.
	// 17, 238). The end slopes use the one-sided three-point formula, limited the same way.
	// This is the interpolant known as PCHIP.
	MonotoneCubic Interpolation = "monotone"
	// LinearInterp joins the nodes by straight lines.
	LinearInterp Interpolation = "linear"
)

// LinearCurve is Θ(R) = Θ0 + (dΘ/dR)(R − R0) for R ≥ R_core, a solid body inside.
type LinearCurve struct {
	r0, theta0, slope, rCore float64
	coreRate                 float64 // Θ(R_core)/R_core, km/s/kpc
}

// NewLinearCurve returns the linear rotation curve with Θ0 = theta0 (km/s) at R0 = r0 (kpc),
// slope dΘ/dR (km/s/kpc) and core radius rCore (kpc). It needs r0 > rCore > 0.
func NewLinearCurve(r0, theta0, slope, rCore float64) (*LinearCurve, error) {
	c := new(LinearCurve)
	if err := c.set(r0, theta0, slope, rCore); err != nil {
		return nil, err
	}
	return c, nil
}

// set makes c the curve NewLinearCurve describes, in place.
func (c *LinearCurve) set(r0, theta0, slope, rCore float64) error {
	if err := checkCurveRadii(r0, rCore); err != nil {
		return fmt.Errorf("linear rotation curve: %w", err)
	}
	if !isFiniteNumber(theta0) || !isFiniteNumber(slope) {
		return fmt.Errorf("linear rotation curve: Theta0 = %v and dTheta_dR = %v must be finite", theta0, slope)
	}
	*c = LinearCurve{r0: r0, theta0: theta0, slope: slope, rCore: rCore}
	c.coreRate = (theta0 + slope*(rCore-r0)) / rCore
	return nil
}

// Theta returns Θ(R) in km/s.
func (c *LinearCurve) Theta(R float64) float64 {
	if R < c.rCore {
		return c.coreRate * R
	}
	return c.theta0 + c.slope*(R-c.r0)
}

// Slope returns dΘ/dR in km/s/kpc.
func (c *LinearCurve) Slope(R float64) float64 {
	if R < c.rCore {
		return c.coreRate
	}
	return c.slope
}

// ReferenceRadius returns the R0 (kpc) the curve was built with.
func (c *LinearCurve) ReferenceRadius() float64 { return c.r0 }

// CoreRadius returns R_core (kpc).
func (c *LinearCurve) CoreRadius() float64 { return c.rCore }

// PowerCurve is Θ(R) = Θ0 (R/R0)^α for R ≥ R_core, a solid body inside.
type PowerCurve struct {
	r0, theta0, alpha, rCore float64
	coreRate                 float64
	scale                    float64 // Θ0 R0^−α, so that Θ = scale · exp(α ln R)
}

// NewPowerCurve returns the power-law rotation curve with Θ0 = theta0 (km/s) at R0 = r0
// (kpc), exponent alpha and core radius rCore (kpc). It needs r0 > rCore > 0.
func NewPowerCurve(r0, theta0, alpha, rCore float64) (*PowerCurve, error) {
	c := new(PowerCurve)
	if err := c.set(r0, theta0, alpha, rCore); err != nil {
		return nil, err
	}
	return c, nil
}

// set makes c the curve NewPowerCurve describes, in place.
func (c *PowerCurve) set(r0, theta0, alpha, rCore float64) error {
	if err := checkCurveRadii(r0, rCore); err != nil {
		return fmt.Errorf("power rotation curve: %w", err)
	}
	if !isFiniteNumber(theta0) || !isFiniteNumber(alpha) {
		return fmt.Errorf("power rotation curve: Theta0 = %v and alpha = %v must be finite", theta0, alpha)
	}
	*c = PowerCurve{r0: r0, theta0: theta0, alpha: alpha, rCore: rCore}
	c.scale = theta0 * math.Exp(-alpha*math.Log(r0))
	c.coreRate = c.outer(rCore) / rCore
	return nil
}

// outer is the curve without its core; exp and log are several times faster than math.Pow.
func (c *PowerCurve) outer(R float64) float64 { return c.scale * math.Exp(c.alpha*math.Log(R)) }

// Theta returns Θ(R) in km/s.
func (c *PowerCurve) Theta(R float64) float64 {
	if R < c.rCore {
		return c.coreRate * R
	}
	return c.outer(R)
}

// Slope returns dΘ/dR = α Θ(R)/R in km/s/kpc.
func (c *PowerCurve) Slope(R float64) float64 {
	if R < c.rCore {
		return c.coreRate
	}
	return c.alpha * c.Theta(R) / R
}

// ReferenceRadius returns the R0 (kpc) the curve was built with.
func (c *PowerCurve) ReferenceRadius() float64 { return c.r0 }

// CoreRadius returns R_core (kpc).
func (c *PowerCurve) CoreRadius() float64 { return c.rCore }

// NodesCurve is a rotation curve given by speeds Θ_j at radii R_j, joined by an
// Interpolation, flat beyond the first and last nodes, and a solid body inside R_core:
// Θ(R) = Θ_1 for R_core ≤ R < R_1, Θ_N for R > R_N, Θ(R_core) R/R_core for R < R_core.
type NodesCurve struct {
	radii, speeds []float64
	interp        Interpolation
	rCore         float64
	// Cubic on interval j, s = R − R_j: speeds[j] + s (b[j] + s (c[j] + s e[j])).
	b, c, e  []float64
	coreRate float64
	work     []float64 // the monotone cubic's slopes, widths and secants (3n)
}

// NewNodesCurve returns the curve through speeds (km/s) at radii (kpc, strictly increasing,
// positive), joined by interp, with core radius rCore (kpc, > 0). One node gives a flat
// curve. The slices are copied.
func NewNodesCurve(radii, speeds []float64, interp Interpolation, rCore float64) (*NodesCurve, error) {
	c := new(NodesCurve)
	if err := c.set(radii, speeds, interp, rCore); err != nil {
		return nil, err
	}
	return c, nil
}

// set makes c the curve NewNodesCurve describes, in place, reusing c's storage.
func (c *NodesCurve) set(radii, speeds []float64, interp Interpolation, rCore float64) error {
	n := len(radii)
	if n == 0 {
		return fmt.Errorf("nodes rotation curve: no nodes")
	}
	if len(speeds) != n {
		return fmt.Errorf("nodes rotation curve: %d radii but %d speeds", n, len(speeds))
	}
	if !(rCore > 0) || !isFiniteNumber(rCore) {
		return fmt.Errorf("nodes rotation curve: core radius %v kpc must be positive", rCore)
	}
	if interp == "" {
		interp = MonotoneCubic
	}
	if interp != MonotoneCubic && interp != LinearInterp {
		return fmt.Errorf("nodes rotation curve: unknown interpolation %q (want %q or %q)", interp, MonotoneCubic, LinearInterp)
	}
	for j := 0; j < n; j++ {
		if !isFiniteNumber(radii[j]) || radii[j] <= 0 {
			return fmt.Errorf("nodes rotation curve: radius %d is %v kpc, want a positive number", j+1, radii[j])
		}
		if j > 0 && radii[j] <= radii[j-1] {
			return fmt.Errorf("nodes rotation curve: radii must increase, but R_%d = %v ≤ R_%d = %v", j+1, radii[j], j, radii[j-1])
		}
		if !isFiniteNumber(speeds[j]) {
			return fmt.Errorf("nodes rotation curve: Theta_%d = %v must be finite", j+1, speeds[j])
		}
	}
	c.radii = append(c.radii[:0], radii...)
	c.speeds = append(c.speeds[:0], speeds...)
	c.interp, c.rCore = interp, rCore
	c.b, c.c, c.e = resize(c.b, n-1), resize(c.c, n-1), resize(c.e, n-1)
	if n > 1 {
		var d []float64
		if interp == MonotoneCubic {
			c.work = resize(c.work, 3*n)
			d = pchipSlopes(c.work[:n], c.work[n:2*n-1], c.work[2*n:3*n-1], c.radii, c.speeds)
		}
		for j := 0; j < n-1; j++ {
			h := c.radii[j+1] - c.radii[j]
			m := (c.speeds[j+1] - c.speeds[j]) / h
			if interp == LinearInterp {
				c.b[j] = m
				continue
			}
			c.b[j] = d[j]
			c.c[j] = (3*m - 2*d[j] - d[j+1]) / h
			c.e[j] = (d[j] + d[j+1] - 2*m) / (h * h)
		}
	}
	c.coreRate = c.outer(rCore) / rCore
	return nil
}

// resize returns s with length n, reallocated only when its capacity is short.
func resize(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	return s[:n]
}

// pchipSlopes returns the node slopes of the monotone cubic (see MonotoneCubic) for at
// least two nodes, in d (length n), with h and m (length n−1) as scratch.
func pchipSlopes(d, h, m, x, y []float64) []float64 {
	n := len(x)
	for k := 0; k < n-1; k++ {
		h[k] = x[k+1] - x[k]
		m[k] = (y[k+1] - y[k]) / h[k]
	}
	if n == 2 {
		d[0], d[1] = m[0], m[0]
		return d
	}
	for k := 1; k < n-1; k++ {
		if m[k-1] == 0 || m[k] == 0 || math.Signbit(m[k-1]) != math.Signbit(m[k]) {
			d[k] = 0 // local extremum or flat neighbour
			continue
		}
		w1 := 2*h[k] + h[k-1]
		w2 := h[k] + 2*h[k-1]
		d[k] = (w1 + w2) / (w1/m[k-1] + w2/m[k])
	}
	d[0] = pchipEndSlope(h[0], h[1], m[0], m[1])
	d[n-1] = pchipEndSlope(h[n-2], h[n-3], m[n-2], m[n-3])
	return d
}

// pchipEndSlope is the one-sided three-point slope at an end node, with h0, m0 the width and
// secant of the end interval and h1, m1 those of its neighbour; it is set to zero if its sign
// differs from m0's and limited to 3 m0 where the secants change sign.
func pchipEndSlope(h0, h1, m0, m1 float64) float64 {
	d := ((2*h0+h1)*m0 - h0*m1) / (h0 + h1)
	switch {
	case pchipSign(d) != pchipSign(m0):
		return 0
	case pchipSign(m0) != pchipSign(m1) && math.Abs(d) > 3*math.Abs(m0):
		return 3 * m0
	}
	return d
}

func pchipSign(x float64) int {
	switch {
	case x > 0:
		return 1
	case x < 0:
		return -1
	}
	return 0
}

// interval returns j with radii[j] ≤ R < radii[j+1], for radii[0] ≤ R < radii[n−1].
func (c *NodesCurve) interval(R float64) int {
	lo, hi := 0, len(c.radii)-1
	for hi-lo > 1 {
		mid := (lo + hi) / 2
		if c.radii[mid] <= R {
			lo = mid
		} else {
			hi = mid
		}
	}
	return lo
}

// outer is the curve without its core.
func (c *NodesCurve) outer(R float64) float64 {
	n := len(c.radii)
	if R <= c.radii[0] {
		return c.speeds[0]
	}
	if R >= c.radii[n-1] {
		return c.speeds[n-1]
	}
	j := c.interval(R)
	s := R - c.radii[j]
	return c.speeds[j] + s*(c.b[j]+s*(c.c[j]+s*c.e[j]))
}

// Theta returns Θ(R) in km/s.
func (c *NodesCurve) Theta(R float64) float64 {
	if R < c.rCore {
		return c.coreRate * R
	}
	return c.outer(R)
}

// Slope returns dΘ/dR in km/s/kpc (0 beyond the end nodes).
func (c *NodesCurve) Slope(R float64) float64 {
	if R < c.rCore {
		return c.coreRate
	}
	n := len(c.radii)
	if R < c.radii[0] || R >= c.radii[n-1] {
		return 0
	}
	j := c.interval(R)
	s := R - c.radii[j]
	return c.b[j] + s*(2*c.c[j]+3*s*c.e[j])
}

// Radii returns a copy of the node radii (kpc).
func (c *NodesCurve) Radii() []float64 { return append([]float64(nil), c.radii...) }

// Speeds returns a copy of the node speeds (km/s).
func (c *NodesCurve) Speeds() []float64 { return append([]float64(nil), c.speeds...) }

// Interpolation returns how the nodes are joined.
func (c *NodesCurve) Interpolation() Interpolation { return c.interp }

// CoreRadius returns R_core (kpc).
func (c *NodesCurve) CoreRadius() float64 { return c.rCore }

func checkCurveRadii(r0, rCore float64) error {
	if !(rCore > 0) || !isFiniteNumber(rCore) {
		return fmt.Errorf("core radius %v kpc must be positive", rCore)
	}
	if !(r0 > rCore) || !isFiniteNumber(r0) {
		return fmt.Errorf("R0 = %v kpc must exceed the core radius %v kpc", r0, rCore)
	}
	return nil
}

func isFiniteNumber(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

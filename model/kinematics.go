package model

import (
	"fmt"
	"math"
	"sort"

	"github.com/mirabilis-astro/mirabilis/internal/fastexp"
	"github.com/mirabilis-astro/mirabilis/internal/roots"
)

// UVW is a velocity in the local cylindrical frame of a point in the Galaxy, km/s: U toward
// the Galactic centre, V along Galactic rotation, W toward the north Galactic pole.
type UVW struct {
	U, V, W float64
}

// Motion is the kinematic part of the model for one parameter set: the Sun–centre distance
// R0, the rotation curve, the Sun's peculiar motion (U⊙, V⊙, W⊙) and the mean peculiar
// motion of the sources (Ūs, V̄s, W̄s). A source at Galactocentric radius R and azimuth β
// moves with
//
//	V_src = (Θ(R) + V̄s) v̂ + Ūs û + W̄s ẑ
//
// (û toward the centre, v̂ along rotation, ẑ toward the north Galactic pole at the source),
// the Sun with V⊙ = (U⊙, Θ0 + V⊙, W⊙), Θ0 = Θ(R0), both in heliocentric Galactic Cartesian
// axes. The Sun lies in the plane. Build it with NewMotion; it is immutable and safe for
// concurrent use.
type Motion struct {
	r0       float64
	curve    RotationCurve
	theta0   float64
	sun, src UVW
	vSun     [3]float64 // (U⊙, Θ0 + V⊙, W⊙), km/s
}

// NewMotion returns the Motion with Sun–centre distance r0 (kpc), rotation curve curve, the
// Sun's peculiar motion sun and the sources' mean peculiar motion src (km/s). A curve that
// reports a ReferenceRadius (LinearCurve, PowerCurve) must have been built with the same r0.
func NewMotion(r0 float64, curve RotationCurve, sun, src UVW) (*Motion, error) {
	m := new(Motion)
	if err := m.set(r0, curve, sun, src); err != nil {
		return nil, err
	}
	return m, nil
}

// set makes m the Motion NewMotion describes, in place; it allocates only for an error.
func (m *Motion) set(r0 float64, curve RotationCurve, sun, src UVW) error {
	if !(r0 > 0) || !isFiniteNumber(r0) {
		return fmt.Errorf("motion model: R0 = %v kpc must be positive", r0)
	}
	if curve == nil {
		return fmt.Errorf("motion model: no rotation curve")
	}
	if rc, ok := curve.(interface{ ReferenceRadius() float64 }); ok && rc.ReferenceRadius() != r0 {
		return fmt.Errorf("motion model: rotation curve built for R0 = %v kpc, model has R0 = %v kpc", rc.ReferenceRadius(), r0)
	}
	for _, v := range [...]float64{sun.U, sun.V, sun.W, src.U, src.V, src.W} {
		if !isFiniteNumber(v) {
			return fmt.Errorf("motion model: peculiar motions Sun %+v, sources %+v must be finite", sun, src)
		}
	}
	th0 := curve.Theta(r0)
	if !isFiniteNumber(th0) {
		return fmt.Errorf("motion model: Theta(R0) = %v", th0)
	}
	*m = Motion{
		r0:     r0,
		curve:  curve,
		theta0: th0,
		sun:    sun,
		src:    src,
		vSun:   [3]float64{sun.U, th0 + sun.V, sun.W},
	}
	return nil
}

// R0 returns the Sun–centre distance (kpc).
func (m *Motion) R0() float64 { return m.r0 }

// Curve returns the rotation curve.
func (m *Motion) Curve() RotationCurve { return m.curve }

// Theta0 returns Θ0 = Θ(R0) (km/s).
func (m *Motion) Theta0() float64 { return m.theta0 }

// Sun returns the Sun's peculiar motion (U⊙, V⊙, W⊙) (km/s).
func (m *Motion) Sun() UVW { return m.sun }

// Sources returns the sources' mean peculiar motion (Ūs, V̄s, W̄s) (km/s).
func (m *Motion) Sources() UVW { return m.src }

// SunVelocity returns the Sun's Galactocentric velocity (U⊙, Θ0 + V⊙, W⊙) in heliocentric
// Galactic Cartesian components (km/s).
func (m *Motion) SunVelocity() [3]float64 { return m.vSun }

// OmegaSun returns the Sun's angular speed about the centre, Ω⊙ = (Θ0 + V⊙)/R0 (km/s/kpc).
func (m *Motion) OmegaSun() float64 { return (m.theta0 + m.sun.V) / m.r0 }

// Oort returns the Oort constants at R0 (km/s/kpc): A = ½(Θ0/R0 − dΘ/dR) and
// B = −½(Θ0/R0 + dΘ/dR) (these formulas for the Oort constants are common practice, no
// source).
func (m *Motion) Oort() (A, B float64) {
	w := m.theta0 / m.r0
	s := m.curve.Slope(m.r0)
	return 0.5 * (w - s), -0.5 * (w + s)
}

// Prediction holds the observables a Motion predicts for a source at a given distance.
type Prediction struct {
	R                float64 // Galactocentric cylindrical radius, kpc
	CosBeta, SinBeta float64 // Galactocentric azimuth β, 0 at the Sun, increasing with rotation
	Theta            float64 // circular speed Θ(R), km/s
	MuLStar, MuB     float64 // Galactic proper motion (μl cos b, μb), mas/yr
	MuAlphaStar      float64 // equatorial proper motion μα cos δ, mas/yr
	MuDelta          float64 // equatorial proper motion μδ, mas/yr
	VHelio           float64 // heliocentric line-of-sight velocity, km/s
	VLSR             float64 // line-of-sight velocity in the radio LSR, km/s
}

// Beta returns the Galactocentric azimuth β in radians, in (−π, π].
func (p Prediction) Beta() float64 { return math.Atan2(p.SinBeta, p.CosBeta) }

// Predict returns what the Motion predicts for a source on sightline s at distance d (kpc,
// d > 0). With P = d n̂, R = √((R0 − Px)² + Py²), cos β = (R0 − Px)/R, sin β = Py/R,
// û = (cos β, −sin β, 0), v̂ = (sin β, cos β, 0) and Δv = V_src − V⊙:
//
//	v_helio = Δv·n̂,  μl* = Δv·l̂ / (k d),  μb = Δv·b̂ / (k d),  v_LSR = v_helio + V_std·n̂
//
// with l̂ = (−sin l, cos l, 0), b̂ = (−sin b cos l, −sin b sin l, cos b), k = KmsPerKpcMasYr,
// and (μα*, μδ) rotated from (μl*, μb) (Sightline.PMToEquatorial). At R = 0 the azimuth is
// taken as β = 0. It does not allocate; it costs one square root, one rotation-curve
// evaluation and a few dozen multiplications.
func (m *Motion) Predict(s *Sightline, d float64) Prediction {
	var p Prediction
	dc := d * s.CosB
	x := m.r0 - dc*s.CosL
	y := dc * s.SinL
	R := math.Sqrt(x*x + y*y)
	cb, sb := 1.0, 0.0
	if R > 0 {
		cb, sb = x/R, y/R
	}
	th := m.curve.Theta(R)
	rot := th + m.src.V
	// Δv = V_src − V⊙ in heliocentric Galactic Cartesian components.
	vx := rot*sb + m.src.U*cb - m.vSun[0]
	vy := rot*cb - m.src.U*sb - m.vSun[1]
	vz := m.src.W - m.vSun[2]
	h := vx*s.CosL + vy*s.SinL // component along the sightline's azimuth, in the plane
	vl := vy*s.CosL - vx*s.SinL
	vr := h*s.CosB + vz*s.SinB
	vb := vz*s.CosB - h*s.SinB
	inv := 1 / (KmsPerKpcMasYr * d)
	p.R, p.CosBeta, p.SinBeta, p.Theta = R, cb, sb, th
	p.MuLStar, p.MuB = vl*inv, vb*inv
	p.MuAlphaStar = s.CosPhi*p.MuLStar - s.SinPhi*p.MuB
	p.MuDelta = s.SinPhi*p.MuLStar + s.CosPhi*p.MuB
	p.VHelio = vr
	p.VLSR = vr + s.StdDotN
	return p
}

// VLSR returns only the predicted LSR line-of-sight velocity (km/s) of a source on s at
// distance d (kpc), as Predict computes it.
func (m *Motion) VLSR(s *Sightline, d float64) float64 {
	dc := d * s.CosB
	x := m.r0 - dc*s.CosL
	y := dc * s.SinL
	R := math.Sqrt(x*x + y*y)
	cb, sb := 1.0, 0.0
	if R > 0 {
		cb, sb = x/R, y/R
	}
	rot := m.curve.Theta(R) + m.src.V
	vx := rot*sb + m.src.U*cb - m.vSun[0]
	vy := rot*cb - m.src.U*sb - m.vSun[1]
	vz := m.src.W - m.vSun[2]
	return (vx*s.CosL+vy*s.SinL)*s.CosB + vz*s.SinB + s.StdDotN
}

// PeculiarMotion returns the peculiar motion (U, V, W) relative to circular rotation that a
// source on s at distance d (kpc) must have to show the Galactic proper motion (μl*, μb)
// (mas/yr) and the heliocentric line-of-sight velocity vHelio (km/s): the heliocentric
// velocity Δv = vHelio n̂ + k d (μl* l̂ + μb b̂) plus the Sun's V⊙ gives V_src, and
// (U, V, W) = (V_src·û, V_src·v̂ − Θ(R), V_src·ẑ) at the source. It inverts Predict: a source
// predicted with mean peculiar motion (Ūs, V̄s, W̄s) returns exactly that. The Motion's own
// (Ūs, V̄s, W̄s) is not used. Convert equatorial proper motions with Sightline.PMToGalactic
// and LSR velocities with Sightline.LSRToHelio first.
func (m *Motion) PeculiarMotion(s *Sightline, d, muLStar, muB, vHelio float64) UVW {
	kl := KmsPerKpcMasYr * d * muLStar
	kb := KmsPerKpcMasYr * d * muB
	h := vHelio*s.CosB - kb*s.SinB // in-plane component along the sightline's azimuth
	vx := h*s.CosL - kl*s.SinL + m.vSun[0]
	vy := h*s.SinL + kl*s.CosL + m.vSun[1]
	vz := vHelio*s.SinB + kb*s.CosB + m.vSun[2]
	R, cb, sb := s.InPlane(m.r0, d)
	return UVW{
		U: vx*cb - vy*sb,
		V: vx*sb + vy*cb - m.curve.Theta(R),
		W: vz,
	}
}

// BarScatter describes the velocity scatter a circular model must absorb in the inner
// Galaxy, where a bar drives non-circular motions: the one-dimensional intrinsic variance
// at radius R is
//
//	σ²(R) = σ²_vir + Sigma² · S((RInner − R)/Scale),   S(x) = 1/(1 + e^−x)
//
// so that σ → σ_vir outside RInner and √(σ²_vir + Sigma²) well inside it.
type BarScatter struct {
	Sigma  float64 // σ_bar, km/s (default 40)
	Scale  float64 // s_bar, kpc (default 0.5), the width of the transition
	RInner float64 // R_inner, kpc (default 4), where the bar's motions take over
}

// DefaultBarScatter returns BarScatter{Sigma: 40, Scale: 0.5, RInner: 4}.
func DefaultBarScatter() BarScatter { return BarScatter{Sigma: 40, Scale: 0.5, RInner: 4} }

// Variance returns σ²(R) in km²/s² for Galactocentric radius R (kpc) and the intrinsic
// dispersion sigmaVir (km/s) of the sources outside the bar's reach. A non-positive Scale
// makes the transition a step at RInner.
func (b BarScatter) Variance(R, sigmaVir float64) float64 {
	var s float64
	switch {
	case b.Scale > 0:
		if x := (R - b.RInner) / b.Scale; x < 40 { // beyond, S < 5e-18: nothing at float64 precision
			s = 1 / (1 + fastexp.Exp(x))
		}
	case R < b.RInner:
		s = 1
	}
	return sigmaVir*sigmaVir + b.Sigma*b.Sigma*s
}

// KinematicSolution holds the kinematic distances of a line-of-sight velocity along a
// sightline.
type KinematicSolution struct {
	// Distances lists, in increasing order, every distance (kpc) in (0, dMax] at which the
	// predicted v_LSR equals the given one.
	Distances []float64
	// Tangent is the distance (kpc) of the tangent point, where the sightline passes
	// closest to the centre in projection, R0 cos l / cos b; it is 0 when cos l ≤ 0 (the
	// line of sight leaves the Sun outward and has no tangent point). It may exceed dMax.
	Tangent float64
	// VTangent is the predicted v_LSR (km/s) at the tangent point, the terminal velocity of
	// pure circular rotation; NaN without a tangent point.
	VTangent float64
}

// Count returns how many distances were found.
func (k KinematicSolution) Count() int { return len(k.Distances) }

// Near returns the nearest distance, and whether there is one. With a tangent point it is
// the nearest distance not beyond it.
func (k KinematicSolution) Near() (float64, bool) {
	if len(k.Distances) == 0 {
		return math.NaN(), false
	}
	d := k.Distances[0]
	if k.Tangent > 0 && d > k.Tangent {
		return math.NaN(), false
	}
	return d, true
}

// Far returns the farthest distance beyond the tangent point, and whether there is one.
// Without a tangent point there is no far distance.
func (k KinematicSolution) Far() (float64, bool) {
	n := len(k.Distances)
	if n == 0 || k.Tangent <= 0 || k.Distances[n-1] <= k.Tangent {
		return math.NaN(), false
	}
	return k.Distances[n-1], true
}

// kinematicScanSteps is the number of grid steps over (0, dMax] used to bracket the extrema
// and roots of v_LSR(d).
const kinematicScanSteps = 4000

// KinematicDistances returns the distances along s, within (0, dMax] kpc, at which the
// predicted LSR line-of-sight velocity (Predict) equals vLSR (km/s), with the tangent point.
// v_LSR(d) is tabulated on a grid of dMax/4000; its local extrema are located by
// golden-section search, and each stretch between them, where v_LSR is monotone, holds at
// most one root, found by bisection to 1e-12 kpc. Two roots closer than the grid step that
// do not straddle a resolved extremum can be missed.
func (m *Motion) KinematicDistances(s *Sightline, vLSR, dMax float64) (KinematicSolution, error) {
	if !(dMax > 0) || !isFiniteNumber(dMax) {
		return KinematicSolution{}, fmt.Errorf("kinematic distance: dMax = %v kpc must be positive", dMax)
	}
	if !isFiniteNumber(vLSR) {
		return KinematicSolution{}, fmt.Errorf("kinematic distance: v_LSR = %v km/s must be finite", vLSR)
	}
	sol := KinematicSolution{VTangent: math.NaN()}
	if s.CosL > 0 && s.CosB > 0 {
		sol.Tangent = m.r0 * s.CosL / s.CosB
		sol.VTangent = m.VLSR(s, sol.Tangent)
	}
	f := func(d float64) float64 { return m.VLSR(s, d) - vLSR }

	// Break (0, dMax] into stretches on which f is monotone.
	const n = kinematicScanSteps
	step := dMax / n
	dLo := step * 1e-6
	ds := make([]float64, n+1)
	fs := make([]float64, n+1)
	for i := range ds {
		ds[i] = dLo + float64(i)*(dMax-dLo)/n
		fs[i] = f(ds[i])
	}
	breaks := []float64{ds[0]}
	for i := 1; i < n; i++ {
		a, b := fs[i]-fs[i-1], fs[i+1]-fs[i]
		if (a > 0 && b < 0) || (a < 0 && b > 0) {
			g := f
			if a > 0 { // a maximum of f
				g = func(d float64) float64 { return -f(d) }
			}
			x, _ := roots.GoldenMin(g, ds[i-1], ds[i+1], nil)
			breaks = append(breaks, x)
		}
	}
	breaks = append(breaks, ds[n])
	for i := 0; i+1 < len(breaks); i++ {
		a, b := breaks[i], breaks[i+1]
		fa, fb := f(a), f(b)
		switch {
		case fa == 0:
			sol.Distances = appendDistinct(sol.Distances, a)
		case fb == 0:
			sol.Distances = appendDistinct(sol.Distances, b)
		case (fa < 0) != (fb < 0):
			sol.Distances = appendDistinct(sol.Distances, roots.Bisect(f, a, b, fa))
		}
	}
	sort.Float64s(sol.Distances)
	return sol, nil
}

// appendDistinct appends d unless it repeats the last element within 1e-9 kpc.
func appendDistinct(ds []float64, d float64) []float64 {
	if n := len(ds); n > 0 && math.Abs(ds[n-1]-d) < 1e-9 {
		return ds
	}
	return append(ds, d)
}

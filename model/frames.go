package model

import (
	"math"
)

// KmsPerKpcMasYr is k, the transverse speed in km/s of a source at 1 kpc whose position
// changes by 1 mas/yr: one astronomical unit per Julian year, with the IAU 2012 au of
// 149 597 870.700 km (IAU 2012 Resolution B2) and the Julian year of 365.25 × 86 400 s.
// A proper motion μ (mas/yr) at distance d (kpc) is a speed of KmsPerKpcMasYr · μ · d km/s.
const KmsPerKpcMasYr = 4.740470463533348

// The Galactic frame of the Hipparcos catalogue (ESA 1997, The Hipparcos and Tycho
// Catalogues, vol. 1, §1.5.3): the north Galactic pole in ICRS coordinates and the
// Galactic longitude of the north celestial pole, all in degrees. The angles are exact by
// definition; the rotation they define is applied to ICRS coordinates.
const (
	NGPRightAscension    = 192.85948 // α of the north Galactic pole, deg (ICRS)
	NGPDeclination       = 27.12825  // δ of the north Galactic pole, deg (ICRS)
	NCPGalacticLongitude = 122.93192 // l of the north celestial pole, deg
)

// The standard solar motion that defines the radio local standard of rest: 20 km/s toward
// α = 18h, δ = +30° for the mean equator and equinox of B1900. This is a convention of radio
// astronomy (common practice, no source).
const (
	StandardSolarSpeed = 20.0  // km/s
	StandardApexRA     = 270.0 // deg (18h), equinox B1900
	StandardApexDec    = 30.0  // deg, equinox B1900
)

// julianDateB1900 is the Julian date (TT) of the Besselian epoch B1900.0, JD 2415020.31352
// (Lieske 1979, A&A 73, 282; value from memory, checked in the tests against astropy.time).
const julianDateB1900 = 2415020.31352

// julianDateJ2000 is the Julian date (TT) of the epoch J2000.0.
const julianDateJ2000 = 2451545.0

var (
	icrsToGalactic      = hipparcosGalacticMatrix()
	standardSolarMotion = computeStandardSolarMotion()
)

// ICRSToGalacticMatrix returns the rotation matrix A that takes a Cartesian vector from ICRS
// axes to Galactic axes, r_Gal = A r_ICRS. It is built from the Hipparcos pole
// (NGPRightAscension, NGPDeclination) and NCPGalacticLongitude: its rows are the Galactic x
// (toward l = 0, b = 0), y (l = 90°) and z (north Galactic pole) axes in ICRS components.
// The matrix printed in the Hipparcos catalogue (vol. 1, §1.5.3; recalled from memory) is
// the transpose of A, with these axes as its columns.
func ICRSToGalacticMatrix() [3][3]float64 { return icrsToGalactic }

// hipparcosGalacticMatrix builds the ICRS → Galactic rotation. With g the pole direction,
// the unit vector e1 toward the north celestial pole projected on the Galactic plane points
// to l = NCPGalacticLongitude, b = 0, and e2 = g × e1 to 90° further in l; the Galactic
// x and y axes follow by rotating (e1, e2) back through that longitude.
func hipparcosGalacticMatrix() [3][3]float64 {
	g := unitVector(NGPRightAscension*math.Pi/180, NGPDeclination*math.Pi/180)
	// e1: the celestial pole (0, 0, 1) minus its component along g, normalised.
	e1 := [3]float64{-g[2] * g[0], -g[2] * g[1], 1 - g[2]*g[2]}
	n := math.Sqrt(e1[0]*e1[0] + e1[1]*e1[1] + e1[2]*e1[2])
	for i := range e1 {
		e1[i] /= n
	}
	e2 := cross3(g, e1)
	th := NCPGalacticLongitude * math.Pi / 180
	c, s := math.Cos(th), math.Sin(th)
	var a [3][3]float64
	for i := 0; i < 3; i++ {
		a[0][i] = c*e1[i] - s*e2[i]
		a[1][i] = s*e1[i] + c*e2[i]
		a[2][i] = g[i]
	}
	return a
}

// ICRSToGalactic converts ICRS right ascension and declination (deg) to Galactic longitude
// in [0, 360) and latitude (deg), with the Hipparcos rotation (ICRSToGalacticMatrix).
func ICRSToGalactic(raDeg, decDeg float64) (lDeg, bDeg float64) {
	v := mat3Apply(&icrsToGalactic, unitVector(raDeg*math.Pi/180, decDeg*math.Pi/180))
	return sphericalDegrees(v)
}

// GalacticToICRS converts Galactic longitude and latitude (deg) to ICRS right ascension in
// [0, 360) and declination (deg); it is the inverse of ICRSToGalactic.
func GalacticToICRS(lDeg, bDeg float64) (raDeg, decDeg float64) {
	v := mat3ApplyTransposed(&icrsToGalactic, unitVector(lDeg*math.Pi/180, bDeg*math.Pi/180))
	return sphericalDegrees(v)
}

// StandardSolarMotion returns the standard solar motion (StandardSolarSpeed toward
// StandardApexRA, StandardApexDec at equinox B1900) in heliocentric Galactic Cartesian
// components (km/s): about (10.27, 15.32, 7.74).
//
// It is derived, not typed in: the B1900 mean-equator direction is precessed to J2000 with
// the IAU 1976 precession (Lieske et al. 1977, A&A 58, 1) and rotated to Galactic axes with
// ICRSToGalacticMatrix. Neglected, each below 2 arcsec and so below 2e-4 km/s in any
// component: the difference between the FK4 system in which B1900 positions were given and
// the FK5 system of the IAU 1976 precession (the E-terms of aberration, about 0.34 arcsec,
// and the FK4 equinox correction), and the ICRS–FK5 frame bias (about 0.02 arcsec).
func StandardSolarMotion() [3]float64 { return standardSolarMotion }

func computeStandardSolarMotion() [3]float64 {
	u1900 := unitVector(StandardApexRA*math.Pi/180, StandardApexDec*math.Pi/180)
	p := precessionIAU1976(julianDateB1900) // J2000 → B1900
	u2000 := mat3ApplyTransposed(&p, u1900)
	g := mat3Apply(&icrsToGalactic, u2000)
	return [3]float64{StandardSolarSpeed * g[0], StandardSolarSpeed * g[1], StandardSolarSpeed * g[2]}
}

// precessionIAU1976 returns the precession matrix from the mean equator and equinox of
// J2000.0 to those of the date jdTT (Julian date, TT), IAU 1976 model: the angles ζ_A, z_A,
// θ_A of Lieske et al. (1977, A&A 58, 1) with the starting epoch J2000.0 (the coefficients
// are from memory and checked in the tests against ERFA's pmat76), combined as
// P = R3(−z_A) R2(θ_A) R3(−ζ_A) with R_i the rotation of the axes about axis i.
func precessionIAU1976(jdTT float64) [3][3]float64 {
	t := (jdTT - julianDateJ2000) / 36525
	const arcsec = math.Pi / (180 * 3600)
	zeta := (2306.2181 + (0.30188+0.017998*t)*t) * t * arcsec
	z := (2306.2181 + (1.09468+0.018203*t)*t) * t * arcsec
	theta := (2004.3109 + (-0.42665-0.041833*t)*t) * t * arcsec
	r1 := axisRotationZ(-zeta)
	r2 := axisRotationY(theta)
	r3 := axisRotationZ(-z)
	m := mat3Mul(&r2, &r1)
	return mat3Mul(&r3, &m)
}

// GalacticNorthAngle returns cos φ and sin φ, where φ is the position angle of equatorial
// north measured from Galactic north toward increasing l, at Galactic (l, b) in degrees. The
// two proper-motion pairs are related by
//
//	μl* =  cos φ · μα* + sin φ · μδ
//	μb  = −sin φ · μα* + cos φ · μδ
//
// φ follows from the same Hipparcos matrix: equatorial north at the source is the direction
// of the north celestial pole p projected on the sky, so (sin φ, cos φ) ∝ (l̂·p, b̂·p). At
// either celestial pole, where equatorial north is undefined, it returns (1, 0).
func GalacticNorthAngle(lDeg, bDeg float64) (cosPhi, sinPhi float64) {
	sl, cl := math.Sincos(lDeg * math.Pi / 180)
	sb, cb := math.Sincos(bDeg * math.Pi / 180)
	return northAngle(sl, cl, sb, cb)
}

func northAngle(sl, cl, sb, cb float64) (cosPhi, sinPhi float64) {
	// The celestial pole in Galactic components: the third column of ICRS → Galactic.
	px, py, pz := icrsToGalactic[0][2], icrsToGalactic[1][2], icrsToGalactic[2][2]
	s := -sl*px + cl*py            // l̂ · p
	c := -sb*(cl*px+sl*py) + cb*pz // b̂ · p
	n := math.Hypot(s, c)          // cos δ
	if n < 1e-15 || math.IsNaN(n) {
		return 1, 0
	}
	return c / n, s / n
}

// PMICRSToGalactic converts a proper motion from equatorial components (μα* = μα cos δ,
// μδ) to Galactic ones (μl* = μl cos b, μb), both in mas/yr, for a source at ICRS (α, δ) in
// degrees. See GalacticNorthAngle.
func PMICRSToGalactic(raDeg, decDeg, muAlphaStar, muDelta float64) (muLStar, muB float64) {
	s := NewSightlineICRS(raDeg, decDeg)
	return s.PMToGalactic(muAlphaStar, muDelta)
}

// PMGalacticToICRS converts a proper motion from Galactic components (μl*, μb) to
// equatorial ones (μα*, μδ), both in mas/yr, for a source at Galactic (l, b) in degrees.
// See GalacticNorthAngle.
func PMGalacticToICRS(lDeg, bDeg, muLStar, muB float64) (muAlphaStar, muDelta float64) {
	s := NewSightline(lDeg, bDeg)
	return s.PMToEquatorial(muLStar, muB)
}

// ParallaxDistance returns the distance in kpc of a source with parallax plx in mas, 1/plx.
// It is the plain inverse, meaningful only for significant positive parallaxes; the
// likelihood integrates over distance instead of using it.
func ParallaxDistance(plx float64) float64 { return 1 / plx }

// Sightline holds what the kinematics needs about a direction on the sky, computed once per
// source: Galactic longitude and latitude (rad) with their sines and cosines, the rotation
// between Galactic and equatorial proper motions (GalacticNorthAngle), and the projection
// of the standard solar motion on the line of sight. Build it with NewSightline or
// NewSightlineICRS; its fields are read-only.
type Sightline struct {
	L, B                   float64 // Galactic longitude and latitude, rad
	SinL, CosL, SinB, CosB float64
	CosPhi, SinPhi         float64 // equatorial north from Galactic north, toward +l
	StdDotN                float64 // V_std · n̂, km/s: v_LSR − v_helio on this sightline
}

// NewSightline returns the Sightline toward Galactic (l, b) in degrees.
func NewSightline(lDeg, bDeg float64) Sightline {
	var s Sightline
	s.L, s.B = lDeg*math.Pi/180, bDeg*math.Pi/180
	s.SinL, s.CosL = math.Sincos(s.L)
	s.SinB, s.CosB = math.Sincos(s.B)
	s.CosPhi, s.SinPhi = northAngle(s.SinL, s.CosL, s.SinB, s.CosB)
	n := s.Direction()
	v := &standardSolarMotion
	s.StdDotN = v[0]*n[0] + v[1]*n[1] + v[2]*n[2]
	return s
}

// NewSightlineICRS returns the Sightline toward ICRS (α, δ) in degrees.
func NewSightlineICRS(raDeg, decDeg float64) Sightline {
	return NewSightline(ICRSToGalactic(raDeg, decDeg))
}

// LDeg returns the Galactic longitude in degrees, in [0, 360).
func (s *Sightline) LDeg() float64 {
	l := math.Mod(s.L*180/math.Pi, 360)
	if l < 0 {
		l += 360
	}
	return l
}

// BDeg returns the Galactic latitude in degrees.
func (s *Sightline) BDeg() float64 { return s.B * 180 / math.Pi }

// Direction returns n̂ = (cos b cos l, cos b sin l, sin b), the unit vector from the Sun
// toward the source in heliocentric Galactic Cartesian axes.
func (s *Sightline) Direction() [3]float64 {
	return [3]float64{s.CosB * s.CosL, s.CosB * s.SinL, s.SinB}
}

// Position returns the source's heliocentric Galactic Cartesian position P = d n̂ (kpc) at
// distance d (kpc).
func (s *Sightline) Position(d float64) [3]float64 {
	return [3]float64{d * s.CosB * s.CosL, d * s.CosB * s.SinL, d * s.SinB}
}

// InPlane returns the Galactocentric cylindrical radius R (kpc) of the point at distance d
// (kpc) along the sightline, for a Sun–centre distance r0 (kpc) with the Sun in the plane,
// and the cosine and sine of its azimuth β = atan2(Py, r0 − Px) (0 at the Sun, increasing
// with Galactic rotation). At R = 0 it returns β = 0.
func (s *Sightline) InPlane(r0, d float64) (R, cosBeta, sinBeta float64) {
	dc := d * s.CosB
	x := r0 - dc*s.CosL
	y := dc * s.SinL
	R = math.Sqrt(x*x + y*y)
	if R == 0 {
		return 0, 1, 0
	}
	return R, x / R, y / R
}

// PMToGalactic converts equatorial proper motions (μα*, μδ) to Galactic ones (μl*, μb),
// mas/yr, on this sightline.
func (s *Sightline) PMToGalactic(muAlphaStar, muDelta float64) (muLStar, muB float64) {
	return s.CosPhi*muAlphaStar + s.SinPhi*muDelta, -s.SinPhi*muAlphaStar + s.CosPhi*muDelta
}

// PMToEquatorial converts Galactic proper motions (μl*, μb) to equatorial ones (μα*, μδ),
// mas/yr, on this sightline.
func (s *Sightline) PMToEquatorial(muLStar, muB float64) (muAlphaStar, muDelta float64) {
	return s.CosPhi*muLStar - s.SinPhi*muB, s.SinPhi*muLStar + s.CosPhi*muB
}

// HelioToLSR converts a heliocentric line-of-sight velocity (km/s) on this sightline to the
// radio LSR: v_LSR = v_helio + V_std · n̂, V_std the StandardSolarMotion.
func (s *Sightline) HelioToLSR(vHelio float64) float64 { return vHelio + s.StdDotN }

// LSRToHelio converts an LSR line-of-sight velocity (km/s) on this sightline back to
// heliocentric: v_helio = v_LSR − V_std · n̂.
func (s *Sightline) LSRToHelio(vLSR float64) float64 { return vLSR - s.StdDotN }

// unitVector returns (cos lat cos lon, cos lat sin lon, sin lat) for angles in radians.
func unitVector(lon, lat float64) [3]float64 {
	so, co := math.Sincos(lon)
	sa, ca := math.Sincos(lat)
	return [3]float64{ca * co, ca * so, sa}
}

// sphericalDegrees returns the longitude in [0, 360) and the latitude, in degrees, of a
// unit vector.
func sphericalDegrees(v [3]float64) (lon, lat float64) {
	lon = math.Atan2(v[1], v[0]) * 180 / math.Pi
	if lon < 0 {
		lon += 360
	}
	if lon >= 360 {
		lon -= 360
	}
	lat = math.Atan2(v[2], math.Hypot(v[0], v[1])) * 180 / math.Pi
	return lon, lat
}

func cross3(a, b [3]float64) [3]float64 {
	return [3]float64{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}

func mat3Apply(m *[3][3]float64, v [3]float64) [3]float64 {
	var r [3]float64
	for i := 0; i < 3; i++ {
		r[i] = m[i][0]*v[0] + m[i][1]*v[1] + m[i][2]*v[2]
	}
	return r
}

func mat3ApplyTransposed(m *[3][3]float64, v [3]float64) [3]float64 {
	var r [3]float64
	for i := 0; i < 3; i++ {
		r[i] = m[0][i]*v[0] + m[1][i]*v[1] + m[2][i]*v[2]
	}
	return r
}

func mat3Mul(a, b *[3][3]float64) [3][3]float64 {
	var r [3][3]float64
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			r[i][j] = a[i][0]*b[0][j] + a[i][1]*b[1][j] + a[i][2]*b[2][j]
		}
	}
	return r
}

// axisRotationZ is the rotation of the coordinate axes by angle a (rad) about z: a vector's
// components in the new axes are R3(a) times those in the old ones.
func axisRotationZ(a float64) [3][3]float64 {
	s, c := math.Sincos(a)
	return [3][3]float64{{c, s, 0}, {-s, c, 0}, {0, 0, 1}}
}

// axisRotationY is the rotation of the coordinate axes by angle a (rad) about y.
func axisRotationY(a float64) [3][3]float64 {
	s, c := math.Sincos(a)
	return [3][3]float64{{c, 0, -s}, {0, 1, 0}, {s, 0, c}}
}

package model

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// The reference vectors in ../testdata/frames were made by gen_frames.py with Debian's
// python3-astropy 5.2.1 (with numpy 1.24.2, scipy 1.10.1, pyerfa 2.0.0.1); the versions
// are also recorded in frames_reference.json and checked below.

const framesRefDir = "../testdata/frames"

// framesReference is frames_reference.json.
type framesReference struct {
	AstropyVersion string         `json:"astropy_version"`
	ScipyVersion   string         `json:"scipy_version"`
	PyerfaVersion  string         `json:"pyerfa_version"`
	RCore          float64        `json:"r_core"`
	NodeRadii      []float64      `json:"node_radii"`
	VStdFK4B1900   [3]float64     `json:"v_std_fk4_b1900"`
	VStdFK5B1900   [3]float64     `json:"v_std_fk5_b1900"`
	B1900JDTT      float64        `json:"b1900_jd_tt"`
	Pmat76B1900    [3][3]float64  `json:"pmat76_j2000_to_b1900"`
	HipparcosEuler [3][3]float64  `json:"hipparcos_icrs_to_galactic"`
	Pchip          []pchipRefCase `json:"pchip"`
}

type pchipRefCase struct {
	Name  string    `json:"name"`
	X     []float64 `json:"x"`
	Y     []float64 `json:"y"`
	At    []float64 `json:"at"`
	Value []float64 `json:"value"`
	Slope []float64 `json:"slope"`
}

func loadFramesReference(t testing.TB) framesReference {
	t.Helper()
	data, err := os.ReadFile(filepath.Join(framesRefDir, "frames_reference.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref framesReference
	if err := json.Unmarshal(data, &ref); err != nil {
		t.Fatal(err)
	}
	return ref
}

// framesRow is one row of frames_sources.csv: numeric columns by name, plus the curve
// family and the node speeds.
type framesRow struct {
	num        map[string]float64
	curve      string
	nodeSpeeds []float64
}

func (r framesRow) get(t testing.TB, name string) float64 {
	t.Helper()
	v, ok := r.num[name]
	if !ok {
		t.Fatalf("frames_sources.csv: no column %q", name)
	}
	return v
}

func loadFramesSources(t testing.TB) []framesRow {
	t.Helper()
	f, err := os.Open(filepath.Join(framesRefDir, "frames_sources.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) < 2 {
		t.Fatal("frames_sources.csv: no rows")
	}
	head := recs[0]
	var rows []framesRow
	for _, rec := range recs[1:] {
		r := framesRow{num: map[string]float64{}}
		for i, name := range head {
			switch name {
			case "curve":
				r.curve = rec[i]
			case "node_speeds":
				if rec[i] == "" {
					continue
				}
				for _, s := range strings.Split(rec[i], ";") {
					v, err := strconv.ParseFloat(s, 64)
					if err != nil {
						t.Fatal(err)
					}
					r.nodeSpeeds = append(r.nodeSpeeds, v)
				}
			default:
				v, err := strconv.ParseFloat(rec[i], 64)
				if err != nil {
					t.Fatalf("column %s: %v", name, err)
				}
				r.num[name] = v
			}
		}
		rows = append(rows, r)
	}
	return rows
}

// angularSeparationDeg returns the angle in degrees between two directions given as
// longitude and latitude in degrees.
func angularSeparationDeg(lon1, lat1, lon2, lat2 float64) float64 {
	a := unitVector(lon1*math.Pi/180, lat1*math.Pi/180)
	b := unitVector(lon2*math.Pi/180, lat2*math.Pi/180)
	dx, dy, dz := a[0]-b[0], a[1]-b[1], a[2]-b[2]
	return 2 * math.Asin(math.Sqrt(dx*dx+dy*dy+dz*dz)/2) * 180 / math.Pi
}

func TestReferenceVersions(t *testing.T) {
	ref := loadFramesReference(t)
	// The tests below name astropy 5.2.1 (Debian python3-astropy) as their reference.
	if ref.AstropyVersion != "5.2.1" {
		t.Errorf("reference made with astropy %s, tests name 5.2.1: regenerate and update", ref.AstropyVersion)
	}
}

func TestKFromAUAndJulianYear(t *testing.T) {
	// IAU 2012 Resolution B2: 1 au = 149 597 870 700 m exactly.
	const auKm = 149597870.700
	// The Julian year: 365.25 days of 86 400 s (IAU; common practice, no source needed).
	const julianYearS = 365.25 * 86400
	// 1 mas/yr at 1 kpc: 1 kpc × 1 mas = 1 au (the definition of the parsec), per year.
	k := auKm / julianYearS
	if math.Abs(k-KmsPerKpcMasYr) > 1e-14*k {
		t.Errorf("k = %.15g, au/Julian year = %.15g", KmsPerKpcMasYr, k)
	}
	// The often-quoted 4.740470446 (the Hipparcos catalogue's value, from memory)
	// is within 4e-9 of it, relatively: far below any measurement here.
	if d := math.Abs(4.740470446-KmsPerKpcMasYr) / k; d > 4e-9 {
		t.Errorf("k differs from 4.740470446 by %g relative", d)
	}
}

func TestParallaxFactsOfTheTrade(t *testing.T) {
	// Common practice, no source: a parallax of 0.512 mas is a distance of 1.95 kpc.
	if d := ParallaxDistance(0.512); math.Abs(d-1.95) > 0.005 {
		t.Errorf("0.512 mas → %.4f kpc, want 1.95", d)
	}
	// Common practice, no source: σϖ = 0.010 mas on 0.512 mas is about 2% in distance
	// (to first order σd/d = σϖ/ϖ); check through the distances themselves.
	d0, d1 := ParallaxDistance(0.512), ParallaxDistance(0.512-0.010)
	if rel := (d1 - d0) / d0; math.Abs(rel-0.02) > 0.001 {
		t.Errorf("0.010 mas on 0.512 mas → %.4f relative in distance, want about 0.02", rel)
	}
}

func TestHipparcosMatrixPrinted(t *testing.T) {
	// The matrix printed in the Hipparcos catalogue (ESA 1997, vol. 1, §1.5.3), ten decimals,
	// recalled from memory; it maps Galactic to ICRS, the transpose of ours.
	printed := [3][3]float64{
		{-0.0548755604, +0.4941094279, -0.8676661490},
		{-0.8734370902, -0.4448296300, -0.1980763734},
		{-0.4838350155, +0.7469822445, +0.4559837762},
	}
	a := ICRSToGalacticMatrix()
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			// Printed to 10 decimals: rounding leaves at most 5e-11.
			if d := math.Abs(a[j][i] - printed[i][j]); d > 6e-11 {
				t.Errorf("A[%d][%d] = %.12f, printed transpose %.10f (diff %g)", j, i, a[j][i], printed[i][j], d)
			}
		}
	}
}

func TestHipparcosMatrixAstropyEuler(t *testing.T) {
	// The same rotation built by gen_frames.py as astropy 5.2.1's
	// rotation_matrix(180° − 122.93192°, z) · rotation_matrix(90° − 27.12825°, y) ·
	// rotation_matrix(192.85948°, z): a route through Euler angles, independent of ours.
	ref := loadFramesReference(t)
	a := ICRSToGalacticMatrix()
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			if d := math.Abs(a[i][j] - ref.HipparcosEuler[i][j]); d > 1e-14 {
				t.Errorf("A[%d][%d] = %.16f, astropy %.16f", i, j, a[i][j], ref.HipparcosEuler[i][j])
			}
		}
	}
}

func TestHipparcosPoles(t *testing.T) {
	// By definition (ESA 1997, vol. 1, §1.5.3) the north Galactic pole is at
	// α = 192.85948°, δ = 27.12825° and the north celestial pole at l = 122.93192°,
	// b = 27.12825° (the latitude of the celestial pole equals the declination of the
	// Galactic pole: both are 90° minus the angle between the poles).
	_, b := ICRSToGalactic(192.85948, 27.12825)
	if math.Abs(b-90) > 1e-9 {
		t.Errorf("NGP at b = %.12f", b)
	}
	l, b := ICRSToGalactic(0, 90)
	if math.Abs(l-122.93192) > 1e-9 || math.Abs(b-27.12825) > 1e-9 {
		t.Errorf("NCP at (l, b) = (%.10f, %.10f)", l, b)
	}
	// A rotation: orthonormal with determinant +1.
	a := ICRSToGalacticMatrix()
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			dot := a[i][0]*a[j][0] + a[i][1]*a[j][1] + a[i][2]*a[j][2]
			want := 0.0
			if i == j {
				want = 1
			}
			if math.Abs(dot-want) > 1e-15 {
				t.Errorf("row %d · row %d = %g", i, j, dot)
			}
		}
	}
	c := cross3(a[0], a[1])
	if math.Abs(c[0]-a[2][0])+math.Abs(c[1]-a[2][1])+math.Abs(c[2]-a[2][2]) > 1e-15 {
		t.Errorf("x × y ≠ z: left-handed")
	}
}

func TestPrecessionIAU1976AgainstERFA(t *testing.T) {
	// ERFA's pmat76 (pyerfa 2.0.0.1): the IAU 1976 precession from J2000.0 to B1900.0.
	ref := loadFramesReference(t)
	if ref.PyerfaVersion != "2.0.0.1" {
		t.Errorf("reference made with pyerfa %s, test names 2.0.0.1", ref.PyerfaVersion)
	}
	p := precessionIAU1976(julianDateB1900)
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			if d := math.Abs(p[i][j] - ref.Pmat76B1900[i][j]); d > 1e-13 {
				t.Errorf("P[%d][%d] = %.16f, ERFA pmat76 %.16f (diff %g)", i, j, p[i][j], ref.Pmat76B1900[i][j], d)
			}
		}
	}
	// The epoch B1900.0: astropy.time, Time(1900.0, format="byear", scale="tt").jd.
	if math.Abs(julianDateB1900-ref.B1900JDTT) > 1e-6 {
		t.Errorf("B1900.0 = JD %.6f, astropy %.6f", julianDateB1900, ref.B1900JDTT)
	}
}

func TestStandardSolarMotionAgainstAstropy(t *testing.T) {
	ref := loadFramesReference(t)
	v := StandardSolarMotion()
	// astropy 5.2.1: 20 km/s × the direction of FK4(ra=270°, dec=30°, equinox="B1900")
	// transformed to Galactic (E-terms removed, Newcomb precession to B1950, FK4 → FK5,
	// then astropy's FK5-based Galactic frame). Our route neglects the FK4 details (below
	// 2 arcsec, i.e. 2e-4 km/s); the measured difference is 3.6e-5 km/s (0.4 arcsec, the
	// size of the E-terms).
	for i := 0; i < 3; i++ {
		if d := math.Abs(v[i] - ref.VStdFK4B1900[i]); d > 1e-4 {
			t.Errorf("V_std[%d] = %.6f, astropy FK4 %.6f (diff %g)", i, v[i], ref.VStdFK4B1900[i], d)
		}
	}
	// Common practice, no source: the radio LSR's solar motion is about (10.27, 15.32, 7.74)
	// km/s in Galactic components.
	want := [3]float64{10.27, 15.32, 7.74}
	for i := range want {
		if math.Abs(v[i]-want[i]) > 0.006 {
			t.Errorf("V_std[%d] = %.4f, about %.2f expected", i, v[i], want[i])
		}
	}
	if s := math.Sqrt(v[0]*v[0] + v[1]*v[1] + v[2]*v[2]); math.Abs(s-20) > 1e-12 {
		t.Errorf("|V_std| = %.15f, want 20", s)
	}
}

func TestPositionsAgainstAstropy(t *testing.T) {
	rows := loadFramesSources(t)
	var maxHip, maxICRS, maxHipInv, maxICRSInv float64
	for _, r := range rows {
		l, b := r.get(t, "l"), r.get(t, "b")

		// astropy 5.2.1 representation transforms with the Hipparcos matrix built from the
		// pole angles (gen_frames.py, "hip" columns): the definition the code follows.
		gl, gb := ICRSToGalactic(r.get(t, "ra_hip"), r.get(t, "dec_hip"))
		maxHip = math.Max(maxHip, angularSeparationDeg(gl, gb, l, b))
		ra, dec := GalacticToICRS(l, b)
		maxHipInv = math.Max(maxHipInv, angularSeparationDeg(ra, dec, r.get(t, "ra_hip"), r.get(t, "dec_hip")))

		// astropy 5.2.1's own ICRS ↔ Galactic ("icrs" columns). Its Galactic frame is tied to
		// FK5 J2000, and ICRS → FK5 applies the frame bias, so it differs from the Hipparcos
		// definition (the same pole angles applied to ICRS) by a rotation of about 26 mas =
		// 7e-6 deg; the required agreement, 1e-5 deg, allows exactly that.
		gl, gb = ICRSToGalactic(r.get(t, "ra_icrs"), r.get(t, "dec_icrs"))
		maxICRS = math.Max(maxICRS, angularSeparationDeg(gl, gb, l, b))
		maxICRSInv = math.Max(maxICRSInv, angularSeparationDeg(ra, dec, r.get(t, "ra_icrs"), r.get(t, "dec_icrs")))
	}
	t.Logf("positions: Hipparcos convention max %.3g deg (inverse %.3g); astropy ICRS max %.3g deg (inverse %.3g)", maxHip, maxHipInv, maxICRS, maxICRSInv)
	if maxHip > 1e-9 || maxHipInv > 1e-9 {
		t.Errorf("Hipparcos-convention positions differ from astropy by %g / %g deg", maxHip, maxHipInv)
	}
	if maxICRS > 1e-5 || maxICRSInv > 1e-5 {
		t.Errorf("positions differ from astropy's ICRS by %g / %g deg", maxICRS, maxICRSInv)
	}
	// The frame bias must show: if these agreed to far better than 26 mas, the rows would
	// not be astropy's ICRS.
	if maxICRS < 5e-6 {
		t.Errorf("astropy ICRS agrees to %g deg: frame bias missing from the reference", maxICRS)
	}
}

func TestProperMotionRotationAgainstAstropy(t *testing.T) {
	rows := loadFramesSources(t)
	var maxHip, maxICRS, maxBack float64
	for _, r := range rows {
		l, b := r.get(t, "l"), r.get(t, "b")
		muL, muB := r.get(t, "mu_l"), r.get(t, "mu_b")
		// astropy 5.2.1: ("hip") the Galactic velocity rotated to equatorial axes by the
		// Hipparcos matrix and expressed with SphericalCosLatDifferential; ("icrs") astropy's
		// SkyCoord transform to ICRS, whose extra 1.3e-7 rad rotation changes μ by at most
		// 1.3e-7 |μ|.
		ma, md := PMGalacticToICRS(l, b, muL, muB)
		maxHip = math.Max(maxHip, math.Max(math.Abs(ma-r.get(t, "mua_hip")), math.Abs(md-r.get(t, "mud_hip"))))
		maxICRS = math.Max(maxICRS, math.Max(math.Abs(ma-r.get(t, "mua_icrs")), math.Abs(md-r.get(t, "mud_icrs"))))
		gl, gb := PMICRSToGalactic(r.get(t, "ra_hip"), r.get(t, "dec_hip"), r.get(t, "mua_hip"), r.get(t, "mud_hip"))
		maxBack = math.Max(maxBack, math.Max(math.Abs(gl-muL), math.Abs(gb-muB)))
	}
	t.Logf("proper motions: Hipparcos convention max %.3g mas/yr (inverse %.3g); astropy ICRS max %.3g mas/yr", maxHip, maxBack, maxICRS)
	if maxHip > 1e-9 || maxBack > 1e-9 {
		t.Errorf("equatorial proper motions differ from astropy (Hipparcos matrix) by %g / %g mas/yr", maxHip, maxBack)
	}
	if maxICRS > 1e-4 {
		t.Errorf("equatorial proper motions differ from astropy's ICRS by %g mas/yr", maxICRS)
	}
}

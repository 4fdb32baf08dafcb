package model

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model/param"
)

// motionFromRow builds the Motion of one row of frames_sources.csv through MotionFromParams,
// as a parameter file would.
func motionFromRow(t testing.TB, r framesRow, nodeRadii []float64) *Motion {
	t.Helper()
	vals := map[string]float64{"R0": r.get(t, "R0")}
	for _, k := range []string{"Usun", "Vsun", "Wsun", "Us", "Vs", "Ws"} {
		vals[k] = r.get(t, k)
	}
	cs := CurveSettings{RCore: 2}
	switch r.curve {
	case "linear":
		vals["Theta0"], vals["dTheta_dR"] = r.get(t, "Theta0"), r.get(t, "dTheta_dR")
	case "power":
		vals["Theta0"], vals["alpha"] = r.get(t, "Theta0"), r.get(t, "alpha")
	case "nodes":
		for j, v := range r.nodeSpeeds {
			vals[param.NodeName(j+1)] = v
		}
		cs.NodeRadii = nodeRadii
	default:
		t.Fatalf("unknown curve %q", r.curve)
	}
	m, _, err := MotionFromParams(vals, cs)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

func TestPredictAgainstAstropy(t *testing.T) {
	ref := loadFramesReference(t)
	rows := loadFramesSources(t)
	if ref.RCore != 2 {
		t.Fatalf("reference built with R_core = %v", ref.RCore)
	}
	type stat struct {
		name string
		tol  float64 // required agreement
		max  float64
	}
	// Tolerances: those required of the code (1e-6 kpc, 1e-4 mas/yr, 1e-3 km/s); β and Θ
	// follow from R and the azimuth.
	stats := map[string]*stat{}
	order := []string{"R", "beta", "theta", "mu_l", "mu_b", "mua_hip", "mud_hip", "mua_icrs", "mud_icrs", "v_helio", "v_lsr"}
	tols := map[string]float64{"R": 1e-6, "beta": 1e-6, "theta": 1e-6, "mu_l": 1e-4, "mu_b": 1e-4,
		"mua_hip": 1e-4, "mud_hip": 1e-4, "mua_icrs": 1e-4, "mud_icrs": 1e-4, "v_helio": 1e-3, "v_lsr": 1e-3}
	for _, n := range order {
		stats[n] = &stat{name: n, tol: tols[n]}
	}
	check := func(name string, got, want float64) {
		d := math.Abs(got - want)
		if name == "beta" {
			d = math.Abs(math.Remainder(got-want, 360))
		}
		if s := stats[name]; d > s.max || math.IsNaN(d) {
			s.max = d
		}
	}
	for _, r := range rows {
		m := motionFromRow(t, r, ref.NodeRadii)
		s := NewSightline(r.get(t, "l"), r.get(t, "b"))
		p := m.Predict(&s, r.get(t, "d"))
		// What astropy 5.2.1 computes (gen_frames.py): R and β from the source's position in
		// a Galactocentric frame aligned with the Galactic axes; μl*, μb and v_helio from
		// transforming the source's Galactocentric velocity, built from the model's
		// definition, to the Galactic frame (astropy subtracts galcen_v_sun and converts with
		// its own au and Julian year); μα*, μδ from rotating that Galactic velocity with the
		// Hipparcos matrix ("hip") or with astropy's own ICRS transform ("icrs", 26 mas
		// frame bias, at most 1.3e-7 |μ|); v_LSR from astropy.coordinates.LSR with v_bary
		// set to astropy's own FK4-derived standard solar motion.
		check("R", p.R, r.get(t, "R"))
		check("beta", p.Beta()*180/math.Pi, r.get(t, "beta"))
		check("theta", p.Theta, r.get(t, "theta"))
		check("mu_l", p.MuLStar, r.get(t, "mu_l"))
		check("mu_b", p.MuB, r.get(t, "mu_b"))
		check("mua_hip", p.MuAlphaStar, r.get(t, "mua_hip"))
		check("mud_hip", p.MuDelta, r.get(t, "mud_hip"))
		check("mua_icrs", p.MuAlphaStar, r.get(t, "mua_icrs"))
		check("mud_icrs", p.MuDelta, r.get(t, "mud_icrs"))
		check("v_helio", p.VHelio, r.get(t, "v_helio"))
		check("v_lsr", p.VLSR, r.get(t, "v_lsr"))
		if got := m.VLSR(&s, r.get(t, "d")); got != p.VLSR {
			t.Errorf("row %v: VLSR %v ≠ Predict's %v", r.get(t, "id"), got, p.VLSR)
		}
	}
	for _, n := range order {
		s := stats[n]
		t.Logf("%-9s max |diff| %.3g (tolerance %g)", n, s.max, s.tol)
		if s.max > s.tol {
			t.Errorf("%s: max difference from astropy %g exceeds %g", n, s.max, s.tol)
		}
	}
}

func TestPeculiarMotionFromAstropyObservables(t *testing.T) {
	// Feeding astropy 5.2.1's observables (gen_frames.py: μl*, μb, v_helio computed by astropy
	// for a source moving with mean peculiar motion (Us, Vs, Ws)) back in must return
	// (Us, Vs, Ws). The reconstruction scales k d μ by d, so errors grow with d: 1e-4 km/s.
	ref := loadFramesReference(t)
	var worst float64
	for _, r := range loadFramesSources(t) {
		m := motionFromRow(t, r, ref.NodeRadii)
		s := NewSightline(r.get(t, "l"), r.get(t, "b"))
		got := m.PeculiarMotion(&s, r.get(t, "d"), r.get(t, "mu_l"), r.get(t, "mu_b"), r.get(t, "v_helio"))
		for _, d := range []float64{got.U - r.get(t, "Us"), got.V - r.get(t, "Vs"), got.W - r.get(t, "Ws")} {
			worst = math.Max(worst, math.Abs(d))
		}
	}
	t.Logf("peculiar motion from astropy observables: max |diff| %.3g km/s", worst)
	if worst > 1e-4 {
		t.Errorf("peculiar motion from astropy observables off by %g km/s", worst)
	}
}

// flatStandardMotion is a flat rotation curve of speed theta0 with no source peculiar
// motion and the Sun moving with the standard solar motion relative to circular rotation,
// so that the radio LSR is the circular frame at the Sun.
func flatStandardMotion(t testing.TB, r0, theta0 float64) *Motion {
	t.Helper()
	c, err := NewLinearCurve(r0, theta0, 0, DefaultCoreRadius)
	if err != nil {
		t.Fatal(err)
	}
	v := StandardSolarMotion()
	m, err := NewMotion(r0, c, UVW{v[0], v[1], v[2]}, UVW{})
	if err != nil {
		t.Fatal(err)
	}
	return m
}

func TestTangentPointVelocityFlatCurve(t *testing.T) {
	// Derivation (common practice, no source). With V⊙ = (0, Θ0, 0) + V_std, no source
	// peculiar motion and b = 0:
	//   v_LSR = (V_src − V⊙)·n̂ + V_std·n̂ = Θ(R) v̂·n̂ − Θ0 ŷ·n̂ = Θ(R) sin(β + l) − Θ0 sin l,
	// since v̂·n̂ = sin β cos l + cos β sin l. At the tangent point the line of sight is
	// perpendicular to the radius, so the triangle Sun–centre–source has its right angle at
	// the source and β + l = 90°; there R = R0 sin l, and for a flat curve (R ≥ R_core, i.e.
	// sin l ≥ R_core/R0) Θ(R) = Θ0. Hence v_LSR(tangent) = Θ0 (1 − sin l).
	const r0, theta0 = 8.15, 236.0
	m := flatStandardMotion(t, r0, theta0)
	for _, l := range []float64{15, 20, 30, 45, 60, 75, 89} {
		s := NewSightline(l, 0)
		sl := math.Sin(l * math.Pi / 180)
		want := theta0 * (1 - sl)
		sol, err := m.KinematicDistances(&s, 0, 30)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(sol.Tangent-r0*math.Cos(l*math.Pi/180)) > 1e-12 {
			t.Errorf("l=%v: tangent at %v kpc", l, sol.Tangent)
		}
		if math.Abs(sol.VTangent-want) > 1e-9 {
			t.Errorf("l=%v: tangent v_LSR %.10f, want Θ0(1 − sin l) = %.10f", l, sol.VTangent, want)
		}
		p := m.Predict(&s, sol.Tangent)
		if math.Abs(p.R-r0*sl) > 1e-12 {
			t.Errorf("l=%v: R at the tangent point %v, want R0 sin l = %v", l, p.R, r0*sl)
		}
		// It is the extreme v_LSR along the line of sight.
		for _, dd := range []float64{-0.3, -0.01, 0.01, 0.3} {
			if v := m.VLSR(&s, sol.Tangent+dd); v > sol.VTangent {
				t.Errorf("l=%v: v_LSR %v at tangent%+g exceeds the tangent velocity %v", l, v, dd, sol.VTangent)
			}
		}
	}
}

func TestVLSRTextbookFormula(t *testing.T) {
	// The textbook v_LSR = (Θ(R) R0/R − Θ0) sin l cos b of pure circular rotation with the
	// LSR in circular motion (common practice, no source): from the derivation above with
	// the law of sines, sin(β + l) = R0 sin l / R, and the in-plane part of n̂ scaled by cos b.
	const r0 = 8.3
	curve, err := NewLinearCurve(r0, 225, -2.5, DefaultCoreRadius)
	if err != nil {
		t.Fatal(err)
	}
	v := StandardSolarMotion()
	m, err := NewMotion(r0, curve, UVW{v[0], v[1], v[2]}, UVW{})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(7, 11))
	for i := 0; i < 500; i++ {
		l, b := 360*rng.Float64(), -60+120*rng.Float64()
		d := 0.1 + 20*rng.Float64()
		s := NewSightline(l, b)
		p := m.Predict(&s, d)
		want := (curve.Theta(p.R)*r0/p.R - 225) * math.Sin(l*math.Pi/180) * math.Cos(b*math.Pi/180)
		if math.Abs(p.VLSR-want) > 1e-9 {
			t.Fatalf("l=%v b=%v d=%v: v_LSR %v, textbook %v", l, b, d, p.VLSR, want)
		}
	}
}

func TestOortConstants(t *testing.T) {
	// Flat curve: A = −B = Θ0/(2 R0) (Oort constants of a flat rotation curve; common
	// practice, no source).
	m := flatStandardMotion(t, 8.0, 240)
	a, b := m.Oort()
	if math.Abs(a-15) > 1e-12 || math.Abs(b+15) > 1e-12 {
		t.Errorf("flat curve: A, B = %v, %v; want 15, −15", a, b)
	}
	// A − B = Θ0/R0 and A + B = −dΘ/dR at R0 for any curve (the definitions); dΘ/dR checked
	// against a central difference of Θ(R).
	for _, c := range kinTestCurves(t, 8.2) {
		m, err := NewMotion(8.2, c, UVW{}, UVW{})
		if err != nil {
			t.Fatal(err)
		}
		a, b := m.Oort()
		const h = 1e-5
		slope := (c.Theta(8.2+h) - c.Theta(8.2-h)) / (2 * h)
		if math.Abs(a-b-m.Theta0()/8.2) > 1e-12 || math.Abs(a+b+slope) > 1e-6 {
			t.Errorf("%T: A = %v, B = %v, Θ0/R0 = %v, dΘ/dR ≈ %v", c, a, b, m.Theta0()/8.2, slope)
		}
	}
}

func TestPeculiarMotionRoundTrip(t *testing.T) {
	// Predict with known mean peculiar motion, then reconstruct it from the observables
	// (Galactic proper motions, equatorial ones rotated back, heliocentric and LSR
	// velocities converted back): an identity of the model.
	rng := rand.New(rand.NewPCG(3, 5))
	for _, c := range kinTestCurves(t, 8.1) {
		for i := 0; i < 200; i++ {
			src := UVW{-20 + 40*rng.Float64(), -20 + 40*rng.Float64(), -10 + 20*rng.Float64()}
			m, err := NewMotion(8.1, c, UVW{11, 15, 7}, src)
			if err != nil {
				t.Fatal(err)
			}
			s := NewSightline(360*rng.Float64(), -90+180*rng.Float64())
			d := 0.05 + 25*rng.Float64()
			p := m.Predict(&s, d)
			muL, muB := s.PMToGalactic(p.MuAlphaStar, p.MuDelta)
			got := m.PeculiarMotion(&s, d, muL, muB, s.LSRToHelio(p.VLSR))
			if math.Abs(got.U-src.U) > 1e-9 || math.Abs(got.V-src.V) > 1e-9 || math.Abs(got.W-src.W) > 1e-9 {
				t.Fatalf("%T d=%v: reconstructed %+v, predicted with %+v", c, d, got, src)
			}
		}
	}
}

func TestKinematicDistancesRoundTrip(t *testing.T) {
	// Distances used to predict v_LSR must be among the kinematic distances of that v_LSR,
	// and every distance returned must reproduce it.
	rng := rand.New(rand.NewPCG(13, 17))
	for _, c := range kinTestCurves(t, 8.1) {
		m, err := NewMotion(8.1, c, UVW{10, 12, 7}, UVW{-3, -5, 1})
		if err != nil {
			t.Fatal(err)
		}
		for i := 0; i < 60; i++ {
			s := NewSightline(360*rng.Float64(), -3+6*rng.Float64())
			d := 0.2 + 19*rng.Float64()
			v := m.VLSR(&s, d)
			sol, err := m.KinematicDistances(&s, v, 25)
			if err != nil {
				t.Fatal(err)
			}
			found := false
			for _, x := range sol.Distances {
				if math.Abs(x-d) < 1e-6 {
					found = true
				}
				if r := m.VLSR(&s, x) - v; math.Abs(r) > 1e-8 {
					t.Errorf("%T l=%.2f: returned d=%v gives v_LSR off by %g", c, s.LDeg(), x, r)
				}
			}
			if !found {
				t.Errorf("%T l=%.2f b=%.2f: d=%v not among %v (tangent %v)", c, s.LDeg(), s.BDeg(), d, sol.Distances, sol.Tangent)
			}
		}
	}
}

func TestKinematicDistancesNearFar(t *testing.T) {
	// Flat curve, LSR circular (see TestTangentPointVelocityFlatCurve): at l = 30°, b = 0 a
	// velocity between 0 and the terminal velocity Θ0(1 − sin l) has a near and a far
	// distance, symmetric about the tangent point; beyond it, none; a negative one only a far
	// distance (outside the solar circle). In the outer Galaxy (l = 150°) there is one.
	m := flatStandardMotion(t, 8.0, 230)
	s := NewSightline(30, 0)
	sol, err := m.KinematicDistances(&s, 60, 30)
	if err != nil {
		t.Fatal(err)
	}
	near, okN := sol.Near()
	far, okF := sol.Far()
	if sol.Count() != 2 || !okN || !okF || math.Abs((near+far)/2-sol.Tangent) > 1e-9 {
		t.Errorf("l=30°, 60 km/s: %+v", sol)
	}
	// Both lie at the radius given by the textbook flat-curve relation v = Θ0 (R0/R − 1) sin l
	// (common practice, no source): R = R0 Θ0 sin l / (Θ0 sin l + v).
	wantR := 8.0 * 230 * 0.5 / (230*0.5 + 60)
	for _, d := range []float64{near, far} {
		if p := m.Predict(&s, d); math.Abs(p.R-wantR) > 1e-9 {
			t.Errorf("R at %v kpc is %v, want %v", d, p.R, wantR)
		}
	}
	if sol, _ := m.KinematicDistances(&s, 230*0.5+1, 30); sol.Count() != 0 {
		t.Errorf("beyond terminal velocity: %+v", sol)
	}
	sol, _ = m.KinematicDistances(&s, -20, 30)
	if _, ok := sol.Near(); sol.Count() != 1 || ok {
		t.Errorf("negative velocity at l = 30°: %+v", sol)
	}
	if _, ok := sol.Far(); !ok {
		t.Errorf("negative velocity at l = 30°: no far distance in %+v", sol)
	}
	s = NewSightline(150, 0)
	sol, _ = m.KinematicDistances(&s, -40, 30)
	if _, ok := sol.Near(); sol.Count() != 1 || !ok || sol.Tangent != 0 || !math.IsNaN(sol.VTangent) {
		t.Errorf("outer Galaxy: %+v", sol)
	}
	if _, err := m.KinematicDistances(&s, 0, -1); err == nil {
		t.Error("negative dMax accepted")
	}
}

func TestBarScatter(t *testing.T) {
	// σ²(R) = σ²_vir + σ²_bar S((R_inner − R)/s_bar), S logistic (package model, Kinematics): S(0) = 1/2,
	// S(±∞) = 1, 0; S(1) = 1/(1 + e^−1) = 0.7310585786300049 (logistic at 1, from the
	// definition).
	b := DefaultBarScatter()
	if b.Sigma != 40 || b.Scale != 0.5 || b.RInner != 4 {
		t.Errorf("defaults %+v", b)
	}
	cases := []struct{ R, want float64 }{
		{4, 25 + 1600*0.5},
		{3.5, 25 + 1600*0.7310585786300049},
		{40, 25},
		{0, 25 + 1600*(1/(1+math.Exp(-8)))},
	}
	for _, c := range cases {
		if got := b.Variance(c.R, 5); math.Abs(got-c.want) > 1e-9 {
			t.Errorf("σ²(%v) = %v, want %v", c.R, got, c.want)
		}
	}
	if v := b.Variance(1e6, 5); v != 25 || math.IsNaN(b.Variance(-1e6, 5)) {
		t.Errorf("far limits: %v, %v", v, b.Variance(-1e6, 5))
	}
	step := BarScatter{Sigma: 40, RInner: 4}
	if step.Variance(3.9, 0) != 1600 || step.Variance(4.1, 0) != 0 {
		t.Error("step transition")
	}
}

func TestPredictDoesNotAllocate(t *testing.T) {
	for _, c := range kinTestCurves(t, 8.1) {
		m, err := NewMotion(8.1, c, UVW{10, 12, 7}, UVW{-3, -5, 1})
		if err != nil {
			t.Fatal(err)
		}
		s := NewSightline(33, 0.4)
		var sink float64
		n := testing.AllocsPerRun(100, func() {
			p := m.Predict(&s, 3.3)
			sink += p.VLSR + p.MuDelta
		})
		if n != 0 {
			t.Errorf("%T: Predict allocates %v times per call", c, n)
		}
	}
}

func TestNewMotionErrors(t *testing.T) {
	c, _ := NewLinearCurve(8, 230, 0, 2)
	if _, err := NewMotion(8.5, c, UVW{}, UVW{}); err == nil {
		t.Error("R0 mismatch with the curve accepted")
	}
	if _, err := NewMotion(8, nil, UVW{}, UVW{}); err == nil {
		t.Error("nil curve accepted")
	}
	if _, err := NewMotion(8, c, UVW{U: math.NaN()}, UVW{}); err == nil {
		t.Error("NaN solar motion accepted")
	}
	if _, err := NewMotion(-1, c, UVW{}, UVW{}); err == nil {
		t.Error("negative R0 accepted")
	}
}

// kinTestCurves returns one curve of each family for R0 = r0.
func kinTestCurves(t testing.TB, r0 float64) []RotationCurve {
	t.Helper()
	lin, err := NewLinearCurve(r0, 232, -1.7, DefaultCoreRadius)
	if err != nil {
		t.Fatal(err)
	}
	pow, err := NewPowerCurve(r0, 228, 0.08, DefaultCoreRadius)
	if err != nil {
		t.Fatal(err)
	}
	nodes, err := NewNodesCurve([]float64{3, 5, 7, 9, 12, 16}, []float64{205, 228, 236, 233, 238, 226}, MonotoneCubic, DefaultCoreRadius)
	if err != nil {
		t.Fatal(err)
	}
	return []RotationCurve{lin, pow, nodes}
}

// benchmarkPairs returns 1000 (sightline, distance) pairs spread over the sky and 0.1–20 kpc.
func benchmarkPairs() ([]Sightline, []float64) {
	rng := rand.New(rand.NewPCG(1, 2))
	ss := make([]Sightline, 1000)
	ds := make([]float64, 1000)
	for i := range ss {
		ss[i] = NewSightline(360*rng.Float64(), -10+20*rng.Float64())
		ds[i] = 0.1 + 20*rng.Float64()
	}
	return ss, ds
}

func benchmarkPredict(b *testing.B, c RotationCurve) {
	m, err := NewMotion(8.1, c, UVW{10, 12, 7}, UVW{-3, -5, 1})
	if err != nil {
		b.Fatal(err)
	}
	ss, ds := benchmarkPairs()
	var sink float64
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		j := i % len(ss)
		p := m.Predict(&ss[j], ds[j])
		sink += p.VLSR + p.MuAlphaStar + p.MuDelta
	}
	if math.IsNaN(sink) {
		b.Fatal("NaN")
	}
}

// BenchmarkPredict measures one predicted observation (R, Θ, both proper-motion pairs, both
// line-of-sight velocities) per operation.
func BenchmarkPredict(b *testing.B) {
	b.Run("linear", func(b *testing.B) { benchmarkPredict(b, kinTestCurves(b, 8.1)[0]) })
	b.Run("power", func(b *testing.B) { benchmarkPredict(b, kinTestCurves(b, 8.1)[1]) })
	b.Run("nodes", func(b *testing.B) { benchmarkPredict(b, kinTestCurves(b, 8.1)[2]) })
}

func BenchmarkKinematicDistances(b *testing.B) {
	m, err := NewMotion(8.1, kinTestCurves(b, 8.1)[0], UVW{10, 12, 7}, UVW{})
	if err != nil {
		b.Fatal(err)
	}
	s := NewSightline(30, 0)
	for i := 0; i < b.N; i++ {
		if _, err := m.KinematicDistances(&s, 50, 25); err != nil {
			b.Fatal(err)
		}
	}
}

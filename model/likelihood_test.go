package model

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"
)

// testSpec is a two-arm galaxy of the project's own invention, with every setting at
// its documented default.
func testSpec(t testing.TB, errors ErrorKind) *Spec {
	em, err := NewErrorModel(errors, 4)
	if err != nil {
		t.Fatal(err)
	}
	s := &Spec{
		Curve:         CurveSettings{Family: CurveLinear, RCore: 2},
		Arms:          []ArmSpec{NewArmSpec("Corvid", 0, -40, 170, false), NewArmSpec("Lantern", 0, -60, 200, true)},
		Bar:           DefaultBarScatter(),
		EdgeSoftening: 3 * deg,
		DiskScale:     3,
		DMin:          0.05,
		DMax:          30,
		Errors:        em,
		Galaxy:        true,
		Tol:           1e-4,
	}
	if err := s.Validate(); err != nil {
		t.Fatal(err)
	}
	return s
}

func testValues() map[string]float64 {
	return map[string]float64{
		"R0": 8.2, "Theta0": 235, "dTheta_dR": -0.5, "Usun": 10.5, "Vsun": 12, "Wsun": 7.5,
		"Us": 2, "Vs": -3, "Ws": 0, "sigma_vir": 6, "width_slope": 0,
		"Corvid_Rref": 5, "Corvid_pitch": 12, "Corvid_width": 0.25,
		"Lantern_Rref": 6.8, "Lantern_pitch": 10, "Lantern_pitch2": 15, "Lantern_kink": 40, "Lantern_width": 0.3,
		"f_field": 0.2, "f_Corvid": 0.4, "f_Lantern": 0.4,
	}
}

func testSources() []Source {
	mk := func(name string, l, b, plx, plxErr float64) Source {
		return Source{Name: name, Sight: NewSightline(l, b), Plx: plx, PlxErr: plxErr}
	}
	a := mk("near-arm", 40, 0.2, 0.22, 0.02)
	a.HasV, a.VLSR, a.V, a.VErr = true, true, 60, 5
	a.HasPM = [2]bool{true, true}
	a.PMGalactic, a.PM, a.PMErr = true, [2]float64{-4.1, -0.2}, [2]float64{0.1, 0.1}
	b := mk("faint", 120, -1, 0.05, 0.06)
	b.HasV, b.V, b.VErr = true, -40, 8
	c := mk("blank", 200, 1.5, 0.4, 0.03)
	d := mk("labelled", 20, 0, 0.15, 0.015)
	d.Label = 1
	d.HasV, d.VLSR, d.V, d.VErr = true, true, 90, 5
	e := mk("negative", 330, 0.5, -0.02, 0.03)
	e.HasPM = [2]bool{true, false}
	e.PM, e.PMErr = [2]float64{-3, 0}, [2]float64{0.2, 0}
	return []Source{a, b, c, d, e}
}

func buildTest(t testing.TB, spec *Spec, src []Source) (*Likelihood, *Params) {
	L, err := NewLikelihood(spec, src)
	if err != nil {
		t.Fatal(err)
	}
	p, err := spec.NewParams(testValues())
	if err != nil {
		t.Fatal(err)
	}
	if _, err := L.BuildLayouts([]*Params{p}, 1); err != nil {
		t.Fatal(err)
	}
	return L, p
}

// TestTolerantDensity checks that the tolerant error model of Sivia & Skilling (2006, Data
// Analysis: A Bayesian Tutorial, §8.3) is a normalised density with the stated limit
// 1/(2σ√(2π)) at r = 0, by numerical integration with gonum's adaptive quadrature.
func TestTolerantDensity(t *testing.T) {
	em, err := NewErrorModel(ErrorsTolerant, 0)
	if err != nil {
		t.Fatal(err)
	}
	for _, sigma := range []float64{0.3, 1, 7} {
		f := func(r float64) float64 { return math.Exp(em.LogDensity(r, sigma*sigma)) }
		// The tails fall as 1/r²: integrate [−A, A] numerically and add the tails
		// analytically, 2 ∫_A^∞ σ/(r² √(2π)) dr = 2σ/(A√(2π)) (the exponential is negligible there).
		A := 200 * sigma
		var total float64
		for _, seg := range [][2]float64{{-A, -sigma}, {-sigma, sigma}, {sigma, A}} {
			total += quad.Fixed(f, seg[0], seg[1], 2000, nil, 0)
		}
		total += 2 * sigma / (A * math.Sqrt(2*math.Pi))
		if math.Abs(total-1) > 1e-6 {
			t.Errorf("σ = %g: ∫ p(r) dr = %.9f, want 1", sigma, total)
		}
		want := 1 / (2 * sigma * math.Sqrt(2*math.Pi))
		for _, r := range []float64{0, 1e-9 * sigma, 1e-5 * sigma} {
			if got := f(r); math.Abs(got-want) > 1e-9*want {
				t.Errorf("σ = %g: p(%g) = %.12g, want the limit %.12g", sigma, r, got, want)
			}
		}
	}
}

// TestStudentAndGaussianNormalised checks the other two error models integrate to one.
func TestStudentAndGaussianNormalised(t *testing.T) {
	for _, kind := range []ErrorKind{ErrorsGaussian, ErrorsStudent} {
		em, _ := NewErrorModel(kind, 4)
		f := func(r float64) float64 { return math.Exp(em.LogDensity(r, 4)) }
		// Student-t with ν = 4 and scale 2: tails ∝ r⁻⁵; integrate far enough.
		total := quad.Fixed(f, -2000, 2000, 20000, nil, 0)
		if math.Abs(total-1) > 1e-6 {
			t.Errorf("%s: ∫ p = %.9f, want 1", kind, total)
		}
	}
}

// TestReorderInvariance: the total log-likelihood does not depend on the order of sources.
func TestReorderInvariance(t *testing.T) {
	spec := testSpec(t, ErrorsGaussian)
	src := testSources()
	L1, p := buildTest(t, spec, src)
	rev := make([]Source, len(src))
	for i := range src {
		rev[i] = src[len(src)-1-i]
	}
	L2, _ := buildTest(t, spec, rev)
	a, b := L1.LogL(p), L2.LogL(p)
	if math.Abs(a-b) > 1e-9*math.Abs(a) {
		t.Errorf("reordered sources: ln L %.12g, original %.12g", b, a)
	}
}

// TestBlankKinematics: a source with every kinematic term blank contributes only its
// position and parallax term, ln ∫ N(ϖ; 1/d, σ) (d cos b)² Σ_m f_m ρ_m du. The reference
// integrates that expression with gonum's adaptive Gauss–Kronrod over the whole distance
// range on a fine grid of subintervals, independently of the source's panels.
func TestBlankKinematics(t *testing.T) {
	spec := testSpec(t, ErrorsGaussian)
	src := testSources()
	L, p := buildTest(t, spec, src)
	i := 2 // "blank"
	s := src[i]
	if s.HasV || s.HasPM[0] || s.HasPM[1] {
		t.Fatal("test source is not blank")
	}
	lin := make([]float64, spec.NumComponents())
	f := func(u float64) float64 {
		d := math.Exp(u)
		z := (s.Plx - 1/d) / s.PlxErr
		par := math.Exp(-0.5*z*z) / (s.PlxErr * math.Sqrt(2*math.Pi))
		R, cb, sb := s.Sight.InPlane(p.Motion.R0(), d)
		p.Density.Densities(lin, R, math.Atan2(sb, cb))
		var mix float64
		for m, v := range lin {
			mix += p.frac[m] * v
		}
		return par * (d * s.Sight.CosB) * (d * s.Sight.CosB) * mix
	}
	lo, hi := math.Log(spec.DMin), math.Log(spec.DMax)
	var want float64
	n := 4000
	for k := range n {
		a := lo + (hi-lo)*float64(k)/float64(n)
		b := lo + (hi-lo)*float64(k+1)/float64(n)
		want += quad.Fixed(f, a, b, 15, nil, 0)
	}
	got := L.SourceLogL(i, p)
	if math.Abs(got-math.Log(want)) > 1e-4 {
		t.Errorf("blank source: ln L = %.8f, direct integral gives %.8f", got, math.Log(want))
	}
	// And nothing kinematic can change it: altering the motion leaves it as it is, apart
	// from R0, which moves the arms.
	v := testValues()
	v["Theta0"], v["Us"], v["sigma_vir"] = 200, 15, 20
	p2, _ := spec.NewParams(v)
	if d := L.SourceLogL(i, p2) - got; math.Abs(d) > 1e-12 {
		t.Errorf("blank source's ln L moved by %g when only the kinematics changed", d)
	}
}

// TestMembershipSumsToOne and labelled sources belong to their arm alone.
func TestMembership(t *testing.T) {
	spec := testSpec(t, ErrorsGaussian)
	src := testSources()
	L, p := buildTest(t, spec, src)
	memb := make([]float64, spec.NumComponents())
	for i := range src {
		ll := L.SourceDetail(i, p, memb)
		if d := ll - L.SourceLogL(i, p); math.Abs(d) > 1e-12 {
			t.Errorf("%s: SourceDetail and SourceLogL differ by %g", src[i].Name, d)
		}
		var sum float64
		for _, v := range memb {
			sum += v
		}
		if math.Abs(sum-1) > 1e-12 {
			t.Errorf("%s: memberships sum to %.15g", src[i].Name, sum)
		}
		if src[i].Label > 0 && math.Abs(memb[src[i].Label]-1) > 1e-12 {
			t.Errorf("%s: tied to arm %d but P = %v", src[i].Name, src[i].Label, memb)
		}
	}
}

// TestFarFromEverythingFinite: a source whose data the model cannot explain keeps a finite
// log-likelihood (package model, Likelihood: log-sum-exp throughout).
func TestFarFromEverythingFinite(t *testing.T) {
	spec := testSpec(t, ErrorsGaussian)
	s := Source{Name: "wild", Sight: NewSightline(10, 0), Plx: 0.5, PlxErr: 0.01, HasV: true, VLSR: true, V: 900, VErr: 1}
	s.HasPM = [2]bool{true, true}
	s.PM, s.PMErr = [2]float64{80, -60}, [2]float64{0.01, 0.01}
	L, p := buildTest(t, spec, []Source{s})
	ll := L.SourceLogL(0, p)
	if math.IsInf(ll, 0) || math.IsNaN(ll) {
		t.Fatalf("ln L = %v, want finite", ll)
	}
	if ll > -1e3 {
		t.Errorf("ln L = %g, want very negative", ll)
	}
}

// TestLayoutRoundTrip: saved quadratures restore exactly.
func TestLayoutRoundTrip(t *testing.T) {
	spec := testSpec(t, ErrorsGaussian)
	src := testSources()
	L, p := buildTest(t, spec, src)
	data, err := L.MarshalLayouts()
	if err != nil {
		t.Fatal(err)
	}
	L2, _ := NewLikelihood(spec, src)
	if err := L2.UnmarshalLayouts(data); err != nil {
		t.Fatal(err)
	}
	if a, b := L.LogL(p), L2.LogL(p); a != b {
		t.Errorf("restored layouts give %.17g, original %.17g", b, a)
	}
	if err := L2.UnmarshalLayouts(data[:len(data)/2]); err == nil {
		t.Error("truncated layouts accepted")
	}
}

// TestParallaxModeUniformPrior: in the parallax mode with no kinematics the integrand is
// N(ϖ; 1/d, σ) / (d_max − d_min) in d, which for a precise parallax integrates to about
// 1/(ϖ² (d_max − d_min)) (the Jacobian |dϖ/dd| = 1/d²; common practice, no source).
func TestParallaxModeUniformPrior(t *testing.T) {
	spec := testSpec(t, ErrorsGaussian)
	spec.Galaxy = false
	s := Source{Name: "precise", Sight: NewSightline(60, 0), Plx: 0.5, PlxErr: 0.0005}
	L, p := buildTest(t, spec, []Source{s})
	got := L.SourceLogL(0, p)
	want := math.Log(1 / (s.Plx * s.Plx * (spec.DMax - spec.DMin)))
	if math.Abs(got-want) > 1e-4 {
		t.Errorf("ln L = %.6f, want %.6f", got, want)
	}
}

// TestMonitorFindsNothingAtPilot: at the pilot itself every source meets the tolerance.
func TestMonitorFindsNothingAtPilot(t *testing.T) {
	spec := testSpec(t, ErrorsStudent)
	src := testSources()
	L, p := buildTest(t, spec, src)
	if bad := L.Monitor(p, nil); len(bad) > 0 {
		t.Errorf("monitor flags sources at the pilot: %v", bad)
	}
	// Far from the pilot the layout may be refined until it meets the tolerance there too.
	rng := rand.New(rand.NewPCG(1, 2))
	v := testValues()
	for k := range v {
		if k[0] != 'f' {
			v[k] *= 1 + 0.05*rng.NormFloat64()
		}
	}
	q, err := spec.NewParams(v)
	if err != nil {
		t.Fatal(err)
	}
	for i := range L.Monitor(q, nil) {
		if err := L.Refine(i, []*Params{q}); err != nil {
			t.Fatal(err)
		}
	}
	if bad := L.Monitor(q, nil); len(bad) > 0 {
		t.Errorf("after refinement the monitor still flags %v", bad)
	}
}

// BenchmarkSourceLogL measures one source's ln L on its fixed quadrature; ns/op divided by
// the node count it logs is the cost of one node.
func BenchmarkSourceLogL(b *testing.B) {
	spec := testSpec(b, ErrorsGaussian)
	src := testSources()
	L, p := buildTest(b, spec, src)
	b.Logf("%d nodes", L.Nodes(0))
	b.ResetTimer()
	for range b.N {
		L.SourceLogL(0, p)
	}
}

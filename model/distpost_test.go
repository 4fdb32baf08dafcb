package model

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/mirabilis-astro/mirabilis/model/quad"
)

// lognormalMasses returns the nodes (kpc) and node masses of a log-normal distance
// posterior, ln d ~ N(mu, sigma), on panels of 15 Kronrod nodes spanning ±8σ in ln d.
func lognormalMasses(t testing.TB, mu, sigma float64, panels int) (d, w, mass []float64) {
	t.Helper()
	lo, hi := mu-8*sigma, mu+8*sigma
	ps := make([]quad.Panel, panels)
	for k := range ps {
		ps[k] = quad.Panel{Lo: lo + (hi-lo)*float64(k)/float64(panels), Hi: lo + (hi-lo)*float64(k+1)/float64(panels)}
	}
	l, err := quad.NewLayout(lo, hi, ps)
	if err != nil {
		t.Fatal(err)
	}
	u := l.Nodes()
	w = l.Weights()
	norm := distuv.Normal{Mu: mu, Sigma: sigma}
	var total float64
	for j := range u {
		d = append(d, math.Exp(u[j]))
		mass = append(mass, w[j]*norm.Prob(u[j]))
		total += mass[j]
	}
	for j := range mass {
		mass[j] /= total
	}
	return d, w, mass
}

func TestMassQuantileLognormal(t *testing.T) {
	// Closed form: for ln d ~ N(mu, sigma) the q-quantile is exp(mu + sigma Φ⁻¹(q)).
	// Panels of 15 Kronrod nodes as the quadrature lays them out (1 to 4 over ±8σ, the
	// widest being coarser than any real layout); every quantile must be within 0.03σ.
	std := distuv.UnitNormal
	for _, panels := range []int{1, 2, 4} {
		for _, c := range []struct{ mu, sigma float64 }{{math.Log(5), 0.1}, {math.Log(0.8), 0.3}, {math.Log(12), 0.02}} {
			d, w, mass := lognormalMasses(t, c.mu, c.sigma, panels)
			for _, q := range []float64{0.025, 0.16, 0.5, 0.84, 0.975} {
				got := math.Log(MassQuantile(d, w, mass, q))
				want := c.mu + c.sigma*std.Quantile(q)
				if e := math.Abs(got-want) / c.sigma; e > 0.03 {
					t.Errorf("panels %d, mu %.3f sigma %g, q %g: ln d %.5f, want %.5f (%.3fσ off)", panels, c.mu, c.sigma, q, got, want, e)
				}
			}
		}
	}
}

func TestMassQuantileEdges(t *testing.T) {
	if !math.IsNaN(MassQuantile(nil, nil, nil, 0.5)) {
		t.Error("no nodes: want NaN")
	}
	if !math.IsNaN(MassQuantile([]float64{1, 2}, []float64{1, 1}, []float64{0, 0}, 0.5)) {
		t.Error("no mass: want NaN")
	}
	if got := MassQuantile([]float64{3}, []float64{1}, []float64{1}, 0.9); math.Abs(got-3) > 1e-12 {
		t.Errorf("one node: got %v, want 3", got)
	}
	// Two nodes of equal density: a flat density over [u0 − h, u1 + h] with h half the
	// spacing, whose median is midway in ln d (closed form).
	if got := MassQuantile([]float64{1, 4}, []float64{1, 1}, []float64{0.5, 0.5}, 0.5); math.Abs(got-2) > 1e-12 {
		t.Errorf("two nodes: median %v, want 2", got)
	}
	// Quantiles never leave half a spacing beyond the end nodes, and increase with q.
	d, w, mass := lognormalMasses(t, 1, 0.2, 2)
	post := NewDistancePosterior(d, w, mass)
	prev := 0.0
	for q := 0.0; q <= 1; q += 0.01 {
		v := post.Quantile(q)
		if v < prev || math.IsNaN(v) {
			t.Fatalf("q %g: %v after %v", q, v, prev)
		}
		prev = v
	}
}

func TestPeculiarDrawsWidenWithDistance(t *testing.T) {
	// A source at l = 30°, b = 0, d = 5 kpc with a 10% distance error (log-normal,
	// σ_ln d = 0.1) under one fixed parameter set: the spread of U over the draws must be
	// what first-order error propagation says, |∂U/∂d| σ_d, with ∂U/∂d from the
	// geometry by central differences. Tolerance: 4000 draws give the sample SD to
	// about 1/√(2·4000) ≈ 1.1% relative; the log-normal's skew and the curvature of U(d)
	// add about 1%; allow 5%.
	m := flatStandardMotion(t, 8.15, 236)
	s := Source{Sight: NewSightline(30, 0), PMGalactic: true, HasPM: [2]bool{true, true}, HasV: true}
	// The observables of a source at 5 kpc moving 10 km/s inward and 5 km/s ahead of
	// circular rotation.
	sun := StandardSolarMotion()
	m2, err := NewMotion(8.15, m.curve, UVW{sun[0], sun[1], sun[2]}, UVW{U: 10, V: 5})
	if err != nil {
		t.Fatal(err)
	}
	p := m2.Predict(&s.Sight, 5)
	s.PM[0], s.PM[1] = s.Sight.PMToGalactic(p.MuAlphaStar, p.MuDelta)
	s.V = s.Sight.LSRToHelio(p.VLSR)
	const n = 4000
	d, w, mass := lognormalMasses(t, math.Log(5), 0.1, 3)
	motions := make([]*Motion, n)
	posts := make([]*DistancePosterior, n)
	for k := range motions {
		motions[k], posts[k] = m, NewDistancePosterior(d, w, mass)
	}
	draws, ok := PeculiarDraws(&s, motions, posts, rand.New(rand.NewPCG(1, 2)))
	if !ok {
		t.Fatal("all kinematics given, but no draws")
	}
	us := make([]float64, n)
	for k, v := range draws {
		us[k] = v.U
	}
	sd := stat.StdDev(us, nil)
	at := func(dist float64) float64 { v, _ := s.PeculiarMotion(m, dist); return v.U }
	const h = 1e-4
	slope := (at(5+h) - at(5-h)) / (2 * h)
	want := math.Abs(slope) * 0.5 // σ_d = 10% of 5 kpc
	if math.Abs(sd-want) > 0.05*want {
		t.Errorf("spread of U over distance draws %.3f km/s, error propagation says %.3f", sd, want)
	}
	if u0 := at(5); math.Abs(u0-10) > 1e-9 {
		t.Errorf("U at the true distance %v, want 10", u0)
	}
	// Without kinematics there are no draws.
	s.HasV = false
	if _, ok := PeculiarDraws(&s, motions, posts, rand.New(rand.NewPCG(1, 2))); ok {
		t.Error("no line-of-sight velocity, yet draws")
	}
}

package fit

import (
	"math"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model"
)

// TestRotationBands checks the credible bands against quantiles worked out by hand: 101
// draws of a flat linear curve with Θ0 = 200, 201, …, 300 km/s. Outside the core Θ(R) = Θ0
// at every R; inside it Θ(R) = Θ(R_core) R/R_core (package model, Kinematics: solid-body core). With the
// midpoint quantile definition of mcmc.Quantile (Hyndman & Fan 1996, type 5) the p-quantile
// of the equally spaced values 200 … 300 is 200 + (101 p − 0.5) km/s.
func TestRotationBands(t *testing.T) {
	var motions []*model.Motion
	for k := range 101 {
		curve, err := model.NewLinearCurve(8, 200+float64(k), 0, 2)
		if err != nil {
			t.Fatal(err)
		}
		m, err := model.NewMotion(8, curve, model.UVW{U: 10, V: 12, W: 7}, model.UVW{})
		if err != nil {
			t.Fatal(err)
		}
		motions = append(motions, m)
	}
	b, err := RotationBands(motions, 16, 32)
	if err != nil {
		t.Fatal(err)
	}
	if len(b.R) != 33 || b.R[0] != 0 || b.R[32] != 16 {
		t.Fatalf("radii %v, want 0 to 16 kpc in 32 steps", b.R)
	}
	q := func(p float64) float64 { return 200 + (101*p - 0.5) }
	for j, R := range b.R {
		f := 1.0
		if R < 2 {
			f = R / 2
		}
		for _, c := range []struct {
			name string
			got  []float64
			p    float64
		}{{"median", b.Median, 0.5}, {"lo68", b.Lo68, 0.16}, {"hi68", b.Hi68, 0.84}, {"lo95", b.Lo95, 0.025}, {"hi95", b.Hi95, 0.975}} {
			if want := f * q(c.p); math.Abs(c.got[j]-want) > 1e-9*want+1e-12 {
				t.Errorf("R = %g kpc: %s %.10g, want %.10g", R, c.name, c.got[j], want)
			}
		}
	}
	if _, err := RotationBands(nil, 16, 32); err == nil {
		t.Error("no draw: want an error")
	}
}

// TestAzimuthalSpeed checks the speed along rotation implied by a source's observables
// against the model's forward prediction: observables predicted for a source that moves
// with Θ(R) + Vs must give back Θ(R) + Vs, whatever the frame the catalog uses.
func TestAzimuthalSpeed(t *testing.T) {
	curve, err := model.NewLinearCurve(8.2, 230, -1.5, model.DefaultCoreRadius)
	if err != nil {
		t.Fatal(err)
	}
	const vs = -6.0
	m, err := model.NewMotion(8.2, curve, model.UVW{U: 11, V: 12, W: 7}, model.UVW{U: 3, V: vs, W: -1})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct{ l, b, d float64 }{{30, 0.1, 4}, {110, -0.5, 3}, {200, 1, 6}, {330, 0, 9}} {
		sight := model.NewSightline(c.l, c.b)
		p := m.Predict(&sight, c.d)
		R, _, _ := sight.InPlane(8.2, c.d)
		want := curve.Theta(R) + vs
		for _, src := range []model.Source{
			{Sight: sight, PM: [2]float64{p.MuAlphaStar, p.MuDelta}, HasPM: [2]bool{true, true}, V: p.VLSR, VLSR: true, HasV: true},
			{Sight: sight, PM: [2]float64{p.MuLStar, p.MuB}, HasPM: [2]bool{true, true}, PMGalactic: true, V: p.VHelio, HasV: true},
		} {
			if got := AzimuthalSpeed(m, &src, c.d); math.Abs(got-want) > 1e-6 {
				t.Errorf("l = %g°, d = %g kpc, Galactic PM %v: %.9g km/s, want %.9g", c.l, c.d, src.PMGalactic, got, want)
			}
		}
	}
}

// TestRadiusRange checks the radii spanned by a stretch of a line of sight against plane
// geometry: toward l = 30° the radius is least at the tangent point, d = R0 cos l, where it
// is R0 sin l (common practice, no source).
func TestRadiusRange(t *testing.T) {
	const R0 = 8
	s := model.NewSightline(30, 0)
	dt := R0 * math.Cos(30*math.Pi/180)
	lo, hi := RadiusRange(&s, R0, dt-1, dt+1)
	if want := R0 * 0.5; math.Abs(lo-want) > 1e-3 {
		t.Errorf("least radius %.6f kpc, want %.6f at the tangent point", lo, want)
	}
	if want := math.Sqrt(R0*R0*0.25 + 1); math.Abs(hi-want) > 1e-9 {
		t.Errorf("greatest radius %.9f kpc, want %.9f at either end", hi, want)
	}
}

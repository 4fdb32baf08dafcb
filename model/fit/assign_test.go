package fit

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/arms"
	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
)

// truthDraws returns n parameter sets scattered about the mock's truth by 2% of each
// sampled coordinate's prior spread (independent normal draws, fixed seed): a stand-in
// for a posterior that has found the truth, with just enough spread for Monte Carlo
// errors to show. It also returns the truth itself.
func truthDraws(t *testing.T, job *Job, truth map[string]float64, n int) ([]Draw, *model.Params) {
	t.Helper()
	x0, err := job.Post.Point(truth)
	if err != nil {
		t.Fatal(err)
	}
	spread := job.Spreads()
	rng := rand.New(rand.NewPCG(3, 9))
	var out []Draw
	for len(out) < n {
		x := make([]float64, len(x0))
		for i := range x {
			x[i] = x0[i] + 0.02*spread[i]*rng.NormFloat64()
		}
		p, err := job.Post.Params(x)
		if err != nil {
			continue
		}
		out = append(out, Draw{X: x, Values: job.Post.Values(x), Params: p})
	}
	p, err := job.Post.Params(x0)
	if err != nil {
		t.Fatal(err)
	}
	return out, p
}

// placeAt returns a catalog row for a source in the plane at (R kpc, β deg) under p, with
// a parallax of relative error relErr and, when kin is set, the proper motions and v_LSR
// that p predicts there (errors 0.02 mas/yr and 3 km/s).
func placeAt(p *model.Params, name string, R, betaDeg, relErr float64, kin bool) string {
	x, y := arms.Heliocentric(p.Motion.R0(), R, betaDeg*math.Pi/180)
	d := math.Hypot(x, y)
	l := math.Mod(math.Atan2(y, x)*180/math.Pi+360, 360)
	row := fmt.Sprintf("%s,%.6f,0,%.6f,%.6f", name, l, 1/d, relErr/d)
	if kin {
		s := model.NewSightline(l, 0)
		pr := p.Motion.Predict(&s, d)
		row += fmt.Sprintf(",%.5f,0.02,%.5f,0.02,%.3f,3", pr.MuAlphaStar, pr.MuDelta, pr.VLSR)
	} else {
		row += ",,,,,,"
	}
	return row
}

// radiusWhere returns the radius between lo and hi at which f changes sign (bisection).
func radiusWhere(f func(R float64) float64, lo, hi float64) float64 {
	for range 100 {
		mid := 0.5 * (lo + hi)
		if (f(mid) > 0) == (f(lo) > 0) {
			lo = mid
		} else {
			hi = mid
		}
	}
	return 0.5 * (lo + hi)
}

func TestAssignOnMockTruth(t *testing.T) {
	path, m := setUp(t, 20, "")
	cfg := load(t, path)
	cat, err := catalog.ReadFile(cfg.Catalog)
	if err != nil {
		t.Fatal(err)
	}
	job, err := Prepare(cfg, cat)
	if err != nil {
		t.Fatal(err)
	}
	draws, truth := truthDraws(t, job, m.Truth, 400)
	corvid, tamarisk := truth.Layout.Arms[0], truth.Layout.Arms[1]
	const beta = 30.0
	b := beta * math.Pi / 180
	rC, rT := corvid.Radius(b), tamarisk.Radius(b)
	// Midway in units of each arm's width: δ⊥/w equal and opposite.
	R0, g := truth.Motion.R0(), truth.Layout.WidthSlope
	mid := radiusWhere(func(R float64) float64 {
		return corvid.Offset(R, b)/corvid.WidthAt(R, R0, g) + tamarisk.Offset(R, b)/tamarisk.WidthAt(R, R0, g)
	}, rC, rT)
	rows := []string{
		"name,l,b,parallax,parallax_err,pmra,pmra_err,pmdec,pmdec_err,vlsr,vlsr_err",
		placeAt(truth, "on_corvid", rC, beta, 0.03, true),
		placeAt(truth, "on_tamarisk", rT, beta, 0.03, true),
		placeAt(truth, "midway", mid, beta, 0.01, false),
		placeAt(truth, "far_out", 15, beta, 0.05, true),
		placeAt(truth, "beyond_ends", 7, 215, 0.05, true),
		"negative,40,0.2,-0.05,0.04,,,,,,",
	}
	newCat, err := catalog.Read(strings.NewReader(strings.Join(rows, "\n")+"\n"), "new.csv")
	if err != nil {
		t.Fatal(err)
	}
	got, err := Assign(job, draws, truth, newCat, 2)
	if err != nil {
		t.Fatal(err)
	}
	by := map[string]Assignment{}
	for _, a := range got {
		by[a.Name] = a
		// Memberships are probabilities of exclusive components: they sum to one to
		// rounding (common practice, no source).
		var s float64
		for _, p := range a.Membership {
			s += p
		}
		if math.Abs(s-1) > 1e-12 {
			t.Errorf("%s: memberships sum to 1%+.2e", a.Name, s-1)
		}
		t.Logf("%s: %v ± %v; d %.2f [%.2f, %.2f] (1/ϖ %.2f); nearest %s %.2f kpc = %.1f widths; R %.2f β %.1f; %v",
			a.Name, a.Membership, a.MembershipError, a.Distance.Median, a.Distance.P16, a.Distance.P84, a.ParallaxDistance,
			a.NearestArm, a.OffsetKpc, a.OffsetWidths, a.R, a.Beta, a.Notes)
	}
	// A source on an arm's centre line, with the motions the model predicts there, belongs
	// to that arm: the truth's densities favour it by far (its neighbour is ~10 widths
	// away) and the field's disk is spread over the whole plane.
	for name, arm := range map[string]string{"on_corvid": "Corvid", "on_tamarisk": "Tamarisk"} {
		a := by[name]
		if a.Best != arm || a.Membership[arm] <= 0.9 {
			t.Errorf("%s: most probable %s, P(%s) = %.3f; want %s above 0.9", name, a.Best, arm, a.Membership[arm], arm)
		}
		if a.NearestArm != arm || math.Abs(a.OffsetWidths) > 0.5 {
			t.Errorf("%s: nearest arm %s at %.2f widths; want %s within half a width", name, a.NearestArm, a.OffsetWidths, arm)
		}
	}
	// Midway in widths between the arms, at a well-measured distance: the arms' Gaussian
	// factors are equal there, and what differs (the fractions, and each arm's
	// normalisation 1/(w Z R)) differs by well under a factor of four, so the share the
	// arms hold splits between them, neither taking more than four fifths. (Both shares are
	// small: the arms lie about 7 widths away, and the field takes most.)
	if a := by["midway"]; true {
		pc, pt := a.Membership["Corvid"], a.Membership["Tamarisk"]
		if share := pc / (pc + pt); !(share > 0.2 && share < 0.8) {
			t.Errorf("midway: P(Corvid) %.3g, P(Tamarisk) %.3g: Corvid's share of the arms %.3f, want 0.2–0.8", pc, pt, share)
		}
	}
	// Far outside every arm (6 kpc beyond the outer arm) or beyond both arms' azimuth
	// ranges: the field.
	for _, name := range []string{"far_out", "beyond_ends"} {
		if a := by[name]; a.Best != "field" || a.Membership["field"] < 0.9 {
			t.Errorf("%s: most probable %s, P(field) %.3f; want the field above 0.9", name, a.Best, a.Membership["field"])
		}
	}
	if a := by["beyond_ends"]; !strings.Contains(strings.Join(a.Notes, " "), "beyond the range") {
		t.Errorf("beyond_ends: notes %q do not say it lies beyond the arms' range", a.Notes)
	}
	// A negative parallax and no kinematics: an answer, with notes saying so.
	if a := by["negative"]; !(a.Distance.Median > 0) || !math.IsNaN(a.ParallaxDistance) || len(a.Notes) < 2 {
		t.Errorf("negative: distance %v, 1/ϖ %v, notes %q", a.Distance, a.ParallaxDistance, a.Notes)
	}
	// The Monte Carlo error of a mean over N independent draws falls as 1/√N: from 100 to
	// 400 draws it halves. The error estimate itself scatters by about 1/√(2N) ≈ 7% at
	// N = 100, so the ratio is allowed 1.6–2.5.
	few, err := Assign(job, draws[:100], truth, newCat, 2)
	if err != nil {
		t.Fatal(err)
	}
	e100, e400 := few[5].MembershipError["field"], by["negative"].MembershipError["field"]
	if r := e100 / e400; !(r > 1.6 && r < 2.5) {
		t.Errorf("Monte Carlo error with 100 draws %.2e, with 400 %.2e: ratio %.2f, want about 2", e100, e400, r)
	}
}

func TestParseSource(t *testing.T) {
	cat, err := ParseSource("l=30, b=0.1,parallax=0.2,parallax_err=0.02,vlsr=80,vlsr_err=5")
	if err != nil {
		t.Fatal(err)
	}
	s := cat.Sources[0]
	if s.Name != "source" || s.Lon != 30 || s.Parallax.Value != 0.2 || !s.Vel.OK || s.Vel.Value != 80 {
		t.Errorf("parsed %+v", s)
	}
	for in, want := range map[string]string{
		"l=30,b=0,parallax=abc,parallax_err=0.1":        "field parallax",
		"l=30,b=0,parallax=0.1,parallax_err=0.1,frob=2": "frob",
		"l=30,b=0,parallax,parallax_err=0.1":            `field "parallax" is not KEY=VALUE`,
		"l=30,b=0,parallax=0.1,parallax=0.2":            "field parallax is given twice",
		"l=30,b=0,parallax=0.1":                         "parallax_err",
		"":                                              "no fields",
	} {
		_, err := ParseSource(in)
		if err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("%q: error %v, want one naming %q", in, err, want)
		}
	}
}

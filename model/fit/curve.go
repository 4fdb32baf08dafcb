package fit

import (
	"errors"
	"fmt"
	"math"

	"github.com/mirabilis-astro/mirabilis/mcmc"
	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/param"
)

// CurveBands holds the posterior quantiles of the circular speed Θ(R) (km/s) on a grid of
// radii R (kpc): the median and the central 68% and 95% intervals.
type CurveBands struct {
	R                              []float64
	Median, Lo68, Hi68, Lo95, Hi95 []float64
}

// RotationBands evaluates the rotation curve of every draw's motion on n+1 radii from 0 to
// rMax (kpc) and returns the median and the central 68% and 95% intervals at each radius
// (quantiles by mcmc.Quantiles); with no draw it returns an error.
func RotationBands(motions []*model.Motion, rMax float64, n int) (CurveBands, error) {
	if len(motions) == 0 {
		return CurveBands{}, errors.New("no posterior draw makes a rotation curve")
	}
	b := CurveBands{R: make([]float64, n+1)}
	cols := []*[]float64{&b.Median, &b.Lo68, &b.Hi68, &b.Lo95, &b.Hi95}
	for _, c := range cols {
		*c = make([]float64, n+1)
	}
	probs := []float64{0.5, 0.16, 0.84, 0.025, 0.975}
	th := make([]float64, len(motions))
	for j := range b.R {
		R := rMax * float64(j) / float64(n)
		b.R[j] = R
		for k, m := range motions {
			th[k] = m.Curve().Theta(R)
		}
		q := mcmc.Quantiles(probs, th, nil)
		for k, c := range cols {
			(*c)[j] = q[k]
		}
	}
	return b, nil
}

// AzimuthalSpeed returns the speed along Galactic rotation (km/s) of source s at distance d
// (kpc) under motion m, from its proper motion and line-of-sight velocity: its peculiar V
// plus Θ(R). The source must have all three kinematic terms.
func AzimuthalSpeed(m *model.Motion, s *model.Source, d float64) float64 {
	uvw, _ := s.PeculiarMotion(m, d)
	R, _, _ := s.Sight.InPlane(m.R0(), d)
	return uvw.V + m.Curve().Theta(R)
}

// RadiusRange returns the least and greatest Galactocentric radius (kpc) along sightline s
// between distances d0 and d1 (kpc) for the Sun at R0 (kpc): the radius along a line of
// sight has at most one minimum (the tangent point), so the ends and a fine sampling
// between them bound it.
func RadiusRange(s *model.Sightline, R0, d0, d1 float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	const n = 32
	for j := 0; j <= n; j++ {
		R, _, _ := s.InPlane(R0, d0+(d1-d0)*float64(j)/n)
		lo, hi = min(lo, R), max(hi, R)
	}
	return lo, hi
}

// PosteriorMotions returns the kinematic models of up to n posterior draws: from chain after
// the summary's burn-in when there is a chain, spread evenly over its rows and taking the
// walkers in turn, otherwise from the summary's draws. Draws that make no model are left
// out.
func PosteriorMotions(job *Job, sum *Summary, chain *mcmc.Chain, n int) []*model.Motion {
	var out []*model.Motion
	add := func(values map[string]float64) {
		if p, err := job.Spec.NewParamsUnnormalised(values); err == nil {
			out = append(out, p.Motion)
		}
	}
	if chain == nil || chain.Len() == 0 || chain.Walkers() == 0 || job.Post == nil {
		for _, d := range sum.Draws {
			add(d)
		}
		return out
	}
	burn := min(max(sum.Burn, 0), chain.Len()-1)
	rows, w := chain.Len()-burn, chain.Walkers()
	n = min(n, rows*w)
	for i := range n {
		add(job.Post.Values(chain.Position(burn+i*rows/n, i%w, nil)))
	}
	return out
}

// SourceSpeed is a source's point on the rotation curve: its radius R (kpc) and the speed
// along rotation Θ(R) + V (km/s) it moves with, at its median distance under the median
// model, with intervals.
type SourceSpeed struct {
	// Index is the source's position in the catalog and in Summary.Sources.
	Index int
	// R and its range RLo … RHi over the 16–84% distance range (kpc).
	R, RLo, RHi float64
	// Theta and its interval ThetaLo … ThetaHi (km/s): the change of the speed across the
	// distance range and its spread over the posterior draws' motions (the Sun's motion and
	// R0 enter it), added in quadrature.
	Theta, ThetaLo, ThetaHi float64
}

// sourceSpeed returns the point of source i on the rotation curve under the median motion
// m and the posterior draws' motions, and false when the source's kinematics are not all
// measured or its distance is unknown.
func sourceSpeed(job *Job, sum *Summary, i int, m *model.Motion, motions []*model.Motion) (SourceSpeed, bool) {
	r := sum.Sources[i]
	src := &job.Like.Sources[i]
	if !r.PeculiarMeasured || !finite(r.R, r.Distance) || !(r.Distance > 0) {
		return SourceSpeed{}, false
	}
	c := SourceSpeed{Index: i, R: r.R, RLo: r.R, RHi: r.R}
	c.Theta = AzimuthalSpeed(m, src, r.Distance)
	if !finite(c.Theta) {
		return SourceSpeed{}, false
	}
	down, up := 0.0, 0.0
	if finite(r.DistanceLo, r.DistanceHi) && r.DistanceLo > 0 && r.DistanceHi >= r.DistanceLo {
		c.RLo, c.RHi = RadiusRange(&src.Sight, m.R0(), r.DistanceLo, r.DistanceHi)
		c.RLo, c.RHi = min(c.RLo, r.R), max(c.RHi, r.R)
		for _, d := range []float64{r.DistanceLo, r.DistanceHi} {
			if v := AzimuthalSpeed(m, src, d); finite(v) {
				down, up = max(down, c.Theta-v), max(up, v-c.Theta)
			}
		}
	}
	var speeds []float64
	for _, mj := range motions {
		if v := AzimuthalSpeed(mj, src, r.Distance); finite(v) {
			speeds = append(speeds, v)
		}
	}
	sd := 0.0
	if len(speeds) > 1 {
		q := mcmc.Quantiles([]float64{0.16, 0.84}, speeds, nil)
		sd = (q[1] - q[0]) / 2
	}
	c.ThetaLo = c.Theta - math.Hypot(down, sd)
	c.ThetaHi = c.Theta + math.Hypot(up, sd)
	return c, true
}

// RotationData is what a figure of the rotation curve shows, in plain numbers.
type RotationData struct {
	// Bands are the posterior bands of Θ(R) from R = 0 to a whole number of kpc beyond the
	// sources (at least 16, at most 40), 20 radii per kpc.
	Bands CurveBands
	// Sources are the sources with measured proper motion and velocity (see SourceSpeed).
	Sources []SourceSpeed
	// R0 and Θ0 (kpc, km/s) of the median model, replaced by the posterior medians of the
	// summary where it has them, with their 68% half-widths (0 when unknown).
	R0, R0Err, Theta0, Theta0Err float64
	// RCore is the core radius and RInner the inner radius of the bar (kpc).
	RCore, RInner float64
}

// Rotation returns the data of the rotation-curve figure of a finished run: the bands from
// up to draws posterior draws of chain (or of the summary's draws when chain is nil), the
// sources at the circular speed they move with, and R0 and Θ0.
func Rotation(job *Job, sum *Summary, chain *mcmc.Chain, draws int) (*RotationData, error) {
	median, err := job.Spec.NewParams(sum.MedianValues)
	if err != nil {
		return nil, fmt.Errorf("the posterior median model: %w", err)
	}
	if len(sum.Sources) != len(job.Like.Sources) {
		return nil, fmt.Errorf("the summary has %d sources, the catalog %d", len(sum.Sources), len(job.Like.Sources))
	}
	m := median.Motion
	motions := PosteriorMotions(job, sum, chain, draws)
	d := &RotationData{R0: m.R0(), Theta0: m.Theta0(), RCore: job.Spec.Curve.RCore, RInner: job.Spec.Bar.RInner}
	if d.RCore == 0 {
		d.RCore = model.DefaultCoreRadius
	}
	rMax := 16.0
	for i := range sum.Sources {
		if c, ok := sourceSpeed(job, sum, i, m, motions); ok {
			rMax = max(rMax, c.RHi*1.03)
			d.Sources = append(d.Sources, c)
		}
	}
	rMax = math.Ceil(min(rMax, 40))
	if d.Bands, err = RotationBands(motions, rMax, int(rMax*20)); err != nil {
		return nil, err
	}
	if q, ok := sum.Quantity(param.R0); ok {
		d.R0, d.R0Err = q.Median, (q.Hi68-q.Lo68)/2
	}
	if q, ok := sum.Quantity(param.Theta0); ok {
		d.Theta0, d.Theta0Err = q.Median, (q.Hi68-q.Lo68)/2
	}
	return d, nil
}

// Quantity returns the summary of a sampled parameter or a derived quantity by name, when
// its median and 68% interval are finite numbers.
func (s *Summary) Quantity(name string) (Quantity, bool) {
	for _, list := range [][]Quantity{s.Params, s.Derived} {
		for _, q := range list {
			if q.Name == name && finite(q.Median, q.Lo68, q.Hi68) {
				return q, true
			}
		}
	}
	return Quantity{}, false
}

// finite reports whether every value is a finite number.
func finite(xs ...float64) bool {
	for _, x := range xs {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}

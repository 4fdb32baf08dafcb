package fit

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/mirabilis-astro/mirabilis/arms"
	"github.com/mirabilis-astro/mirabilis/mcmc"
	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
)

// Interval is a posterior median with its 16th and 84th percentiles.
type Interval struct {
	Median float64 `json:"median"`
	P16    float64 `json:"p16"`
	P84    float64 `json:"p84"`
}

// Assignment is the answer for one new source: which component of a fitted model it
// belongs to, and where it lies, averaged over the fit's posterior draws.
type Assignment struct {
	Name string `json:"name"`
	// Membership is P(m | data) by component name (field and arms), averaged over the
	// draws, and MembershipError its Monte Carlo standard error, the spread over the draws
	// divided by √N (the draws are spread thin enough over the chain to be nearly
	// independent).
	Membership      map[string]float64 `json:"membership"`
	MembershipError map[string]float64 `json:"membership_error"`
	// Best is the most probable component.
	Best string `json:"best"`
	// Distance is the posterior of the distance (kpc), pooled over the draws, and
	// ParallaxDistance 1/ϖ (kpc; NaN for ϖ ≤ 0).
	Distance         Interval `json:"distance"`
	ParallaxDistance float64  `json:"parallax_distance"`
	// NearestArm is the arm whose centre line passes closest to the source at its median
	// distance under the posterior median parameters, OffsetKpc the distance across that
	// arm (kpc, positive outside the centre line) and OffsetWidths the same in units of
	// the arm's width there. Empty and NaN in a model without arms.
	NearestArm   string  `json:"nearest_arm"`
	OffsetKpc    float64 `json:"offset_kpc"`
	OffsetWidths float64 `json:"offset_widths"`
	// R (kpc) and Beta (deg) place the median distance in the Galaxy under the posterior
	// median parameters.
	R    float64 `json:"R"`
	Beta float64 `json:"beta"`
	// Notes say what is unusual about the source (a negative parallax, no kinematics, an
	// azimuth beyond every arm's range).
	Notes []string `json:"notes,omitempty"`

	components []string
}

// Components returns the component names in the model's order, field first.
func (a *Assignment) Components() []string { return a.components }

// assignPilots is the number of draws the new sources' quadratures are laid out at.
const assignPilots = 12

// Assign places new sources in a fitted model: for each, the membership probabilities
// averaged over the posterior draws (see Run.Draws), integrating over its distance as
// the fit does, with quadrature panels laid out for it at a dozen of the draws to the
// fit's tolerance; the pooled distance posterior; and the nearest arm, R and β under
// median. threads sources are laid out at once.
func Assign(job *Job, draws []Draw, median *model.Params, cat *catalog.Catalog, threads int) ([]Assignment, error) {
	if len(draws) == 0 {
		return nil, errors.New("assigning: no posterior draws")
	}
	spec := job.Spec
	src, err := model.NewSources(cat, spec)
	if err != nil {
		return nil, err
	}
	L, err := model.NewLikelihood(spec, src)
	if err != nil {
		return nil, err
	}
	var pilots []*model.Params
	for k := range min(assignPilots, len(draws)) {
		pilots = append(pilots, draws[k*len(draws)/min(assignPilots, len(draws))].Params)
	}
	if _, err := L.BuildLayouts(pilots, threads); err != nil {
		return nil, fmt.Errorf("laying out the new sources' quadratures: %w", err)
	}
	comps := components(spec)
	nc := len(comps)
	out := make([]Assignment, len(src))
	errs := make([]error, len(src))
	model.Parallel(len(src), threads, func(i int) {
		s := &src[i]
		a := Assignment{Name: s.Name, components: comps, Membership: map[string]float64{}, MembershipError: map[string]float64{}}
		sum, sum2 := make([]float64, nc), make([]float64, nc)
		memb := make([]float64, nc)
		d, w := L.NodeDistances(i), L.Layout(i).Weights()
		pooled := make([]float64, len(d))
		var mass []float64
		for _, dr := range draws {
			L.SourceDetail(i, dr.Params, memb)
			for m, p := range memb {
				sum[m] += p
				sum2[m] += p * p
			}
			mass = L.NodeMasses(i, dr.Params, mass)
			for j := range mass {
				pooled[j] += mass[j]
			}
		}
		n := float64(len(draws))
		best := 0
		var total float64
		for m := range sum {
			mean := sum[m] / n
			total += mean
			if mean > sum[best]/n {
				best = m
			}
		}
		for m, c := range comps {
			mean := sum[m] / n / total // exact sum to one despite rounding
			a.Membership[c] = mean
			// The sample variance over the draws, over N: the squared standard error.
			v := math.Max(0, sum2[m]/n-(sum[m]/n)*(sum[m]/n)) * n / math.Max(n-1, 1)
			a.MembershipError[c] = math.Sqrt(v / n)
		}
		a.Best = comps[best]
		post := model.NewDistancePosterior(d, w, pooled)
		if post == nil {
			errs[i] = fmt.Errorf("source %s: its distance posterior is empty", s.Name)
			return
		}
		a.Distance = Interval{Median: post.Quantile(0.5), P16: post.Quantile(0.16), P84: post.Quantile(0.84)}
		a.ParallaxDistance = math.NaN()
		if s.Plx > 0 {
			a.ParallaxDistance = 1 / s.Plx
		} else {
			a.Notes = append(a.Notes, fmt.Sprintf("parallax %g mas is not positive: the distance comes from the model and the kinematics", s.Plx))
		}
		if !s.HasV && !s.HasPM[0] && !s.HasPM[1] {
			a.Notes = append(a.Notes, "no proper motion or velocity: placed by its position and parallax alone")
		}
		R0 := median.Motion.R0()
		R, cb, sb := s.Sight.InPlane(R0, a.Distance.Median)
		beta := math.Atan2(sb, cb)
		a.R, a.Beta = R, beta*180/math.Pi
		a.NearestArm, a.OffsetKpc, a.OffsetWidths = "", math.NaN(), math.NaN()
		if arm, off, width, inRange, ok := nearestArm(median, R, beta); ok {
			a.NearestArm, a.OffsetKpc, a.OffsetWidths = arm, off, off/width
			if !inRange {
				a.Notes = append(a.Notes, fmt.Sprintf("azimuth %.0f° lies beyond the range of every arm; the nearest arm's centre line is extended to it", a.Beta))
			}
		}
		if L.Contradicts[i] {
			a.Notes = append(a.Notes, "the parallax is at odds with the distance bounds")
		}
		out[i] = a
	})
	return out, errors.Join(errs...)
}

// nearestArm returns the arm whose centre line passes closest, across the arm, to the
// point (R kpc, β rad) under p: its name, the offset δ⊥ (kpc), the arm's width there (kpc)
// and whether any arm's azimuth range (softened ends included) covers the point.
func nearestArm(p *model.Params, R, beta float64) (name string, offset, width float64, inRange, ok bool) {
	lay := p.Layout
	soft := lay.EdgeSoftening
	if soft == 0 {
		soft = arms.DefaultEdgeSoftening
	}
	best := math.Inf(1)
	for _, a := range lay.Arms {
		first, last := a.Windings(beta, soft)
		for n := first; n <= last; n++ {
			bn := beta + 2*math.Pi*float64(n)
			off := a.Offset(R, bn)
			if bn >= a.BetaStart && bn <= a.BetaEnd {
				inRange = true
			}
			if math.Abs(off) < math.Abs(best) {
				best, name, ok = off, a.Name, true
				width = a.WidthAt(R, p.Motion.R0(), lay.WidthSlope)
			}
		}
	}
	return name, best, width, inRange, ok
}

// ParseSource reads one source given as comma-separated KEY=VALUE fields, the keys being
// catalog column names ("l=30,b=0.1,parallax=0.2,parallax_err=0.02,vlsr=80,vlsr_err=5"),
// as a one-row catalog named "source" unless a name field is given. Errors name the field.
func ParseSource(s string) (*catalog.Catalog, error) {
	var keys, vals []string
	for _, part := range strings.Split(s, ",") {
		part = strings.TrimSpace(part)
		if part == "" {
			continue
		}
		k, v, ok := strings.Cut(part, "=")
		k, v = strings.TrimSpace(k), strings.TrimSpace(v)
		switch {
		case !ok || k == "":
			return nil, fmt.Errorf("source %q: field %q is not KEY=VALUE", s, part)
		case v == "":
			return nil, fmt.Errorf("source %q: field %s has no value", s, k)
		case slices.Contains(keys, k):
			return nil, fmt.Errorf("source %q: field %s is given twice", s, k)
		case strings.ContainsAny(v, "\"\n"):
			return nil, fmt.Errorf("source %q: field %s: value %q may not hold quotes or line breaks", s, k, v)
		}
		keys, vals = append(keys, k), append(vals, v)
	}
	if len(keys) == 0 {
		return nil, fmt.Errorf("source %q: no fields; give at least l=…,b=… (or ra=…,dec=…),parallax=…,parallax_err=…", s)
	}
	if !slices.Contains(keys, "name") {
		keys, vals = append([]string{"name"}, keys...), append([]string{"source"}, vals...)
	}
	text := strings.Join(keys, ",") + "\n" + strings.Join(vals, ",") + "\n"
	cat, err := catalog.Read(strings.NewReader(text), "source")
	var ce *catalog.Error
	if errors.As(err, &ce) {
		var msgs []string
		for _, p := range ce.Problems {
			field := p.ColumnName
			switch {
			case field != "" && p.Column > 0:
				msgs = append(msgs, fmt.Sprintf("field %s: value %q: %s", field, p.Value, p.Reason))
			case field != "":
				msgs = append(msgs, fmt.Sprintf("field %s: %s", field, p.Reason))
			default:
				msgs = append(msgs, p.Reason)
			}
		}
		return nil, fmt.Errorf("source %q: %s", s, strings.Join(msgs, "; "))
	}
	return cat, err
}

// MedianParams returns the model at the medians of the draws' parameter values, the
// membership fractions rescaled to sum to one: the "median model" that places sources and
// draws figures.
func MedianParams(job *Job, draws []Draw) (*model.Params, error) {
	if len(draws) == 0 {
		return nil, errors.New("no posterior draws")
	}
	vals := map[string]float64{}
	col := make([]float64, len(draws))
	for name := range draws[0].Values {
		for k, d := range draws {
			col[k] = d.Values[name]
		}
		slices.Sort(col)
		vals[name] = mcmc.Quantile(0.5, col, nil)
	}
	var fsum float64
	names := fractionNames(job.Spec)
	for _, n := range names {
		fsum += vals[n]
	}
	if fsum > 0 {
		for _, n := range names {
			vals[n] /= fsum
		}
	}
	return job.Spec.NewParams(vals)
}

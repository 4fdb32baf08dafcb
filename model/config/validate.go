package config

import (
	"fmt"
	"math"
	"os"
	"regexp"
	"strings"

	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/param"
	"github.com/mirabilis-astro/mirabilis/model/prior"
)

// Validate checks a configuration, for example one changed in code after
// Load. It returns Errors naming each offending setting by its key in the
// file (without line numbers), or nil.
func (c *Config) Validate() error {
	var ps problems
	c.validate(&ps)
	return ps.result(c.File, nil)
}

// armName is the form of an arm's name: it becomes part of parameter names.
var armName = regexp.MustCompile(`^[A-Za-z][A-Za-z0-9_]*$`)

// massTolerance is the largest prior probability tolerated on impossible
// values (a negative radius, a pitch beyond ±90°) for a prior with unbounded
// support.
const massTolerance = 1e-3

func (c *Config) validate(ps *problems) {
	c.validatePaths(ps)
	c.validateRotation(ps)
	c.validateParams(ps)
	c.validateArms(ps)
	c.validateNames(ps)
	c.validateMembership(ps)
	c.validateLikelihood(ps)
	c.validateSelection(ps)
	c.validateSampler(ps)
}

func (c *Config) validateSelection(ps *problems) {
	s := c.Selection
	if !s.Active() {
		return
	}
	if c.Likelihood.DistancePrior == DistanceParallax {
		ps.addf("selection", "a survey selection applies only with distance_prior = \"galaxy\": with \"parallax\" the distances are not drawn from the model galaxy, so there is no selected share of it to divide by")
	}
	if d := s.Declination; d != nil {
		if len(d) != 2 || !finite(d[0]) || !finite(d[1]) || !(d[0] >= -90 && d[0] < d[1] && d[1] <= 90) {
			ps.addf("selection.declination", "%v deg: need -90 ≤ lower < upper ≤ 90", d)
		}
	}
	for i, r := range s.ExcludeLongitude {
		if !finite(r[0]) || !finite(r[1]) || r[0] < 0 || r[0] > 360 || r[1] < 0 || r[1] > 360 || r[0] == r[1] {
			ps.addf("selection.exclude_longitude", "range %d, [%g, %g] deg: need two different longitudes in [0, 360] (from > to wraps through 0)", i+1, r[0], r[1])
		}
	}
	if s.HalfDistance != 0 || s.Softness != 0 {
		positive(ps, "selection.completeness.half_distance", s.HalfDistance, "kpc")
		positive(ps, "selection.completeness.softness", s.Softness, "kpc")
	}
}

func (c *Config) validatePaths(ps *problems) {
	if c.Catalog == "" {
		ps.addf("catalog", "missing: give the catalog file, for example catalog = \"sources.csv\"")
	} else if info, err := os.Stat(c.Catalog); err != nil {
		ps.add("catalog", err, "cannot use catalog file %s: %v", c.Catalog, unwrapPath(err))
	} else if info.IsDir() {
		ps.addf("catalog", "%s is a folder, not a catalog file", c.Catalog)
	}
	if c.Output == "" {
		ps.addf("output", "empty run directory")
	}
}

// unwrapPath drops the repeated path from an os error.
func unwrapPath(err error) error {
	if pe, ok := err.(*os.PathError); ok {
		return pe.Err
	}
	return err
}

func (c *Config) validateRotation(ps *problems) {
	r := c.Rotation
	switch r.Curve {
	case model.CurveLinear, model.CurvePower, model.CurveNodes:
	default:
		ps.addf("rotation.curve", "%q is not one of \"linear\", \"power\", \"nodes\"%s", r.Curve,
			didYouMean(string(r.Curve), []string{string(model.CurveLinear), string(model.CurvePower), string(model.CurveNodes)}))
	}
	positive(ps, "rotation.core_radius", r.CoreRadius, "kpc")
	if r.Curve != model.CurveNodes {
		if len(r.NodeRadii) > 0 {
			ps.addf("rotation.node_radii", "applies only to curve = \"nodes\" (the curve is %q)", r.Curve)
		}
		if r.Interpolation != "" {
			ps.addf("rotation.interpolation", "applies only to curve = \"nodes\" (the curve is %q)", r.Curve)
		}
		return
	}
	switch r.Interpolation {
	case model.MonotoneCubic, model.LinearInterp:
	default:
		ps.addf("rotation.interpolation", "%q is not one of \"monotone\", \"linear\"%s", r.Interpolation,
			didYouMean(string(r.Interpolation), []string{string(model.MonotoneCubic), string(model.LinearInterp)}))
	}
	if len(r.NodeRadii) < 2 {
		ps.addf("rotation.node_radii", "the nodes curve needs at least two node radii (kpc), got %d", len(r.NodeRadii))
		return
	}
	for i, x := range r.NodeRadii {
		switch {
		case !finite(x):
			ps.addf("rotation.node_radii", "node radius %v is not a finite number", x)
			return
		case i > 0 && !(x > r.NodeRadii[i-1]):
			ps.addf("rotation.node_radii", "node radii must increase strictly: %g follows %g", x, r.NodeRadii[i-1])
			return
		}
	}
	if r.NodeRadii[0] < r.CoreRadius {
		ps.addf("rotation.node_radii", "the first node radius %g kpc lies inside the solid-body core (core_radius = %g kpc), where the curve is not free", r.NodeRadii[0], r.CoreRadius)
	}
}

func (c *Config) validateParams(ps *problems) {
	names := c.globalNames()
	if len(c.Params) != len(names) {
		ps.addf("params", "expected the %d parameters %s, got %d", len(names), strings.Join(names, ", "), len(c.Params))
	}
	for i, p := range c.Params {
		key := "params." + p.Name
		if i < len(names) && p.Name != names[i] {
			ps.addf(key, "parameter %d should be %s (order: %s)", i+1, names[i], strings.Join(names, ", "))
			continue
		}
		if !checkPrior(ps, key, p.Prior) {
			continue
		}
		switch {
		case p.Name == param.R0 || p.Name == param.Theta0:
			mostly(ps, key, p.Prior, 0, math.Inf(1), "positive")
		case p.Name == param.SigmaVir || param.IsNodeName(p.Name):
			mostly(ps, key, p.Prior, 0, math.Inf(1), "non-negative")
		case p.Name == param.ScaleHeight:
			mostly(ps, key, p.Prior, 0, math.Inf(1), "positive (kpc)")
		}
	}
	allowed := c.DerivedNames()
	for _, p := range c.DerivedPriors {
		key := "derived_priors." + p.Name
		if !contains(allowed, p.Name) {
			ps.addf(key, "not a derived quantity that can take a prior; known: %s", strings.Join(allowed, ", "))
			continue
		}
		if checkPrior(ps, key, p.Prior) && p.Prior.IsFixed() {
			ps.addf(key, "a derived quantity cannot be fixed; give a distribution, for example normal(%s, ...)", trimFixed(p.Prior))
		}
	}
	if c.Dim() == 0 {
		ps.addf("params", "every parameter is fixed: there is nothing to sample")
	}
}

func trimFixed(p prior.Prior) string {
	return strings.TrimSuffix(strings.TrimPrefix(p.String(), "fixed("), ")")
}

func (c *Config) validateArms(ps *problems) {
	seen := map[string]int{}
	parallax := c.Likelihood.DistancePrior == DistanceParallax
	for i, a := range c.Arms {
		key := fmt.Sprintf("arm[%d]", i+1)
		switch {
		case !armName.MatchString(a.Name):
			ps.addf(key+".name", "%q is not a usable arm name: use letters, digits and underscores, starting with a letter", a.Name)
		case strings.EqualFold(a.Name, "field"):
			ps.addf(key+".name", "%q is reserved for the field component", a.Name)
		default:
			if j, dup := seen[strings.ToLower(a.Name)]; dup {
				ps.addf(key+".name", "arm name %q is already used by arm[%d] (names must differ beyond letter case)", a.Name, j)
			} else {
				seen[strings.ToLower(a.Name)] = i + 1
			}
		}
		if !finite(a.RefAzimuth) {
			ps.addf(key+".ref_azimuth", "%v is not a finite number", a.RefAzimuth)
		}
		lo, hi := a.AzimuthRange[0], a.AzimuthRange[1]
		switch {
		case !finite(lo) || !finite(hi):
			ps.addf(key+".azimuth_range", "[%v, %v] is not a pair of finite numbers", lo, hi)
		case !(lo < hi):
			ps.addf(key+".azimuth_range", "empty azimuth range [%g, %g]: the start must be below the end (degrees, increasing with Galactic rotation)", lo, hi)
		}
		if checkPrior(ps, key+".radius", a.Radius) {
			mostly(ps, key+".radius", a.Radius, 0, math.Inf(1), "positive")
		}
		if checkPrior(ps, key+".pitch", a.Pitch) {
			mostly(ps, key+".pitch", a.Pitch, -90, 90, "between -90 and 90 degrees")
		}
		if checkPrior(ps, key+".width", a.Width) {
			mostly(ps, key+".width", a.Width, 0, math.Inf(1), "positive")
		}
		if (a.Kink == nil) != (a.Pitch2 == nil) {
			missing := "kink"
			if a.Pitch2 == nil {
				missing = "pitch2"
			}
			ps.addf(key+"."+missing, "a kinked arm needs both kink and pitch2; %s is missing", missing)
		}
		if a.Pitch2 != nil && checkPrior(ps, key+".pitch2", a.Pitch2) {
			mostly(ps, key+".pitch2", a.Pitch2, -90, 90, "between -90 and 90 degrees")
		}
		if a.Kink != nil && checkPrior(ps, key+".kink", a.Kink) && lo < hi {
			if klo, khi := a.Kink.Support(); khi < lo || klo > hi {
				ps.addf(key+".kink", "the kink prior %s lies outside the arm's azimuth range [%g, %g]", a.Kink, lo, hi)
			}
		}
		if parallax {
			for _, f := range []struct {
				field string
				p     prior.Prior
			}{{"radius", a.Radius}, {"pitch", a.Pitch}, {"pitch2", a.Pitch2}, {"kink", a.Kink}, {"width", a.Width}} {
				if f.p != nil && !f.p.IsFixed() {
					ps.addf(key+"."+f.field, "with distance_prior = \"parallax\" the arms are not fitted: fix %s (for example %s = %s), or use distance_prior = \"galaxy\"",
						f.field, f.field, fmt.Sprintf("%q", "fixed("+trimNumber(prior.Median(f.p))+")"))
				}
			}
		}
	}
	if parallax {
		for _, p := range c.Params {
			if p.Name == param.WidthSlope && p.Prior != nil && !p.Prior.IsFixed() {
				ps.addf("params."+param.WidthSlope, "with distance_prior = \"parallax\" the arms are not fitted: width_slope must be fixed")
			}
		}
	}
}

// validateNames checks that every parameter, fraction and derived quantity has a name of
// its own: arms named "f" and "pitch" would both claim f_pitch.
func (c *Config) validateNames(ps *problems) {
	owner := map[string]string{}
	claim := func(key string, names ...string) {
		for _, n := range names {
			if prev, dup := owner[n]; dup && prev != key {
				if prev == "params" {
					prev = "a global quantity"
				}
				ps.addf(key, "the arm's quantity %s has the name of a quantity of %s: rename the arm", n, prev)
			}
			owner[n] = key
		}
	}
	claim("params", c.globalNames()...)
	claim("params", param.FieldFraction)
	claim("params", param.DerivedNames(c.Rotation.Curve == model.CurveNodes, nil)...)
	for i, a := range c.Arms {
		key := fmt.Sprintf("arm[%d].name", i+1)
		claim(key, param.ArmNames(a.Name, a.Kinked())...)
		claim(key, param.FractionName(a.Name), a.Name+param.SuffixRsun)
	}
}

// trimNumber writes x as the argument of a prior expression.
func trimNumber(x float64) string { return trimFixed(prior.Fixed{Value: x}) }

func (c *Config) validateMembership(ps *problems) {
	m := c.Membership
	positive(ps, "membership.field_scale", m.FieldScale, "kpc")
	positive(ps, "membership.concentration", m.Concentration, "")
	positive(ps, "membership.arm_end_softening", m.ArmEndSoftening, "deg")
}

func (c *Config) validateLikelihood(ps *problems) {
	l := c.Likelihood
	switch l.Errors {
	case model.ErrorsGaussian, model.ErrorsTolerant, model.ErrorsStudent:
	default:
		ps.addf("likelihood.error_model", "%q is not one of \"gaussian\", \"tolerant\", \"student\"%s", l.Errors,
			didYouMean(string(l.Errors), []string{string(model.ErrorsGaussian), string(model.ErrorsTolerant), string(model.ErrorsStudent)}))
	}
	positive(ps, "likelihood.student_dof", l.StudentDOF, "")
	switch l.DistancePrior {
	case DistanceGalaxy, DistanceParallax:
	default:
		ps.addf("likelihood.distance_prior", "%q is not one of \"galaxy\", \"parallax\"", l.DistancePrior)
	}
	switch l.Vertical {
	case VerticalGaussian, VerticalNone:
	default:
		ps.addf("likelihood.vertical", "%q is not one of \"gaussian\", \"none\"%s", l.Vertical,
			didYouMean(string(l.Vertical), []string{string(VerticalGaussian), string(VerticalNone)}))
	}
	if d := l.DistanceRange; !finite(d[0]) || !finite(d[1]) || !(d[0] > 0) || !(d[0] < d[1]) {
		ps.addf("likelihood.distance_range", "[%g, %g] kpc: need 0 < d_min < d_max, both finite", d[0], d[1])
	}
	positive(ps, "likelihood.tolerance", l.Tolerance, "")
	positive(ps, "likelihood.inner_radius", l.InnerRadius, "kpc")
	if !finite(l.BarDispersion) || l.BarDispersion < 0 {
		ps.addf("likelihood.bar_dispersion", "%g km/s: must be zero or positive", l.BarDispersion)
	}
	positive(ps, "likelihood.bar_softening", l.BarSoftening, "kpc")

	names := c.ParamNames()
	priors := c.Priors()
	lookup := func(key, name string) prior.Prior {
		for i, n := range names {
			if n == name {
				if priors[i] != nil && priors[i].IsFixed() {
					ps.addf(key, "%s is fixed, so it is not sampled", name)
					return nil
				}
				return priors[i]
			}
		}
		hint := didYouMean(name, names)
		if info, ok := param.Lookup(name, c.armNames()); ok && info.Kind == param.Fraction {
			hint = " (the fractions start at the centre of the simplex)"
		}
		ps.addf(key, "%s is not a parameter of this model%s", name, hint)
		return nil
	}
	for _, name := range sortedKeys(l.PilotStart) {
		key := "likelihood.pilot_start." + name
		v := l.PilotStart[name]
		p := lookup(key, name)
		if p == nil {
			continue
		}
		if !finite(v) || math.IsInf(p.LogProb(v), -1) {
			lo, hi := p.Support()
			ps.addf(key, "start %g lies outside the support [%g, %g] of the prior %s", v, lo, hi, p)
		}
	}
	for _, name := range sortedKeys(l.PilotSpread) {
		key := "likelihood.pilot_spread." + name
		if lookup(key, name) == nil {
			continue
		}
		positive(ps, key, l.PilotSpread[name], "")
	}
}

func (c *Config) validateSampler(ps *problems) {
	s := c.Sampler
	dim := c.Dim()
	switch {
	case s.Walkers%2 != 0:
		ps.addf("sampler.walkers", "%d is odd: the ensemble is split into two equal halves", s.Walkers)
	case s.Walkers < 2*dim+2 && s.Moves.Independence > 0:
		ps.addf("sampler.walkers", "%d walkers are too few for the independence move in %d sampled dimensions: its Student t has the covariance of the other half of the ensemble, which needs at least %d walkers in each half (so at least %d in all); it did best with about 8 per dimension (%d)",
			s.Walkers, dim, dim+1, 2*dim+2, 8*dim)
	case s.Walkers < 2*dim+2:
		ps.addf("sampler.walkers", "%d walkers are too few for %d sampled dimensions: each half of the ensemble needs at least %d (so at least %d in all)", s.Walkers, dim, dim+1, 2*dim+2)
	}
	if s.Steps < 0 {
		ps.addf("sampler.steps", "%d is negative", s.Steps)
	}
	if s.MaxSteps < 1 {
		ps.addf("sampler.max_steps", "%d: must be at least 1", s.MaxSteps)
	}
	switch {
	case s.Burn < 0:
		ps.addf("sampler.burn", "%d is negative", s.Burn)
	case s.Steps > 0 && s.Burn >= s.Steps:
		ps.addf("sampler.burn", "burning %d of %d steps leaves nothing to summarise", s.Burn, s.Steps)
	case s.Steps == 0 && s.Burn >= s.MaxSteps:
		ps.addf("sampler.burn", "burning %d steps leaves nothing to summarise within max_steps = %d", s.Burn, s.MaxSteps)
	}
	if s.Seed > math.MaxInt64 {
		ps.addf("sampler.seed", "%d is too large (at most %d)", s.Seed, int64(math.MaxInt64))
	}
	if s.Threads < 0 {
		ps.addf("sampler.threads", "%d is negative", s.Threads)
	}
	if s.CheckpointEvery < 0 {
		ps.addf("sampler.checkpoint_every", "%d is negative", s.CheckpointEvery)
	}
	m := s.Moves
	for _, w := range []struct {
		key string
		v   float64
	}{{"stretch", m.Stretch}, {"differential_evolution", m.DiffEvolution}, {"walk", m.Walk},
		{"differential_slice", m.DiffSlice}, {"gaussian_slice", m.GaussSlice}, {"independence", m.Independence}} {
		if !finite(w.v) || w.v < 0 {
			ps.addf("sampler.moves."+w.key, "weight %g: must be zero or positive", w.v)
		}
	}
	if !(m.Stretch+m.DiffEvolution+m.Walk+m.DiffSlice+m.GaussSlice+m.Independence > 0) {
		ps.addf("sampler.moves", "every move has weight zero")
	}
	if !finite(s.MinESS) || s.MinESS < 0 {
		ps.addf("sampler.min_ess", "%g: must be zero or positive", s.MinESS)
	}
	if !finite(s.StretchScale) || !(s.StretchScale > 1) {
		ps.addf("sampler.stretch_scale", "%g: the stretch move needs a scale above 1", s.StretchScale)
	}
}

// checkPrior reports whether p is present and possible, adding a problem if not.
func checkPrior(ps *problems, key string, p prior.Prior) bool {
	if p == nil {
		ps.addf(key, "missing prior")
		return false
	}
	if err := p.Validate(); err != nil {
		ps.add(key, err, "prior %q: %v", p.String(), err)
		return false
	}
	return true
}

// mostly checks that a prior puts (nearly) all its mass inside (lo, hi): a
// fixed value or a bounded support must lie inside, a prior with unbounded
// support may put at most massTolerance outside.
func mostly(ps *problems, key string, p prior.Prior, lo, hi float64, what string) {
	if ps.has(key) {
		return
	}
	plo, phi := p.Support()
	if p.IsFixed() {
		if !(plo > lo && plo < hi) {
			ps.addf(key, "fixed value %g: must be %s", plo, what)
		}
		return
	}
	outside := p.CDF(lo) + (1 - p.CDF(hi))
	switch {
	case !math.IsInf(plo, 0) && !math.IsInf(phi, 0) && (plo < lo || phi > hi):
		ps.addf(key, "the prior %s allows values from %g to %g; they must be %s", p, plo, phi, what)
	case outside > massTolerance:
		ps.addf(key, "the prior %s puts %.2g of its probability on values that are not %s", p, outside, what)
	}
}

// positive checks that x is finite and above zero.
func positive(ps *problems, key string, x float64, unit string) {
	if !finite(x) || !(x > 0) {
		if unit != "" {
			unit = " " + unit
		}
		ps.addf(key, "%g%s: must be positive", x, unit)
	}
}

package fit

import (
	"math"

	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/config"
)

// This file is the one place where a run configuration becomes a model: package model
// knows nothing of the configuration file.

// SpecFromConfig returns the fixed part of the model a configuration describes: the
// rotation curve's settings, the arms' names and azimuths, the field, the distance range,
// the error model, the quadrature tolerance, the vertical structure and the survey's
// selection.
func SpecFromConfig(c *config.Config) (*model.Spec, error) {
	const deg = math.Pi / 180
	s := &model.Spec{
		Curve: CurveFromConfig(c),
		Bar: model.BarScatter{
			Sigma:  c.Likelihood.BarDispersion,
			Scale:  c.Likelihood.BarSoftening,
			RInner: c.Likelihood.InnerRadius,
		},
		EdgeSoftening: c.Membership.ArmEndSoftening * deg,
		DiskScale:     c.Membership.FieldScale,
		DMin:          c.Likelihood.DistanceRange[0],
		DMax:          c.Likelihood.DistanceRange[1],
		Galaxy:        c.Likelihood.DistancePrior == config.DistanceGalaxy,
		Tol:           c.Likelihood.Tolerance,
		Vertical:      c.HasLayer(),
	}
	sel := c.Selection
	if len(sel.Declination) == 2 {
		s.Selection.DecMin, s.Selection.DecMax = sel.Declination[0]*deg, sel.Declination[1]*deg
	}
	for _, r := range sel.ExcludeLongitude {
		s.Selection.ExcludeL = append(s.Selection.ExcludeL, [2]float64{r[0] * deg, r[1] * deg})
	}
	s.Selection.HalfDistance, s.Selection.Softness = sel.HalfDistance, sel.Softness
	em, err := model.NewErrorModel(c.Likelihood.Errors, c.Likelihood.StudentDOF)
	if err != nil {
		return nil, err
	}
	s.Errors = em
	for _, a := range c.Arms {
		s.Arms = append(s.Arms, model.NewArmSpec(a.Name, a.RefAzimuth, a.AzimuthRange[0], a.AzimuthRange[1], a.Kinked()))
	}
	return s, s.Validate()
}

// CurveFromConfig returns the rotation curve's settings a configuration makes: the family,
// the node radii and interpolation of a nodes curve, and the core radius.
func CurveFromConfig(c *config.Config) model.CurveSettings {
	return model.CurveSettings{
		Family:    c.Rotation.Curve,
		NodeRadii: append([]float64(nil), c.Rotation.NodeRadii...),
		Interp:    c.Rotation.Interpolation,
		RCore:     c.Rotation.CoreRadius,
	}
}

// PriorsFromConfig returns the priors a configuration sets: every parameter's, in the
// configuration's order, those on derived quantities, and the Dirichlet prior of the
// membership fractions.
func PriorsFromConfig(c *config.Config) model.Priors {
	names, priors := c.ParamNames(), c.Priors()
	pr := model.Priors{Fractions: c.Fractions(), Derived: append([]model.NamedPrior(nil), c.DerivedPriors...)}
	for i, n := range names {
		pr.Params = append(pr.Params, model.NamedPrior{Name: n, Prior: priors[i]})
	}
	return pr
}

// NewPosterior returns the posterior that configuration c sets over the likelihood L.
func NewPosterior(c *config.Config, L *model.Likelihood) (*model.Posterior, error) {
	return model.NewPosterior(PriorsFromConfig(c), L)
}

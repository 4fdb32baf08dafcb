package model

import (
	"errors"
	"fmt"
	"math"

	"github.com/mirabilis-astro/mirabilis/arms"
	"github.com/mirabilis-astro/mirabilis/model/param"
)

const deg = math.Pi / 180

// ArmSpec is the part of a spiral arm that is a setting rather than a parameter: its name,
// reference azimuth, azimuth range and whether it has a kink. Angles in radians.
type ArmSpec struct {
	Name               string
	BetaRef            float64 // β_ref, rad
	BetaStart, BetaEnd float64 // the range over which the arm exists, rad
	Kinked             bool
}

// Spec is the fixed part of the model: everything that is a setting rather than a sampled
// parameter. Package fit builds it from a configuration.
type Spec struct {
	// Curve holds the rotation-curve family, its node radii and the core radius.
	Curve CurveSettings
	// Arms are the spiral arms in order; membership index k+1 is arm k, 0 the field.
	Arms []ArmSpec
	// Bar is the inner-Galaxy velocity scatter σ²(R) = σ²_vir + σ²_bar S((R_inner − R)/s_bar).
	Bar BarScatter
	// EdgeSoftening τ of the arms' ends (rad) and DiskScale h of the field disk (kpc).
	EdgeSoftening, DiskScale float64
	// DMin and DMax bound the distance integral (kpc).
	DMin, DMax float64
	// Errors is the error model of the kinematic residuals.
	Errors ErrorModel
	// Galaxy selects the mixture of field and arms as the distance prior; false is the
	// "parallax" mode, a prior uniform in d over [DMin, DMax] with no mixture.
	Galaxy bool
	// Tol is the quadrature tolerance, in ln L per source.
	Tol float64
	// Vertical puts the sources in a layer of Gaussian profile about the mid-plane, of scale
	// height ScaleHeight with the Sun at height ZSun (Params): the spatial factor of the
	// integrand in u = ln d is Σ_m f_m ρ_m(R, β) N(d sin b + z⊙; 0, H) d³ cos b. False is
	// the in-plane form (d cos b)² Σ_m f_m ρ_m(R, β), with no height parameters. It applies
	// in the galaxy mode only: the parallax mode's prior is uniform in d.
	Vertical bool
	// Selection is the survey's selection function; the zero value selects everything.
	// Its distance term multiplies each source's integrand.
	Selection Selection
}

// NumComponents returns the number of membership components: the field and the arms.
func (s *Spec) NumComponents() int { return 1 + len(s.Arms) }

// ComponentName returns the label of membership component m: "field" or the arm's name.
func (s *Spec) ComponentName(m int) string {
	if m == 0 {
		return param.FieldComponent
	}
	return s.Arms[m-1].Name
}

// NewArmSpec returns the settings of an arm, with angles given in degrees.
func NewArmSpec(name string, refDeg, startDeg, endDeg float64, kinked bool) ArmSpec {
	return ArmSpec{Name: name, BetaRef: refDeg * deg, BetaStart: startDeg * deg, BetaEnd: endDeg * deg, Kinked: kinked}
}

// ArmNames returns the names of the arms in order.
func (s *Spec) ArmNames() []string {
	names := make([]string, len(s.Arms))
	for k, a := range s.Arms {
		names[k] = a.Name
	}
	return names
}

// thetaDerived reports whether Θ0 is a derived quantity rather than a parameter: for the
// nodes curve, set or (with no family set) implied by node radii.
func (s *Spec) thetaDerived() bool {
	return s.Curve.Family == CurveNodes || (s.Curve.Family == "" && len(s.Curve.NodeRadii) > 0)
}

// Validate checks the settings for values the likelihood cannot work with.
func (s *Spec) Validate() error {
	switch {
	case !(s.DMin > 0 && s.DMax > s.DMin) || math.IsInf(s.DMax, 0):
		return fmt.Errorf("model: distance range [%g, %g] kpc: want 0 < d_min < d_max", s.DMin, s.DMax)
	case !(s.Tol > 0):
		return fmt.Errorf("model: quadrature tolerance %g: want a positive number", s.Tol)
	case !(s.DiskScale > 0):
		return fmt.Errorf("model: field scale %g kpc: want a positive number", s.DiskScale)
	case !(s.EdgeSoftening > 0):
		return fmt.Errorf("model: arm-end softening %g rad: want a positive number", s.EdgeSoftening)
	}
	for _, a := range s.Arms {
		if !(a.BetaEnd > a.BetaStart) {
			return fmt.Errorf("model: arm %s: empty azimuth range", a.Name)
		}
	}
	if s.Selection.Active() && !s.Galaxy {
		return fmt.Errorf("model: a survey selection needs the galaxy distance prior, not the parallax one")
	}
	return s.Selection.Validate()
}

// Params is one parameter set in the form the likelihood uses.
type Params struct {
	// Motion is the kinematic model: R0, the rotation curve, the Sun's and the sources' motion.
	Motion *Motion
	// SigmaVir is the sources' one-dimensional velocity dispersion σ_vir (km/s).
	SigmaVir float64
	// Layout is the spiral-arm geometry; Density its prepared log-densities.
	Layout  arms.Layout
	Density *arms.Density
	// LogFrac holds ln f_m of the membership fractions, field first.
	LogFrac []float64
	frac    []float64
	// ScaleHeight H (kpc) of the sources' layer and ZSun z⊙ (kpc), the Sun's height above
	// its mid-plane; zero, and unused, when the spec has no vertical structure.
	ScaleHeight, ZSun float64
	// LogNorm is ln Σ_m f_m Z_m, the logarithm of the selected share of the mixture (see
	// Spec.Normalisation), which every source's ln L_i subtracts; zero without a selection,
	// NaN in a set made by NewParamsUnnormalised.
	LogNorm float64
}

// NewParams builds a parameter set from values by name (the names of the configuration and
// the chain: R0, Theta0, dTheta_dR, Usun … NAME_pitch …, f_field, f_NAME). In the parallax
// mode fractions may be absent (then equal); arm parameters are needed whenever the spec has
// arms.
func (s *Spec) NewParams(values map[string]float64) (*Params, error) {
	p, err := s.newParams(values)
	if err != nil {
		return nil, err
	}
	if err := s.setLogNorm(p); err != nil {
		return nil, err
	}
	return p, nil
}

// NewParamsUnnormalised builds a parameter set as NewParams does but leaves out the
// selection's normalisation, the costly part of NewParams with a selection: LogNorm is
// then NaN, so that any ln L computed with the set is NaN too. It serves the quantities
// in which ln Σ_m f_m Z_m cancels or does not enter: a source's membership probabilities
// (SourceDetail's memb), its distance posterior (NodeMasses), the derived quantities
// (Derived), the motion and the arms. Without a selection it is NewParams.
func (s *Spec) NewParamsUnnormalised(values map[string]float64) (*Params, error) {
	p, err := s.newParams(values)
	if err != nil {
		return nil, err
	}
	if s.Selection.Active() && s.Galaxy {
		p.LogNorm = math.NaN()
	}
	return p, nil
}

// newParams is NewParams without the selection's normalisation (LogNorm 0).
func (s *Spec) newParams(values map[string]float64) (*Params, error) {
	m, _, err := MotionFromParams(values, s.Curve)
	if err != nil {
		return nil, err
	}
	get := func(name string, def float64, need bool) (float64, error) {
		v, ok := values[name]
		if !ok {
			if need {
				return 0, fmt.Errorf("parameter %s is missing", name)
			}
			return def, nil
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, fmt.Errorf("parameter %s = %v is not a finite number", name, v)
		}
		return v, nil
	}
	p := &Params{Motion: m}
	if p.SigmaVir, err = get(param.SigmaVir, 0, true); err != nil {
		return nil, err
	}
	if p.SigmaVir < 0 {
		return nil, fmt.Errorf("parameter %s = %g must not be negative", param.SigmaVir, p.SigmaVir)
	}
	if s.Vertical {
		if p.ScaleHeight, err = get(param.ScaleHeight, 0, true); err != nil {
			return nil, err
		}
		if !(p.ScaleHeight > 0) {
			return nil, fmt.Errorf("parameter %s = %g kpc must be positive", param.ScaleHeight, p.ScaleHeight)
		}
		if p.ZSun, err = get(param.ZSun, 0, false); err != nil {
			return nil, err
		}
	}
	slope, err := get(param.WidthSlope, 0, false)
	if err != nil {
		return nil, err
	}
	p.Layout = arms.Layout{R0: m.R0(), WidthSlope: slope, EdgeSoftening: s.EdgeSoftening, DiskScale: s.DiskScale}
	for _, a := range s.Arms {
		arm := arms.Arm{Name: a.Name, BetaRef: a.BetaRef, BetaStart: a.BetaStart, BetaEnd: a.BetaEnd, Kinked: a.Kinked}
		var pitch, width, pitch2, kink float64
		if arm.RRef, err = get(a.Name+param.SuffixRref, 0, true); err != nil {
			return nil, err
		}
		if pitch, err = get(a.Name+param.SuffixPitch, 0, true); err != nil {
			return nil, err
		}
		if width, err = get(a.Name+param.SuffixWidth, 0, true); err != nil {
			return nil, err
		}
		if a.Kinked {
			if pitch2, err = get(a.Name+param.SuffixPitch2, 0, true); err != nil {
				return nil, err
			}
			if kink, err = get(a.Name+param.SuffixKink, 0, true); err != nil {
				return nil, err
			}
		}
		arm.Pitch, arm.Pitch2, arm.BetaKink, arm.Width = pitch*deg, pitch2*deg, kink*deg, width
		p.Layout.Arms = append(p.Layout.Arms, arm)
	}
	if p.Density, err = arms.NewDensity(p.Layout); err != nil {
		return nil, armParamError(err)
	}
	n := s.NumComponents()
	p.LogFrac = make([]float64, n)
	p.frac = make([]float64, n)
	sum := 0.0
	for k := range n {
		name := s.FractionName(k)
		f, err := get(name, 1/float64(n), s.Galaxy)
		if err != nil {
			return nil, err
		}
		if !(f >= 0) {
			return nil, fmt.Errorf("fraction %s = %g must not be negative", name, f)
		}
		sum += f
		p.LogFrac[k] = math.Log(f)
		p.frac[k] = f
	}
	if math.Abs(sum-1) > 1e-6 {
		return nil, fmt.Errorf("membership fractions sum to %.9g, want 1", sum)
	}
	return p, nil
}

// FractionName returns the parameter name of membership component k: "f_field" or
// "f_" + the arm's name.
func (s *Spec) FractionName(k int) string {
	return param.FractionName(s.ComponentName(k))
}

// armParamError restates an invalid arm parameter reported by package arms in the terms of
// the parameter names and their units (deg for angles), e.g. "parameter Corvid_width = -0.1
// kpc: must be positive". Other errors are returned as they are.
func armParamError(err error) error {
	var pe *arms.ParamError
	if !errors.As(err, &pe) || pe.Arm == "" {
		return err
	}
	name := func(suffix string) string { return pe.Arm + suffix }
	switch pe.Field {
	case "RRef":
		return fmt.Errorf("parameter %s = %g kpc: must be positive", name(param.SuffixRref), pe.Value)
	case "Width":
		return fmt.Errorf("parameter %s = %g kpc: must be positive", name(param.SuffixWidth), pe.Value)
	case "Pitch":
		return fmt.Errorf("parameter %s = %g deg: must lie between -90 and 90", name(param.SuffixPitch), pe.Value/deg)
	case "Pitch2":
		return fmt.Errorf("parameter %s = %g deg: must lie between -90 and 90", name(param.SuffixPitch2), pe.Value/deg)
	case "BetaKink":
		return fmt.Errorf("parameter %s = %g deg: must be a finite number", name(param.SuffixKink), pe.Value/deg)
	}
	return fmt.Errorf("arm %s: %s", pe.Arm, pe.Reason)
}

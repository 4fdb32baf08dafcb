// Package config reads the TOML file that describes one fit: the catalog, the
// rotation curve, the priors of the global and arm parameters, the mixture of
// arms and field, the likelihood's settings and the sampler's.
//
// A file is decoded strictly: an unknown key is an error, and so is every
// impossible setting (an impossible prior, an arm with an empty azimuth range,
// a duplicate arm name, an unknown choice, a missing catalog). Each error names
// the setting and its line, and all of them are reported at once. Relative
// paths are taken relative to the file's folder. Every setting left out gets
// the default documented in HelpText, and Resolved writes the complete
// configuration back as TOML, so that a run can record exactly what it did.
//
// Units follow the project's conventions: kpc, km/s and degrees.
package config

import (
	"math"
	"sort"
	"strings"

	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/param"
	"github.com/mirabilis-astro/mirabilis/model/prior"
)

// DistancePrior names the prior on each source's distance.
type DistancePrior string

// The distance priors.
const (
	// DistanceGalaxy takes distances from the model galaxy: the mixture of
	// arm and field densities. Arm parameters and fractions are fitted.
	DistanceGalaxy DistancePrior = "galaxy"
	// DistanceParallax takes distances uniform in d over Likelihood.DistanceRange,
	// for fits of the rotation alone; arm parameters must then be fixed.
	DistanceParallax DistancePrior = "parallax"
)

// VerticalStructure names the sources' distribution about the Galactic plane.
type VerticalStructure string

// The vertical structures.
const (
	// VerticalGaussian puts the sources in a layer of Gaussian profile about the
	// mid-plane, with parameters scale_height and z_sun.
	VerticalGaussian VerticalStructure = "gaussian"
	// VerticalNone keeps every source in the plane: latitudes enter only
	// through the projection d cos b, and there are no height parameters.
	VerticalNone VerticalStructure = "none"
)

// Config is one fit, with every default filled in. Load and Parse return it
// validated; a Config changed in code should be checked with Validate.
type Config struct {
	// Name is the configuration's name: its file name without folder and
	// extension. It sets the default run directory.
	Name string
	// File is the file name as given to Load or Parse, used in messages.
	File string
	// BaseDir is the absolute folder that relative paths were resolved against.
	BaseDir string
	// Catalog is the absolute path of the source catalog (CSV).
	Catalog string
	// Output is the absolute path of the run directory.
	Output string

	Rotation Rotation
	// Params are the global parameters with their priors, in the order of
	// model.GlobalNames for the chosen curve.
	Params []Param
	// DerivedPriors are priors on derived quantities (for example Omega_sun),
	// in the order of DerivedNames.
	DerivedPriors []Param
	// Arms are the spiral arms in the order of the file.
	Arms       []Arm
	Membership Membership
	Likelihood Likelihood
	// Selection is the survey's selection function; the zero value selects
	// everything.
	Selection Selection
	Sampler   Sampler
}

// Selection describes which sources a survey could have found: a band of
// declination, longitudes left out and a completeness falling with distance.
// Each term is optional; they combine as a product.
type Selection struct {
	// Declination [lower, upper] (deg, ICRS) is the band the survey sees; nil
	// for no band.
	Declination []float64
	// ExcludeLongitude are ranges [from, to] of Galactic longitude (deg) left
	// out; from > to wraps through 0.
	ExcludeLongitude [][2]float64
	// HalfDistance (kpc) is where the completeness falls to one half and
	// Softness (kpc) the distance over which it falls; HalfDistance 0: no
	// distance term.
	HalfDistance, Softness float64
}

// Active reports whether any term of the selection is set.
func (s Selection) Active() bool {
	return s.Declination != nil || len(s.ExcludeLongitude) > 0 || s.HalfDistance != 0
}

// Param is a named parameter (or derived quantity) with its prior.
type Param = model.NamedPrior

// Rotation describes the rotation curve.
type Rotation struct {
	// Curve is the family; default model.CurveLinear.
	Curve model.CurveFamily
	// CoreRadius R_core (kpc): inside it the curve rises as a solid body,
	// Θ(R) = Θ(R_core) R / R_core. Default 2.
	CoreRadius float64
	// NodeRadii (kpc, strictly increasing, at least two, none inside
	// CoreRadius) are the radii of the nodes curve's free speeds Theta_1 …
	// Theta_N. Empty for the other curves.
	NodeRadii []float64
	// Interpolation between nodes; default model.MonotoneCubic. Empty for
	// the other curves.
	Interpolation model.Interpolation
}

// Arm is one log-periodic spiral arm,
// ln R(β) = ln R_ref − (β − β_ref) tan ψ, optionally kinked at β_kink where the
// pitch changes from ψ1 (Pitch) to ψ2 (Pitch2).
type Arm struct {
	// Name identifies the arm (letters, digits, underscore; starting with a
	// letter). Parameter names are formed from it: NAME_Rref, NAME_pitch …
	Name string
	// RefAzimuth β_ref (deg), the azimuth at which the arm's radius is R_ref.
	// Default 0: the Sun–centre line.
	RefAzimuth float64
	// AzimuthRange [β_start, β_end] (deg) over which the arm exists; it may
	// span more than 360°.
	AzimuthRange [2]float64
	// Radius is the prior of R_ref (kpc), parameter NAME_Rref.
	Radius prior.Prior
	// Pitch is the prior of the pitch angle ψ (deg; ψ1 below the kink),
	// parameter NAME_pitch. Positive pitch: the radius decreases with azimuth.
	Pitch prior.Prior
	// Pitch2 is the prior of ψ2 (deg) beyond the kink, parameter NAME_pitch2;
	// nil for an arm without a kink.
	Pitch2 prior.Prior
	// Kink is the prior of β_kink (deg), parameter NAME_kink; nil for an arm
	// without a kink.
	Kink prior.Prior
	// Width is the prior of the arm's Gaussian width at R0 (kpc), parameter
	// NAME_width. Default loguniform(0.05, 1.5).
	Width prior.Prior
}

// Kinked reports whether the arm has a kink.
func (a Arm) Kinked() bool { return a.Kink != nil || a.Pitch2 != nil }

// Membership holds the settings of the mixture of field and arms.
type Membership struct {
	// FieldScale h (kpc) of the field's exponential disk. Default 3.
	FieldScale float64
	// Concentration α of the symmetric Dirichlet prior on the fractions.
	// Default 1 (flat on the simplex).
	Concentration float64
	// ArmEndSoftening τ (deg of azimuth) over which an arm's density fades
	// at its ends. Default 3.
	ArmEndSoftening float64
}

// Likelihood holds the settings of the per-source likelihood.
type Likelihood struct {
	// Errors is the error model of the kinematic residuals; default
	// model.ErrorsGaussian.
	Errors model.ErrorKind
	// StudentDOF ν of the Student-t error model (> 0). Default 4.
	StudentDOF float64
	// DistancePrior is the prior on distances; default DistanceGalaxy.
	DistancePrior DistancePrior
	// Vertical is the sources' distribution about the plane; default
	// VerticalGaussian.
	Vertical VerticalStructure
	// DistanceRange [d_min, d_max] (kpc) of the distance integral. Default
	// [0.05, 30].
	DistanceRange [2]float64
	// Tolerance of the distance quadrature, in ln L per source. Default 1e-4.
	Tolerance float64
	// InnerRadius R_inner (kpc): sources mostly inside it are flagged, and
	// the bar's dispersion switches on inside it. Default 4.
	InnerRadius float64
	// ExcludeInner leaves the sources flagged inside InnerRadius out of the
	// fit. Default false.
	ExcludeInner bool
	// BarDispersion σ_bar (km/s) added in quadrature inside InnerRadius.
	// Default 40.
	BarDispersion float64
	// BarSoftening s_bar (kpc) of the logistic switch at InnerRadius.
	// Default 0.5.
	BarSoftening float64
	// PilotStart holds starting values of free parameters, by name: the
	// first pilot parameter set and the optimiser's starting point. A
	// parameter not listed starts at its prior's median.
	PilotStart map[string]float64
	// PilotSpread holds, by name, the expected posterior spreads (standard
	// deviations, in the parameter's unit) with which pilot parameter sets
	// are drawn. A parameter not listed uses its prior's Spread.
	PilotSpread map[string]float64
}

// Sampler holds the settings of the ensemble sampler.
type Sampler struct {
	// Walkers in the ensemble: even, at least 2·Dim + 2 so that each half
	// spans the parameter space. Default max(2·Dim + 2, 32).
	Walkers int
	// Steps is the total chain length; 0 lets the run stop on its own once it
	// is longer than 50 autocorrelation times and those have settled. Default 0.
	Steps int
	// MaxSteps caps the length of a run that stops on its own. Default 20000.
	MaxSteps int
	// Burn is the number of initial steps left out of summaries. Default
	// Steps/4; with Steps = 0, 0 means a quarter of the final length.
	Burn int
	// Seed of the random streams. Default 1.
	Seed uint64
	// Threads evaluating the likelihood; 0 uses every core. Default 0.
	Threads int
	// CheckpointEvery is the number of steps between checkpoints; 0 writes
	// one only at the end. Default 200.
	CheckpointEvery int
	// Moves are the relative weights of the proposal moves. Default
	// DefaultMoves.
	Moves Moves
	// AdaptWeights lets the move weights adapt during burn-in (each move's
	// share of the likelihood evaluations in proportion to its squared jump
	// per evaluation), starting from Moves; they are frozen afterwards.
	// False keeps the weights of Moves. Default false.
	AdaptWeights bool
	// MinESS is the effective sample size every parameter must reach after
	// burn-in before a run with Steps = 0 stops. Default 1000.
	MinESS float64
	// StretchScale a (> 1) of the stretch move (Goodman & Weare 2010,
	// Comm. App. Math. Comp. Sci. 5, 65). Default 2.
	StretchScale float64
}

// Moves are the relative weights (≥ 0, not all zero) with which the sampler
// picks each proposal move.
type Moves struct {
	// Stretch is the stretch move of Goodman & Weare (2010).
	Stretch float64
	// DiffEvolution is the differential-evolution move (ter Braak 2006,
	// Statistics and Computing 16, 239).
	DiffEvolution float64
	// Walk is the walk move of Goodman & Weare (2010).
	Walk float64
	// DiffSlice and GaussSlice are the differential- and Gaussian-direction
	// moves of ensemble slice sampling (Karamanis & Beutler 2021,
	// Statistics and Computing 31, 61), whose interval widths are tuned
	// during burn-in.
	DiffSlice, GaussSlice float64
	// Independence is the independence Metropolis–Hastings move (Tierney 1994,
	// Ann. Stat. 22, 1701) whose proposal is a Student t fitted to the other
	// half of the ensemble (mcmc.IndependenceMove).
	Independence float64
}

// DefaultMoves are the move weights of a configuration that gives none,
// chosen from measurements of effective samples per likelihood evaluation on
// a correlated Gaussian, a banana density and the demo galaxy (see HelpText).
var DefaultMoves = Moves{Stretch: 0.2, DiffEvolution: 0.8}

// DefaultPrior returns the prior a global parameter gets when the file gives
// none. The defaults are broad: they bound what is physically plausible for
// the Milky Way and its star-forming regions rather than encode a measurement.
func DefaultPrior(name string) prior.Prior {
	switch name {
	case param.R0:
		return prior.Uniform{Min: 6, Max: 11}
	case param.Theta0:
		return prior.Uniform{Min: 150, Max: 320}
	case param.DThetaDR:
		return prior.Uniform{Min: -10, Max: 10}
	case param.Alpha:
		return prior.Uniform{Min: -0.5, Max: 0.5}
	case param.Usun:
		return prior.Uniform{Min: -10, Max: 30}
	case param.Vsun:
		return prior.Uniform{Min: -20, Max: 40}
	case param.Wsun:
		return prior.Uniform{Min: -5, Max: 20}
	case param.Us, param.Vs, param.Ws:
		return prior.Uniform{Min: -30, Max: 30}
	case param.SigmaVir:
		return prior.Uniform{Min: 0, Max: 40}
	case param.WidthSlope:
		return prior.Fixed{Value: 0}
	case param.ScaleHeight:
		return prior.LogUniform{Min: 0.005, Max: 0.3}
	case param.ZSun:
		return prior.Fixed{Value: 0}
	}
	if param.IsNodeName(name) {
		return prior.Uniform{Min: 100, Max: 350}
	}
	return nil
}

// DefaultWidth returns the prior of an arm's width (kpc) when the file gives
// none: loguniform(0.05, 1.5).
func DefaultWidth() prior.Prior { return prior.LogUniform{Min: 0.05, Max: 1.5} }

// Default values of the settings, documented in HelpText (the core radius's is
// model.DefaultCoreRadius). Those of the model (inner radius, bar, softening,
// field scale, concentration, distance range, tolerance, stretch scale) are
// fixed by the model (package model,
// Kinematics to Quadrature); ν = 4 for the Student-t errors is a common choice for
// robust fits (Lange, Little & Taylor 1989, JASA 84, 881; from memory); the
// sampler's bookkeeping (max steps, seed, checkpoints) is this package's choice.
const (
	DefaultFieldScale      = 3.0  // kpc
	DefaultConcentration   = 1.0  // symmetric Dirichlet α
	DefaultArmEndSoftening = 3.0  // deg
	DefaultStudentDOF      = 4.0  // Student-t ν
	DefaultDistanceMin     = 0.05 // kpc
	DefaultDistanceMax     = 30.0 // kpc
	DefaultTolerance       = 1e-4 // ln L per source
	DefaultInnerRadius     = 4.0  // kpc
	DefaultBarDispersion   = 40.0 // km/s
	DefaultBarSoftening    = 0.5  // kpc
	DefaultMaxSteps        = 20000
	DefaultSeed            = 1
	DefaultCheckpointEvery = 200
	DefaultStretchScale    = 2.0
	DefaultMinESS          = 1000
	DefaultAdaptWeights    = false
	MinDefaultWalkers      = 32
)

// ParamNames returns the names of all parameters in the model's order: the
// globals (GlobalNames), then for each arm NAME_Rref, NAME_pitch, for a kinked
// arm NAME_pitch2 and NAME_kink, and NAME_width. Fixed parameters are
// included; the membership fractions are not (see FractionNames).
func (c *Config) ParamNames() []string {
	ps := c.params()
	names := make([]string, len(ps))
	for i, p := range ps {
		names[i] = p.Name
	}
	return names
}

// Priors returns the priors of the parameters, aligned with ParamNames.
func (c *Config) Priors() []prior.Prior {
	ps := c.params()
	out := make([]prior.Prior, len(ps))
	for i, p := range ps {
		out[i] = p.Prior
	}
	return out
}

// Start returns the starting value of every parameter, aligned with
// ParamNames: Likelihood.PilotStart where given, else the prior's median (the
// midpoint of a uniform prior, the value of a fixed one).
func (c *Config) Start() []float64 {
	ps := c.params()
	out := make([]float64, len(ps))
	for i, p := range ps {
		if v, ok := c.Likelihood.PilotStart[p.Name]; ok {
			out[i] = v
		} else {
			out[i] = prior.Median(p.Prior)
		}
	}
	return out
}

// Spreads returns the expected posterior spread of every parameter, aligned
// with ParamNames: Likelihood.PilotSpread where given, else the prior's Spread
// (0 for a fixed parameter).
func (c *Config) Spreads() []float64 {
	ps := c.params()
	out := make([]float64, len(ps))
	for i, p := range ps {
		if v, ok := c.Likelihood.PilotSpread[p.Name]; ok {
			out[i] = v
		} else {
			out[i] = p.Prior.Spread()
		}
	}
	return out
}

// Param returns the prior of the parameter with the given name.
func (c *Config) Param(name string) (prior.Prior, bool) {
	for _, p := range c.params() {
		if p.Name == name {
			return p.Prior, true
		}
	}
	return nil, false
}

// params lists the global and arm parameters in order.
func (c *Config) params() []Param {
	out := append([]Param(nil), c.Params...)
	for _, a := range c.Arms {
		out = append(out, armParams(a)...)
	}
	return out
}

// armParams lists an arm's parameters in the order of param.ArmNames: Rref,
// pitch, [pitch2, kink], width.
func armParams(a Arm) []Param {
	priors := map[string]prior.Prior{
		param.SuffixRref: a.Radius, param.SuffixPitch: a.Pitch, param.SuffixPitch2: a.Pitch2,
		param.SuffixKink: a.Kink, param.SuffixWidth: a.Width,
	}
	names := param.ArmNames(a.Name, a.Kinked())
	ps := make([]Param, len(names))
	for i, n := range names {
		ps[i] = Param{Name: n, Prior: priors[strings.TrimPrefix(n, a.Name)]}
	}
	return ps
}

// armNames returns the names of the arms in order.
func (c *Config) armNames() []string {
	names := make([]string, len(c.Arms))
	for i, a := range c.Arms {
		names[i] = a.Name
	}
	return names
}

// FractionNames returns the names of the membership fractions: f_field, then
// f_NAME for each arm in order.
func (c *Config) FractionNames() []string { return param.FractionNames(c.armNames()) }

// Fractions returns the symmetric Dirichlet prior of the fractions named by
// FractionNames; the sampler works with its Dim unconstrained reals (see
// prior.FractionsFromReals).
func (c *Config) Fractions() prior.Dirichlet {
	return prior.Dirichlet{N: 1 + len(c.Arms), Alpha: c.Membership.Concentration}
}

// SamplesFractions reports whether the fractions are sampled: in the galaxy
// distance mode. In the parallax mode the likelihood has no mixture, and
// membership is computed afterwards from the fixed arms.
func (c *Config) SamplesFractions() bool { return c.Likelihood.DistancePrior == DistanceGalaxy }

// Dim returns the number of sampled dimensions: the parameters that are not
// fixed, plus the unconstrained reals of the fractions when they are sampled.
func (c *Config) Dim() int {
	n := 0
	for _, p := range c.params() {
		if p.Prior != nil && !p.Prior.IsFixed() {
			n++
		}
	}
	if c.SamplesFractions() {
		n += c.Fractions().Dim()
	}
	return n
}

// DefaultWalkers returns the walker count used when the file gives none:
// max(2·dim + 2, 32), rounded up to an even number.
func DefaultWalkers(dim int) int {
	w := max(2*dim+2, MinDefaultWalkers)
	return w + w%2
}

// DerivedNames returns the names of the derived quantities that may carry a
// prior: Omega_sun, Theta0_over_R0, Theta0_plus_Vsun, Oort_A, Oort_B, for the
// nodes curve Theta0 (which is then derived), and NAME_Rsun for each arm
// (param.DerivedNames).
func (c *Config) DerivedNames() []string {
	return param.DerivedNames(c.Rotation.Curve == model.CurveNodes, c.armNames())
}

// sortedKeys returns the keys of m in order.
func sortedKeys[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

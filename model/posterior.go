package model

import (
	"fmt"
	"math"
	"slices"
	"sync"

	"github.com/mirabilis-astro/mirabilis/arms"
	"github.com/mirabilis-astro/mirabilis/model/param"
	"github.com/mirabilis-astro/mirabilis/model/prior"
)

// Posterior is the log posterior density over the sampled coordinates: the free
// parameters, in the order of the configuration, followed (in the galaxy mode) by the
// unconstrained reals of the membership fractions' stick-breaking transform.
type Posterior struct {
	Spec *Spec
	Like *Likelihood

	names   []string      // every parameter (fixed and free), configuration order
	priors  []prior.Prior // aligned with names
	free    []int         // indices into names of the sampled parameters
	fracs   prior.Dirichlet
	derived []NamedPrior

	ix     *indexed  // names resolved to slots, for LogDensity
	states sync.Pool // *state
}

// NamedPrior is the prior of one parameter or derived quantity, by name.
type NamedPrior struct {
	Name  string
	Prior prior.Prior
}

// Priors are the priors of a posterior.
type Priors struct {
	// Params are every parameter (fixed and free) with its prior, in the order of the
	// sampled coordinates; the membership fractions are not among them.
	Params []NamedPrior
	// Derived are priors on derived quantities (see Derived), if any.
	Derived []NamedPrior
	// Fractions is the Dirichlet prior of the membership fractions, field first; it is used
	// in the galaxy mode only.
	Fractions prior.Dirichlet
}

// NewPosterior returns the posterior with priors pr over the likelihood L.
func NewPosterior(pr Priors, L *Likelihood) (*Posterior, error) {
	p := &Posterior{Spec: L.Spec, Like: L, derived: append([]NamedPrior(nil), pr.Derived...)}
	known := DerivedNames(L.Spec)
	for _, d := range p.derived {
		if d.Prior == nil || !slices.Contains(known, d.Name) {
			return nil, fmt.Errorf("model: prior on %q: not a derived quantity of the model", d.Name)
		}
	}
	for i, np := range pr.Params {
		if np.Prior == nil {
			return nil, fmt.Errorf("model: parameter %s has no prior", np.Name)
		}
		p.names = append(p.names, np.Name)
		p.priors = append(p.priors, np.Prior)
		if !np.Prior.IsFixed() {
			p.free = append(p.free, i)
		}
	}
	if L.Spec.Galaxy {
		if pr.Fractions.N != L.Spec.NumComponents() {
			return nil, fmt.Errorf("model: Dirichlet prior over %d fractions for %d components", pr.Fractions.N, L.Spec.NumComponents())
		}
		p.fracs = pr.Fractions
	}
	ix, err := newIndexed(p)
	if err != nil {
		return nil, err
	}
	p.ix = ix
	p.states.New = func() any { return &state{post: p} }
	return p, nil
}

// Dim returns the number of sampled coordinates.
func (p *Posterior) Dim() int { return len(p.free) + p.fracReals() }

func (p *Posterior) fracReals() int {
	if !p.Spec.Galaxy {
		return 0
	}
	return p.fracs.Dim()
}

// Names returns the names of the sampled coordinates: the free parameters, then
// "stick_1" … "stick_K" for the fractions' unconstrained reals.
func (p *Posterior) Names() []string {
	out := make([]string, 0, p.Dim())
	for _, i := range p.free {
		out = append(out, p.names[i])
	}
	for k := 1; k <= p.fracReals(); k++ {
		out = append(out, param.StickName(k))
	}
	return out
}

// FreePriors returns the priors of the free parameters, aligned with the first entries of
// Names.
func (p *Posterior) FreePriors() []prior.Prior {
	out := make([]prior.Prior, len(p.free))
	for k, i := range p.free {
		out[k] = p.priors[i]
	}
	return out
}

// Fractions returns the Dirichlet prior of the membership fractions (N = 0 in the
// parallax mode).
func (p *Posterior) Fractions() prior.Dirichlet { return p.fracs }

// Point returns the sampled coordinates of a full set of parameter values (as read from a
// params file or made by Values): the free parameters and the fractions' reals.
func (p *Posterior) Point(values map[string]float64) ([]float64, error) {
	x := make([]float64, 0, p.Dim())
	for _, i := range p.free {
		v, ok := values[p.names[i]]
		if !ok {
			return nil, fmt.Errorf("parameter %s is missing", p.names[i])
		}
		x = append(x, v)
	}
	if p.fracReals() > 0 {
		f := make([]float64, p.fracs.N)
		for k := range f {
			v, ok := values[p.Spec.FractionName(k)]
			if !ok {
				return nil, fmt.Errorf("fraction %s is missing", p.Spec.FractionName(k))
			}
			f[k] = v
		}
		y, err := prior.RealsFromFractions(nil, f)
		if err != nil {
			return nil, err
		}
		x = append(x, y...)
	}
	return x, nil
}

// Values returns every parameter's value at sampled coordinates x, by name: the fixed and
// free parameters and the membership fractions (equal shares in the parallax mode).
func (p *Posterior) Values(x []float64) map[string]float64 {
	v := make(map[string]float64, len(p.names)+p.Spec.NumComponents()+8)
	for i, name := range p.names {
		if p.priors[i].IsFixed() {
			v[name] = p.priors[i].Quantile(0.5)
		}
	}
	for k, i := range p.free {
		v[p.names[i]] = x[k]
	}
	n := p.Spec.NumComponents()
	if p.fracReals() > 0 {
		f, _ := prior.FractionsFromReals(nil, x[len(p.free):])
		for k := range n {
			v[p.Spec.FractionName(k)] = f[k]
		}
	} else {
		for k := range n {
			v[p.Spec.FractionName(k)] = 1 / float64(n)
		}
	}
	return v
}

// Params returns the likelihood's form of the parameter set at x.
func (p *Posterior) Params(x []float64) (*Params, error) { return p.Spec.NewParams(p.Values(x)) }

// LogPrior returns the log prior density at x: the free parameters' priors, the Dirichlet
// prior of the fractions with the Jacobian of its transform, and any priors on derived
// quantities. It is −Inf outside the support.
func (p *Posterior) LogPrior(x []float64) float64 {
	lp, _ := p.logPrior(x)
	return lp
}

func (p *Posterior) logPrior(x []float64) (float64, *Params) {
	var lp float64
	for k, i := range p.free {
		lp += p.priors[i].LogProb(x[k])
		if math.IsInf(lp, -1) {
			return lp, nil
		}
	}
	if p.fracReals() > 0 {
		lp += p.fracs.LogProbReals(x[len(p.free):])
	}
	params, err := p.Params(x)
	if err != nil {
		return math.Inf(-1), nil
	}
	if len(p.derived) > 0 {
		d := Derived(params, p.Spec)
		for _, dp := range p.derived {
			lp += dp.Prior.LogProb(d[dp.Name])
		}
	}
	if math.IsNaN(lp) {
		return math.Inf(-1), nil
	}
	return lp, params
}

// LogDensity returns the log posterior density at x, up to a constant: LogPrior plus the
// total log-likelihood. It is −Inf outside the prior's support and safe for concurrent use.
func (p *Posterior) LogDensity(x []float64) float64 { return p.logDensityIndexed(x, 1) }

// logDensityReference is LogDensity computed the straightforward way (Values, NewParams,
// LogL), the reference the indexed path is tested against.
func (p *Posterior) logDensityReference(x []float64) float64 {
	lp, params := p.logPrior(x)
	if math.IsInf(lp, -1) {
		return lp
	}
	return lp + p.Like.LogL(params)
}

// LogDensityParallel is LogDensity with the likelihood's sources shared among workers
// goroutines; it returns the same value.
func (p *Posterior) LogDensityParallel(x []float64, workers int) float64 {
	return p.logDensityIndexed(x, workers)
}

// Derived returns the derived quantities of a parameter set (package model, Parameters), keyed by the names
// DerivedNames gives: Omega_sun (Θ0 + V⊙)/R0, Theta0_over_R0, Theta0_plus_Vsun, Oort_A and
// Oort_B at R0 (km/s/kpc or km/s), Theta0 for the nodes curve (where it is derived, not a
// parameter) and NAME_Rsun, the radius (kpc) where arm NAME crosses the Sun–centre line
// nearest the Sun (NaN if its azimuth range never reaches that line).
func Derived(p *Params, spec *Spec) map[string]float64 {
	m := p.Motion
	A, B := m.Oort()
	out := map[string]float64{
		param.OmegaSun:      m.OmegaSun(),
		param.ThetaOverR0:   m.Theta0() / m.R0(),
		param.ThetaPlusVsun: m.Theta0() + m.Sun().V,
		param.OortA:         A,
		param.OortB:         B,
	}
	if spec.thetaDerived() {
		out[param.Theta0] = m.Theta0()
	}
	var cross []arms.Crossing
	for _, a := range p.Layout.Arms {
		cross, _ = a.SunLine(cross[:0], m.R0())
		v := math.NaN()
		if len(cross) > 0 {
			v = cross[0].R
		}
		out[a.Name+param.SuffixRsun] = v
	}
	return out
}

// DerivedNames lists the names Derived returns, in the order of the parameter table.
func DerivedNames(spec *Spec) []string {
	return param.DerivedNames(spec.thetaDerived(), spec.ArmNames())
}

package model

import (
	"fmt"
	"math"
	"sync"

	"github.com/mirabilis-astro/mirabilis/arms"
	"github.com/mirabilis-astro/mirabilis/model/param"
	"github.com/mirabilis-astro/mirabilis/model/prior"
)

// slot says where an evaluation finds one parameter's value: x[idx] for a sampled
// parameter (idx ≥ 0), val for a fixed one.
type slot struct {
	idx int
	val float64
}

func (s slot) get(x []float64) float64 {
	if s.idx >= 0 {
		return x[s.idx]
	}
	return s.val
}

// armSlots are the slots of one arm's parameters; pitch2 and kink only for a kinked arm.
type armSlots struct {
	rref, pitch, width, pitch2, kink slot
}

// derivedKind names a derived quantity of package model, Parameters that a prior may be placed on.
type derivedKind int

const (
	derivedOmegaSun derivedKind = iota
	derivedThetaOverR0
	derivedThetaPlusVsun
	derivedOortA
	derivedOortB
	derivedTheta0
	derivedArmRsun
)

type derivedPrior struct {
	kind  derivedKind
	arm   int // for derivedArmRsun
	prior prior.Prior
}

// Rotation-curve families by number, for the inner loop.
const (
	curveKindLinear = iota
	curveKindPower
	curveKindNodes
)

// Error models by number, for the inner loop.
const (
	errGaussian = iota
	errTolerant
	errStudent
)

// indexed evaluates a Posterior from sampled coordinates by index: every parameter name is
// resolved to a slot once, when the posterior is built, so that an evaluation reads x and
// fixed values by position, builds the parameter set in storage it keeps, and allocates
// nothing. It computes what LogDensity's reference path (Values, NewParams, LogL) computes.
type indexed struct {
	family     CurveFamily
	rCore      float64
	nodeRadii  []float64
	interp     Interpolation
	r0, theta0 slot
	shape      slot   // dTheta_dR or alpha
	speeds     []slot // Theta_j of a nodes curve
	uvw        [6]slot
	sigmaVir   slot
	widthSlope slot
	// scaleHeight and zSun are read only with vertical structure.
	scaleHeight, zSun slot
	arms              []armSlots
	free              []prior.Prior // priors of x[0 : len(free)]
	derived           []derivedPrior
	errKind           int
}

// newIndexed resolves the parameter names of p. Every name the model needs must be a
// parameter of the configuration (fixed or free); an error names the first one missing.
func newIndexed(p *Posterior) (*indexed, error) {
	spec := p.Spec
	where := make(map[string]slot, len(p.names))
	for i, name := range p.names {
		if p.priors[i].IsFixed() {
			where[name] = slot{idx: -1, val: p.priors[i].Quantile(0.5)}
		}
	}
	for k, i := range p.free {
		where[p.names[i]] = slot{idx: k}
	}
	var missing []string
	need := func(name string) slot {
		s, ok := where[name]
		if !ok {
			missing = append(missing, name)
		}
		return s
	}
	ix := &indexed{rCore: spec.Curve.rCore(), nodeRadii: spec.Curve.NodeRadii, interp: spec.Curve.Interp}
	values := make(map[string]float64, len(where))
	for name := range where {
		values[name] = 0
	}
	fam, err := curveFamilyOf(values, spec.Curve)
	if err != nil {
		return nil, err
	}
	ix.family = fam
	ix.r0 = need(param.R0)
	switch fam {
	case CurveLinear:
		ix.theta0, ix.shape = need(param.Theta0), need(param.DThetaDR)
	case CurvePower:
		ix.theta0, ix.shape = need(param.Theta0), need(param.Alpha)
	case CurveNodes:
		for j := range spec.Curve.NodeRadii {
			ix.speeds = append(ix.speeds, need(param.NodeName(j+1)))
		}
	}
	for k, name := range []string{param.Usun, param.Vsun, param.Wsun, param.Us, param.Vs, param.Ws} {
		ix.uvw[k] = need(name)
	}
	ix.sigmaVir = need(param.SigmaVir)
	ix.widthSlope = slot{idx: -1}
	if s, ok := where[param.WidthSlope]; ok {
		ix.widthSlope = s
	}
	ix.zSun = slot{idx: -1}
	if spec.Vertical && spec.Galaxy {
		ix.scaleHeight = need(param.ScaleHeight)
		if s, ok := where[param.ZSun]; ok {
			ix.zSun = s
		}
	}
	for _, a := range spec.Arms {
		as := armSlots{rref: need(a.Name + param.SuffixRref), pitch: need(a.Name + param.SuffixPitch), width: need(a.Name + param.SuffixWidth)}
		if a.Kinked {
			as.pitch2, as.kink = need(a.Name+param.SuffixPitch2), need(a.Name+param.SuffixKink)
		}
		ix.arms = append(ix.arms, as)
	}
	if len(missing) > 0 {
		return nil, fmt.Errorf("the model needs parameter %s, which the configuration does not define", missing[0])
	}
	for _, i := range p.free {
		ix.free = append(ix.free, p.priors[i])
	}
	for _, dp := range p.derived {
		d := derivedPrior{prior: dp.Prior}
		switch dp.Name {
		case param.OmegaSun:
			d.kind = derivedOmegaSun
		case param.ThetaOverR0:
			d.kind = derivedThetaOverR0
		case param.ThetaPlusVsun:
			d.kind = derivedThetaPlusVsun
		case param.OortA:
			d.kind = derivedOortA
		case param.OortB:
			d.kind = derivedOortB
		case param.Theta0:
			d.kind = derivedTheta0
		default:
			d.kind, d.arm = derivedArmRsun, -1
			for k, a := range spec.Arms {
				if dp.Name == a.Name+param.SuffixRsun {
					d.arm = k
				}
			}
			if d.arm < 0 {
				return nil, fmt.Errorf("prior on %s: not a derived quantity of the model (want one of %v)", dp.Name, DerivedNames(spec))
			}
		}
		ix.derived = append(ix.derived, d)
	}
	switch spec.Errors.Kind() {
	case ErrorsTolerant:
		ix.errKind = errTolerant
	case ErrorsStudent:
		ix.errKind = errStudent
	default:
		ix.errKind = errGaussian
	}
	return ix, nil
}

// state is one parameter set in the form the indexed evaluation reads, in storage reused
// from one evaluation to the next. During the likelihood's loop it is only read, so the
// workers sharing out the sources share it.
type state struct {
	motion    Motion
	curveKind int
	linear    LinearCurve
	power     PowerCurve
	nodes     *NodesCurve
	speeds    []float64
	sigVir    float64
	// scaleHeight H and zSun z⊙ (kpc) of the sources' layer, and −ln H − ½ ln 2π.
	scaleHeight, zSun, layerConst float64
	layout                        arms.Layout
	density                       arms.Density
	mix                           arms.Mixer // the mixture of density with fractions frac
	frac                          []float64
	logFrac                       []float64
	cross                         []arms.Crossing
	terms                         []float64 // per-source ln L_i of a shared evaluation
	sel                           selState  // the selection's normalisation

	// The block of sources one worker evaluates in a shared evaluation, made once per state.
	block   func(worker, b int)
	like    *Likelihood
	errKind int

	// The reference parameter set, built only when a source needs the reference path.
	post   *Posterior
	x      []float64
	refMu  sync.Mutex
	params *Params
}

// set fills st with the parameter set at x. It returns false where the reference path's
// NewParams returns an error: the point is outside the model's domain.
func (ix *indexed) set(st *state, spec *Spec, x []float64, nFree int) bool {
	st.params = nil
	r0 := ix.r0.get(x)
	var curve RotationCurve
	switch ix.family {
	case CurveLinear:
		if st.linear.set(r0, ix.theta0.get(x), ix.shape.get(x), ix.rCore) != nil {
			return false
		}
		curve, st.curveKind = &st.linear, curveKindLinear
	case CurvePower:
		if st.power.set(r0, ix.theta0.get(x), ix.shape.get(x), ix.rCore) != nil {
			return false
		}
		curve, st.curveKind = &st.power, curveKindPower
	case CurveNodes:
		st.speeds = st.speeds[:0]
		for _, s := range ix.speeds {
			st.speeds = append(st.speeds, s.get(x))
		}
		if st.nodes == nil {
			st.nodes = new(NodesCurve)
		}
		if st.nodes.set(ix.nodeRadii, st.speeds, ix.interp, ix.rCore) != nil {
			return false
		}
		curve, st.curveKind = st.nodes, curveKindNodes
	}
	var u [6]float64
	for k, s := range ix.uvw {
		u[k] = s.get(x)
	}
	if st.motion.set(r0, curve, UVW{u[0], u[1], u[2]}, UVW{u[3], u[4], u[5]}) != nil {
		return false
	}
	st.sigVir = ix.sigmaVir.get(x)
	if !isFiniteNumber(st.sigVir) || st.sigVir < 0 {
		return false
	}
	slope := ix.widthSlope.get(x)
	if !isFiniteNumber(slope) {
		return false
	}
	if spec.Vertical && spec.Galaxy {
		st.scaleHeight, st.zSun = ix.scaleHeight.get(x), ix.zSun.get(x)
		if !isFiniteNumber(st.scaleHeight) || !(st.scaleHeight > 0) || !isFiniteNumber(st.zSun) {
			return false
		}
		st.layerConst = -math.Log(st.scaleHeight) - halfLog2Pi
	}
	st.layout.R0, st.layout.WidthSlope = r0, slope
	st.layout.EdgeSoftening, st.layout.DiskScale = spec.EdgeSoftening, spec.DiskScale
	st.layout.Arms = st.layout.Arms[:0]
	for k, a := range spec.Arms {
		as := &ix.arms[k]
		arm := arms.Arm{Name: a.Name, BetaRef: a.BetaRef, BetaStart: a.BetaStart, BetaEnd: a.BetaEnd, Kinked: a.Kinked,
			RRef: as.rref.get(x), Pitch: as.pitch.get(x) * deg, Width: as.width.get(x)}
		if a.Kinked {
			arm.Pitch2, arm.BetaKink = as.pitch2.get(x)*deg, as.kink.get(x)*deg
		}
		st.layout.Arms = append(st.layout.Arms, arm)
	}
	if st.density.Reset(st.layout) != nil {
		return false
	}
	nc := spec.NumComponents()
	if cap(st.frac) < nc {
		st.frac, st.logFrac = make([]float64, nc), make([]float64, nc)
	}
	st.frac, st.logFrac = st.frac[:nc], st.logFrac[:nc]
	if spec.Galaxy {
		prior.FractionsFromReals(st.frac, x[nFree:])
	} else {
		for k := range st.frac {
			st.frac[k] = 1 / float64(nc)
		}
	}
	for k, f := range st.frac {
		st.logFrac[k] = math.Log(f)
	}
	st.mix.Reset(&st.density, st.frac)
	st.x = x
	return true
}

// derivedValue returns the derived quantity d of the parameter set in st, as Derived does.
func (st *state) derivedValue(d *derivedPrior) float64 {
	m := &st.motion
	switch d.kind {
	case derivedOmegaSun:
		return m.OmegaSun()
	case derivedThetaOverR0:
		return m.Theta0() / m.R0()
	case derivedThetaPlusVsun:
		return m.Theta0() + m.Sun().V
	case derivedOortA:
		A, _ := m.Oort()
		return A
	case derivedOortB:
		_, B := m.Oort()
		return B
	case derivedTheta0:
		return m.Theta0()
	}
	st.cross, _ = st.layout.Arms[d.arm].SunLine(st.cross[:0], m.R0())
	if len(st.cross) == 0 {
		return math.NaN()
	}
	return st.cross[0].R
}

// reference returns the reference path's parameter set at the point of st, built once.
func (st *state) reference() (*Params, error) {
	st.refMu.Lock()
	defer st.refMu.Unlock()
	if st.params == nil {
		p, err := st.post.Params(st.x)
		if err != nil {
			return nil, err
		}
		st.params = p
	}
	return st.params, nil
}

package model

import (
	"context"
	"math"
	"math/rand/v2"
	"slices"
	"sort"
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/mcmc"
	"github.com/mirabilis-astro/mirabilis/model/param"
	"github.com/mirabilis-astro/mirabilis/model/prior"
)

// indexedCase is one model variant on which the indexed evaluation is checked against the
// straightforward one.
type indexedCase struct {
	name      string
	errors    ErrorKind
	galaxy    bool
	multiTurn bool // the first arm winds more than once round the centre
	curve     CurveFamily
	vertical  bool // the sources' Gaussian layer, with scale_height and z_sun
	selection bool // a survey selection with a completeness in distance
}

var indexedCases = []indexedCase{
	{"gaussian", ErrorsGaussian, true, false, CurveLinear, false, false},
	{"tolerant", ErrorsTolerant, true, false, CurveLinear, false, false},
	{"student", ErrorsStudent, true, false, CurveLinear, false, false},
	{"parallax-gaussian", ErrorsGaussian, false, false, CurveLinear, false, false},
	{"parallax-tolerant", ErrorsTolerant, false, false, CurveLinear, false, false},
	{"parallax-student", ErrorsStudent, false, false, CurveLinear, false, false},
	{"multi-turn-power", ErrorsGaussian, true, true, CurvePower, false, false},
	{"multi-turn-student", ErrorsStudent, true, true, CurveLinear, false, false},
	{"nodes-tolerant", ErrorsTolerant, true, false, CurveNodes, false, false},
	{name: "vertical-gaussian", errors: ErrorsGaussian, galaxy: true, curve: CurveLinear, vertical: true},
	{name: "vertical-selection-student", errors: ErrorsStudent, galaxy: true, multiTurn: true, curve: CurveLinear, vertical: true, selection: true},
	{name: "selection-tolerant", errors: ErrorsTolerant, galaxy: true, curve: CurveNodes, selection: true},
}

// indexedNodeRadii are the node radii (kpc) of the cases with a nodes curve.
var indexedNodeRadii = []float64{3, 6, 9, 13}

// indexedSources returns testSources and n random sources: Galactic and equatorial proper
// motions, labelled and free, with each kinematic term missing now and then, some near the
// centre and some with negative parallaxes.
func indexedSources(n int, seed uint64) []Source {
	r := rand.New(rand.NewPCG(seed, 1))
	src := testSources()
	for i := range n {
		l, b := 360*r.Float64(), 4*r.NormFloat64()
		var s Source
		if r.IntN(3) == 0 {
			s = Source{Sight: NewSightline(l, b)}
			s.PMGalactic = true
		} else {
			s = Source{Sight: NewSightlineICRS(l, b)}
		}
		s.Name = "random"
		d := 0.3 + 14*r.Float64()
		s.PlxErr = 0.01 + 0.05*r.Float64()
		s.Plx = 1/d + s.PlxErr*r.NormFloat64()
		if r.IntN(4) > 0 {
			s.HasV, s.V, s.VErr, s.VLSR = true, 150*r.NormFloat64(), 2+10*r.Float64(), r.IntN(2) == 0
		}
		for k := range 2 {
			if r.IntN(5) > 0 {
				s.HasPM[k], s.PM[k], s.PMErr[k] = true, 5*r.NormFloat64(), 0.02+0.2*r.Float64()
			}
		}
		if i%7 == 0 {
			s.Label = 1 + r.IntN(2)
		}
		src = append(src, s)
	}
	return src
}

// indexedPosterior builds the posterior of case c over L by hand, with the parameters of
// testValues free under broad uniform priors (width_slope fixed at 0.01).
func indexedPosterior(t testing.TB, c indexedCase, L *Likelihood) *Posterior {
	vals := pointValues(c)
	var names []string
	for name := range vals {
		if name[:2] != "f_" {
			names = append(names, name)
		}
	}
	sort.Strings(names)
	p := &Posterior{Spec: L.Spec, Like: L, names: names}
	for i, name := range names {
		v := vals[name]
		var pr prior.Prior = prior.Uniform{Min: v - 0.3*math.Abs(v) - 1, Max: v + 0.3*math.Abs(v) + 1}
		if strings.HasSuffix(name, param.SuffixWidth) || strings.HasSuffix(name, param.SuffixRref) || name == param.SigmaVir || name == param.ScaleHeight {
			pr = prior.Uniform{Min: 0.5 * v, Max: 1.5 * v}
		}
		if name == param.WidthSlope {
			pr = prior.Fixed{Value: 0.01}
		}
		p.priors = append(p.priors, pr)
		if !pr.IsFixed() {
			p.free = append(p.free, i)
		}
	}
	if L.Spec.Galaxy {
		p.fracs = prior.Dirichlet{N: L.Spec.NumComponents(), Alpha: 1}
	}
	p.derived = []NamedPrior{
		{Name: param.OmegaSun, Prior: prior.Normal{Mu: 30, Sigma: 2}},
		{Name: "Corvid" + param.SuffixRsun, Prior: prior.Normal{Mu: 5, Sigma: 3}},
	}
	ix, err := newIndexed(p)
	if err != nil {
		t.Fatal(err)
	}
	p.ix = ix
	p.states.New = func() any { return &state{post: p} }
	return p
}

func indexedSpec(t testing.TB, c indexedCase) *Spec {
	spec := testSpec(t, c.errors)
	spec.Galaxy = c.galaxy
	spec.Curve.Family = c.curve
	if c.curve == CurveNodes {
		spec.Curve.NodeRadii = indexedNodeRadii
	}
	if c.multiTurn {
		spec.Arms[0] = NewArmSpec("Corvid", 0, -40, 700, false)
	}
	spec.Vertical = c.vertical
	if c.selection {
		spec.Selection = Selection{HalfDistance: 6, Softness: 1.2}
	}
	return spec
}

// TestIndexedAgreesWithReference checks that LogDensity (by index, with plain-number
// mixtures and one exponential per node) agrees with the straightforward evaluation
// (Values, NewParams, LogL) to 1e-10 relative at random parameter sets, for every error
// model, both distance modes, kinked and multi-turn arms, labelled sources and missing
// kinematics; and that sharing the sources among workers gives the same bits.
func TestIndexedAgreesWithReference(t *testing.T) {
	for _, c := range indexedCases {
		t.Run(c.name, func(t *testing.T) {
			spec := indexedSpec(t, c)
			L, _ := indexedBuild(t, c, spec, indexedSources(70, 3))
			p := indexedPosterior(t, c, L)
			r := rand.New(rand.NewPCG(11, uint64(len(c.name))))
			lo := p.FreePriors()
			finite, inf := 0, 0
			for range 40 {
				x := make([]float64, p.Dim())
				for k, pr := range lo {
					x[k] = pr.Quantile(r.Float64())
				}
				for k := len(lo); k < len(x); k++ {
					x[k] = r.NormFloat64()
				}
				got, want := p.LogDensity(x), p.logDensityReference(x)
				switch {
				case math.IsInf(want, -1):
					inf++
					if !math.IsInf(got, -1) {
						t.Errorf("at %v: indexed %v, reference −Inf", x, got)
					}
					continue
				case !(math.Abs(got-want) <= 1e-10*math.Abs(want)):
					t.Errorf("at %v: indexed %.15g, reference %.15g (relative %.2g)", x, got, want, math.Abs(got-want)/math.Abs(want))
				}
				finite++
				for _, w := range []int{2, 3, 8} {
					if par := p.LogDensityParallel(x, w); par != got {
						t.Errorf("shared among %d workers: %.17g, alone %.17g", w, par, got)
					}
				}
			}
			if finite < 20 {
				t.Errorf("only %d of 40 random points were inside the support (%d outside)", finite, inf)
			}
		})
	}
}

// TestIndexedPerSource checks sourceIndexed against SourceLogL source by source at the
// layouts' own parameter set, where every source's integrand is well resolved.
func TestIndexedPerSource(t *testing.T) {
	for _, c := range indexedCases {
		spec := indexedSpec(t, c)
		L, _ := indexedBuild(t, c, spec, indexedSources(70, 5))
		p := indexedPosterior(t, c, L)
		x, err := p.Point(pointValues(c))
		if err != nil {
			t.Fatal(err)
		}
		st := &state{post: p}
		if !p.ix.set(st, spec, x, len(p.ix.free)) || !st.setNormalisation(spec) {
			t.Fatalf("%s: the test values are outside the model's domain", c.name)
		}
		ref, err := p.Params(x)
		if err != nil {
			t.Fatal(err)
		}
		var ns nodeScratch
		for i := range L.Sources {
			got, ok := L.sourceIndexed(i, st, p.ix.errKind, &ns)
			got -= st.sel.logNorm // sourceIndexed is the integral alone
			want := L.SourceLogL(i, ref)
			if !ok {
				t.Errorf("%s: source %d left to the reference path (ln L_i = %g)", c.name, i, want)
				continue
			}
			if !(math.Abs(got-want) <= 1e-10*math.Max(1, math.Abs(want))) {
				t.Errorf("%s: source %d: indexed %.15g, reference %.15g", c.name, i, got, want)
			}
		}
	}
}

func pointValues(c indexedCase) map[string]float64 {
	v := testValues()
	switch c.curve {
	case CurvePower:
		delete(v, param.DThetaDR)
		v[param.Alpha] = 0.05
	case CurveNodes:
		delete(v, param.DThetaDR)
		delete(v, param.Theta0)
		for j, th := range []float64{215, 228, 236, 231} {
			v[param.NodeName(j+1)] = th
		}
	}
	v[param.WidthSlope] = 0.01
	if c.vertical {
		v[param.ScaleHeight], v[param.ZSun] = 0.08, 0.015
	}
	return v
}

// TestIndexedNoAllocations checks that an evaluation allocates nothing, alone or with the
// sources shared among workers, for every rotation-curve family and error model.
func TestIndexedNoAllocations(t *testing.T) {
	if raceEnabled {
		t.Skip("the race detector makes sync.Pool drop items")
	}
	for _, c := range indexedCases {
		spec := indexedSpec(t, c)
		L, _ := indexedBuild(t, c, spec, indexedSources(70, 3))
		p := indexedPosterior(t, c, L)
		x, err := p.Point(pointValues(c))
		if err != nil {
			t.Fatal(err)
		}
		for _, workers := range []int{1, 2} {
			p.LogDensityParallel(x, workers)
			if n := testing.AllocsPerRun(20, func() { p.LogDensityParallel(x, workers) }); n != 0 {
				t.Errorf("%s, %d workers: an evaluation allocates %v times, want 0", c.name, workers, n)
			}
		}
	}
}

// indexedBuild lays out the quadratures of src at the case's test values.
func indexedBuild(t testing.TB, c indexedCase, spec *Spec, src []Source) (*Likelihood, *Params) {
	L, err := NewLikelihood(spec, src)
	if err != nil {
		t.Fatal(err)
	}
	p, err := spec.NewParams(pointValues(c))
	if err != nil {
		t.Fatal(err)
	}
	if _, err := L.BuildLayouts([]*Params{p}, 1); err != nil {
		t.Fatal(err)
	}
	return L, p
}

// TestChainSameForAnyThreadCount samples the posterior with 1, 2 and 8 threads, the log
// density sharing its sources among the threads no walker keeps busy (as a fit does), and
// checks that the walkers end in the same state, bit for bit: without a selection, and with
// one (each evaluation's normaliser kept with its state), in the plane and with the layer.
func TestChainSameForAnyThreadCount(t *testing.T) {
	for _, c := range indexedCases {
		if c.name != "gaussian" && !c.selection {
			continue
		}
		t.Run(c.name, func(t *testing.T) { chainSameForAnyThreadCount(t, c) })
	}
}

func chainSameForAnyThreadCount(t *testing.T, c indexedCase) {
	spec := indexedSpec(t, c)
	L, _ := indexedBuild(t, c, spec, indexedSources(70, 3))
	p := indexedPosterior(t, c, L)
	x0, err := p.Point(pointValues(c))
	if err != nil {
		t.Fatal(err)
	}
	scale := make([]float64, len(x0))
	for k, v := range x0 {
		scale[k] = 1e-3 * math.Max(1, math.Abs(v))
	}
	var first *mcmc.Result
	for _, threads := range []int{1, 2, 8} {
		set := &mcmc.Settings{Seed: 21, Threads: threads, Steps: 6}
		res, err := mcmc.Run(context.Background(), mcmc.Problem{
			LogDensity: func(x []float64) float64 { return p.LogDensityParallel(x, threads) },
			Dim:        p.Dim(),
		}, mcmc.Start{Center: x0, Scale: scale}, set)
		if err != nil {
			t.Fatal(err)
		}
		if first == nil {
			first = res
			continue
		}
		for w := range res.Positions {
			if res.LogDensity[w] != first.LogDensity[w] || res.Accepted[w] != first.Accepted[w] || !slices.Equal(res.Positions[w], first.Positions[w]) {
				t.Fatalf("%d threads: walker %d ends at log density %.17g, with 1 thread %.17g", threads, w, res.LogDensity[w], first.LogDensity[w])
			}
		}
	}
}

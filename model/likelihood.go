package model

import (
	"fmt"
	"math"
	"strings"
	"sync"

	"github.com/mirabilis-astro/mirabilis/internal/spelling"
	"github.com/mirabilis-astro/mirabilis/internal/workpool"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/quad"
)

// Source is one catalog source prepared for the likelihood: its sightline (sines, cosines
// and frame rotations computed once) and its measurements.
type Source struct {
	Name string
	Line int
	// Sight is the direction toward the source.
	Sight Sightline
	// Plx and PlxErr are the parallax and its uncertainty (mas).
	Plx, PlxErr float64
	// PMGalactic says whether the proper motions are (μl*, μb) rather than (μα*, μδ).
	PMGalactic bool
	// PM and PMErr are the two proper-motion components (mas/yr); HasPM says which are given.
	PM, PMErr [2]float64
	HasPM     [2]bool
	// V and VErr are the line-of-sight velocity (km/s), in the LSR when VLSR is set and
	// heliocentric otherwise; HasV says whether it is given.
	V, VErr    float64
	HasV, VLSR bool
	// Label is 0 for a free source and k ≥ 1 for a source tied to arm k (Spec.Arms[k−1]).
	Label int
}

// NewSources prepares the sources of a catalog for the likelihood of spec. Arm labels are
// matched to the model's arm names without regard to case, as column names are (an exact
// match wins where arms' names differ only in case). A source whose arm label names no arm
// of the model is an error naming the catalog line and the nearest arm name, and so is a
// source in a direction the spec's selection does not see.
func NewSources(cat *catalog.Catalog, spec *Spec) ([]Source, error) {
	index := map[string]int{}
	folded := map[string]int{} // lower-case name → arm, -1 where two arms share it
	var names []string
	for k, a := range spec.Arms {
		index[a.Name] = k + 1
		names = append(names, a.Name)
		f := strings.ToLower(a.Name)
		if _, dup := folded[f]; dup {
			folded[f] = -1
		} else {
			folded[f] = k + 1
		}
	}

	out := make([]Source, len(cat.Sources))
	var bad, unseen []string
	for i, cs := range cat.Sources {
		s := Source{Name: cs.Name, Line: cs.Line, Plx: cs.Parallax.Value, PlxErr: cs.Parallax.Err}
		if cs.Frame == catalog.Galactic {
			s.Sight = NewSightline(cs.Lon, cs.Lat)
		} else {
			s.Sight = NewSightlineICRS(cs.Lon, cs.Lat)
		}
		s.PMGalactic = cs.PMFrame == catalog.Galactic
		for j, m := range [2]catalog.Measurement{cs.PM1, cs.PM2} {
			s.PM[j], s.PMErr[j], s.HasPM[j] = m.Value, m.Err, m.OK
		}
		s.V, s.VErr, s.HasV, s.VLSR = cs.Vel.Value, cs.Vel.Err, cs.Vel.OK, cs.VelLSR
		if why := spec.Selection.unseen(s.Sight.L, s.Sight.B); why != "" {
			unseen = append(unseen, fmt.Sprintf("%s:%d: source %s at (l, b) = (%.4f°, %.4f°): %s", cat.Path, cs.Line, cs.Name, s.Sight.LDeg(), s.Sight.BDeg(), why))
		}
		if cs.Arm != "" && cs.Arm != "?" {
			k, ok := index[cs.Arm]
			if !ok {
				k = folded[strings.ToLower(cs.Arm)]
				ok = k > 0
			}
			if !ok {
				hint := ""
				if s := spelling.Nearest(cs.Arm, names); s != "" {
					hint = fmt.Sprintf(" (did you mean %s?)", s)
				}
				bad = append(bad, fmt.Sprintf("%s:%d: source %s: arm %q is not an arm of the model%s", cat.Path, cs.Line, cs.Name, cs.Arm, hint))
			}
			s.Label = k
		}
		out[i] = s
	}
	if len(bad) > 0 {
		return nil, fmt.Errorf("%d source(s) name unknown arms:\n  %s", len(bad), strings.Join(bad, "\n  "))
	}
	if len(unseen) > 0 {
		return nil, fmt.Errorf("%d source(s) lie where the survey's selection sees nothing (a catalog and its selection must agree):\n  %s", len(unseen), strings.Join(unseen, "\n  "))
	}
	return out, nil
}

// DistanceRange returns the distances (kpc) over which the source's integral runs: ±5σ in
// parallax clipped to [DMin, DMax]; for ϖ < 5σϖ, from max(DMin, 1/(ϖ + 5σϖ)) to DMax.
// Where that range is empty the whole [DMin, DMax] is used and contradicts is true: the
// parallax is at odds with the distance bounds.
func (s *Source) DistanceRange(spec *Spec) (lo, hi float64, contradicts bool) {
	up := s.Plx + 5*s.PlxErr
	down := s.Plx - 5*s.PlxErr
	if up <= 1/spec.DMax || down >= 1/spec.DMin {
		return spec.DMin, spec.DMax, true
	}
	lo = max(spec.DMin, 1/up)
	hi = spec.DMax
	if down > 0 {
		hi = min(spec.DMax, 1/down)
	}
	if !(hi > lo) {
		return spec.DMin, spec.DMax, true
	}
	return lo, hi, false
}

// logBase returns the terms of the log-integrand that do not depend on the parameters, at
// distance d (kpc): ln N(ϖ; 1/d, σϖ) plus logVolume.
func (s *Source) logBase(spec *Spec, d float64) float64 {
	z := (s.Plx - 1/d) / s.PlxErr
	return -0.5*z*z - math.Log(s.PlxErr) - halfLog2Pi + s.logVolume(spec, d)
}

// logVolume returns the spatial terms of the log-integrand that do not depend on the
// parameters, at distance d (kpc): in the galaxy mode the volume element in u = ln d and
// the selection's completeness ln S(d): 3 ln d + ln cos b with vertical structure
// (d³ cos b), 2 ln(d cos b) without (the Jacobian of the in-plane density); in the parallax
// mode, ln d − ln(DMax − DMin), a prior uniform in d written in u.
func (s *Source) logVolume(spec *Spec, d float64) float64 {
	if !spec.Galaxy {
		return math.Log(d) - math.Log(spec.DMax-spec.DMin)
	}
	var v float64
	if spec.Selection.HalfDistance != 0 {
		v = spec.Selection.LogCompleteness(d)
	}
	if spec.Vertical {
		return v + 3*math.Log(d) + math.Log(s.Sight.CosB)
	}
	return v + 2*math.Log(d*s.Sight.CosB)
}

// logLayer returns ln N(d sin b + z⊙; 0, H), the log-density of the sources' layer at the
// height of distance d (kpc) along the sightline, for spec with vertical structure; 0
// without.
func (s *Source) logLayer(spec *Spec, p *Params, d float64) float64 {
	if !spec.Vertical || !spec.Galaxy {
		return 0
	}
	t := (d*s.Sight.SinB + p.ZSun) / p.ScaleHeight
	return -0.5*t*t - math.Log(p.ScaleHeight) - halfLog2Pi
}

// LogSpatialPrior returns the log of the spatial factor of the source's integrand in
// u = ln d at distance d (kpc) under p, without the parallax and kinematic terms: in the
// galaxy mode ln [Σ_m f_m ρ_m(R, β) N(d sin b + z⊙; 0, H) d³ cos b S(d)] with vertical
// structure and ln [Σ_m f_m ρ_m(R, β) (d cos b)² S(d)] without (over the source's label's
// component alone when it has one); in the parallax mode ln [d / (DMax − DMin)]. Its
// integral over u is not normalised by the selected share Σ_m f_m Z_m.
func (s *Source) LogSpatialPrior(spec *Spec, p *Params, d float64) float64 {
	v := s.logVolume(spec, d)
	if !spec.Galaxy {
		return v
	}
	R, cb, sb := s.Sight.InPlane(p.Motion.R0(), d)
	n := spec.NumComponents()
	return v + s.logLayer(spec, p, d) + s.logSpatial(spec, p, R, math.Atan2(sb, cb), nil, make([]float64, n))
}

// logKinematic returns the sum of the log-densities of the source's kinematic residuals at
// distance d (kpc) under p, with the effective uncertainties of package model, Kinematics
// (σ²_v,eff = σ²_v + σ²(R), σ²_μ,eff = σ²_μ + (σ(R)/(k d))²), and the prediction.
func (s *Source) logKinematic(spec *Spec, p *Params, d float64) (float64, Prediction) {
	pr := p.Motion.Predict(&s.Sight, d)
	if !s.HasV && !s.HasPM[0] && !s.HasPM[1] {
		return 0, pr
	}
	v2 := spec.Bar.Variance(pr.R, p.SigmaVir)
	// Σ ln p(r_i | σ_i) = Σ kernel(z_i²) − ½ ln Π σ_i² − n ½ ln 2π: one logarithm for all.
	var lk float64
	prod, n := 1.0, 0.0
	em := &spec.Errors
	if s.HasV {
		pv := pr.VHelio
		if s.VLSR {
			pv = pr.VLSR
		}
		r, vv := s.V-pv, s.VErr*s.VErr+v2
		lk += em.logKernel(r * r / vv)
		prod *= vv
		n++
	}
	if s.HasPM[0] || s.HasPM[1] {
		m1, m2 := pr.MuAlphaStar, pr.MuDelta
		if s.PMGalactic {
			m1, m2 = pr.MuLStar, pr.MuB
		}
		kd := KmsPerKpcMasYr * d
		mu2 := v2 / (kd * kd)
		if s.HasPM[0] {
			r, vv := s.PM[0]-m1, s.PMErr[0]*s.PMErr[0]+mu2
			lk += em.logKernel(r * r / vv)
			prod *= vv
			n++
		}
		if s.HasPM[1] {
			r, vv := s.PM[1]-m2, s.PMErr[1]*s.PMErr[1]+mu2
			lk += em.logKernel(r * r / vv)
			prod *= vv
			n++
		}
	}
	lk -= 0.5*math.Log(prod) + n*halfLog2Pi
	return lk, pr
}

// logSpatial returns ln Σ_m f_m ρ_m(R, β) over the components the source may belong to (its
// label's alone when it is tied to an arm). When comp is not nil (length NumComponents) the
// log of each term f_m ρ_m is stored there too (−Inf for the terms a labelled source leaves
// out). In the parallax mode it returns 0 and leaves comp alone.
func (s *Source) logSpatial(spec *Spec, p *Params, R, beta float64, comp []float64, lin []float64) float64 {
	if !spec.Galaxy {
		return 0
	}
	if comp == nil && s.Label == 0 {
		// The common case: the mixture in plain densities, one logarithm. The field's
		// density never underflows inside the distance range, so the sum is positive;
		// should it underflow all the same, the log-space path below takes over.
		p.Density.Densities(lin, R, beta)
		var sum float64
		for m, v := range lin {
			sum += p.frac[m] * v
		}
		if sum > 1e-300 {
			return math.Log(sum)
		}
	}
	if comp == nil {
		comp = lin
	}
	p.Density.LogDensities(comp, R, beta)
	if s.Label > 0 {
		v := comp[s.Label] + p.LogFrac[s.Label]
		for m := range comp {
			comp[m] = math.Inf(-1)
		}
		comp[s.Label] = v
		return v
	}
	mx := math.Inf(-1)
	for m := range comp {
		comp[m] += p.LogFrac[m]
		mx = max(mx, comp[m])
	}
	var sum float64
	for _, c := range comp {
		sum += math.Exp(c - mx)
	}
	return mx + math.Log(sum)
}

// LogIntegrand returns the natural log of the source's integrand at u = ln d under p, summed
// over memberships: ln [N(ϖ; 1/d, σϖ) (d cos b)² Σ_m f_m ρ_m(R, β) K(d)], with vertical
// structure ln [N(ϖ; 1/d, σϖ) d³ cos b N(d sin b + z⊙; 0, H) Σ_m f_m ρ_m(R, β) K(d)], each
// times the selection's S(d), or in the parallax mode ln [N(ϖ; 1/d, σϖ) d K(d) /
// (DMax − DMin)]. comp is scratch space of length NumComponents.
func (s *Source) LogIntegrand(spec *Spec, p *Params, u float64, comp []float64) float64 {
	d := math.Exp(u)
	lk, pr := s.logKinematic(spec, p, d)
	return s.logBase(spec, d) + lk + s.logLayer(spec, p, d) + s.logSpatial(spec, p, pr.R, math.Atan2(pr.SinBeta, pr.CosBeta), nil, comp)
}

// grid is a source's fixed quadrature: its layout, the distances of its nodes and the terms
// of the log-integrand there that do not depend on the parameters.
//
// The fast path reads the rest, one contiguous array per quantity: the quadrature weights
// w, the node's place in the plane relative to the Sun (px, py) = d cos b (cos l, sin l)
// (kpc), its height above the Sun dz = d sin b (kpc), and 1/(k d) (mas/yr per km/s).
type grid struct {
	layout *quad.Layout
	d      []float64
	base   []float64

	w, px, py, dz, invKD []float64
}

func newGrid(spec *Spec, s *Source, l *quad.Layout) *grid {
	n := l.Len()
	flat := make([]float64, 5*n)
	g := &grid{layout: l, d: l.Nodes(), base: flat[:n:n], w: l.Weights(),
		px: flat[n : 2*n : 2*n], py: flat[2*n : 3*n : 3*n], dz: flat[3*n : 4*n : 4*n], invKD: flat[4*n : 5*n : 5*n]}
	for j, u := range g.d {
		d := math.Exp(u)
		g.d[j] = d
		g.base[j] = s.logBase(spec, d)
		dc := d * s.Sight.CosB
		g.px[j], g.py[j] = dc*s.Sight.CosL, dc*s.Sight.SinL
		g.dz[j] = d * s.Sight.SinB
		g.invKD[j] = 1 / (KmsPerKpcMasYr * d)
	}
	return g
}

// Likelihood is the likelihood of a catalog under a Spec: a product over sources of
// integrals over each source's distance, on quadratures laid out once (BuildLayouts) and
// then held fixed. It is safe for concurrent use once its layouts are built.
type Likelihood struct {
	Spec    *Spec
	Sources []Source
	// Excluded marks sources left out of the total (see ExcludeInner).
	Excluded []bool
	// Contradicts marks sources whose parallax is at odds with the distance bounds.
	Contradicts []bool

	grids []*grid
	pool  sync.Pool
}

// NewLikelihood returns the likelihood of the sources under spec. Its quadratures must be
// laid out (BuildLayouts or SetLayouts) before it is evaluated.
func NewLikelihood(spec *Spec, sources []Source) (*Likelihood, error) {
	if err := spec.Validate(); err != nil {
		return nil, err
	}
	L := &Likelihood{Spec: spec, Sources: sources, Excluded: make([]bool, len(sources)), Contradicts: make([]bool, len(sources))}
	for i := range sources {
		_, _, L.Contradicts[i] = sources[i].DistanceRange(spec)
	}
	n := spec.NumComponents()
	L.pool.New = func() any { return &scratch{comp: make([]float64, n), lin: make([]float64, n)} }
	return L, nil
}

type scratch struct {
	comp []float64
	lin  []float64
	vals []float64
	memb []float64
}

func (L *Likelihood) getScratch(nodes, blocks int) *scratch {
	sc := L.pool.Get().(*scratch)
	if cap(sc.vals) < nodes {
		sc.vals = make([]float64, nodes)
	}
	sc.vals = sc.vals[:nodes]
	if blocks > 0 {
		if cap(sc.memb) < nodes*blocks {
			sc.memb = make([]float64, nodes*blocks)
		}
		sc.memb = sc.memb[:nodes*blocks]
	}
	return sc
}

// Ready reports whether every source has its quadrature.
func (L *Likelihood) Ready() bool { return len(L.grids) == len(L.Sources) }

// Nodes returns the number of quadrature nodes of source i.
func (L *Likelihood) Nodes(i int) int { return L.grids[i].layout.Len() }

// Layout returns the quadrature layout of source i.
func (L *Likelihood) Layout(i int) *quad.Layout { return L.grids[i].layout }

// nodeValues fills vals with the log-integrand at source i's nodes under p, and, when memb
// is not nil, memb[m·n + j] with the log of component m's term at node j.
func (L *Likelihood) nodeValues(i int, p *Params, sc *scratch, memb []float64) {
	s, g, spec := &L.Sources[i], L.grids[i], L.Spec
	n := len(g.d)
	for j, d := range g.d {
		lk, pr := s.logKinematic(spec, p, d)
		v := g.base[j] + lk + s.logLayer(spec, p, d)
		var beta float64
		if spec.Galaxy {
			beta = math.Atan2(pr.SinBeta, pr.CosBeta)
		}
		var sp float64
		if memb != nil {
			sp = s.logSpatial(spec, p, pr.R, beta, sc.comp, sc.lin)
		} else {
			sp = s.logSpatial(spec, p, pr.R, beta, nil, sc.lin)
		}
		sc.vals[j] = v + sp
		if memb != nil && spec.Galaxy {
			for m, c := range sc.comp {
				memb[m*n+j] = v + c
			}
		}
	}
}

// SourceLogL returns ln L_i of source i under p: its integral, less p.LogNorm when the spec
// has a selection, so that L_i is a density of the source's data (see Spec.Normalisation).
func (L *Likelihood) SourceLogL(i int, p *Params) float64 {
	sc := L.getScratch(L.grids[i].layout.Len(), 0)
	defer L.pool.Put(sc)
	L.nodeValues(i, p, sc, nil)
	return L.grids[i].layout.LogIntegral(sc.vals) - p.LogNorm
}

// SourceDetail returns ln L_i of source i under p and its membership probabilities
// P(m | data, p) for the field (m = 0) and each arm, written to memb (length
// NumComponents). In the parallax mode the memberships are those of the arms' densities
// under p, as if the mixture were in force: the likelihood itself does not use them.
// ln L_i is SourceLogL's; the memberships do not depend on the selection's normalisation.
func (L *Likelihood) SourceDetail(i int, p *Params, memb []float64) float64 {
	nc := L.Spec.NumComponents()
	n := L.grids[i].layout.Len()
	sc := L.getScratch(n, nc)
	defer L.pool.Put(sc)
	if L.Spec.Galaxy {
		L.nodeValues(i, p, sc, sc.memb)
		total := L.grids[i].layout.LogIntegral(sc.vals) - p.LogNorm
		L.normalise(i, sc.memb, n, nc, memb)
		return total
	}
	L.nodeValues(i, p, sc, nil)
	total := L.grids[i].layout.LogIntegral(sc.vals)
	// Membership afterwards: weight the parallax-mode integrand by each component's
	// density times its fraction (equal when absent), as the mixture would.
	s, g := &L.Sources[i], L.grids[i]
	gal := *L.Spec
	gal.Galaxy, gal.Vertical, gal.Selection = true, false, Selection{}
	for j, d := range g.d {
		lk, pr := s.logKinematic(L.Spec, p, d)
		v := s.logBase(&gal, d) + lk
		s.logSpatial(&gal, p, pr.R, math.Atan2(pr.SinBeta, pr.CosBeta), sc.comp, sc.lin)
		for m, c := range sc.comp {
			sc.memb[m*n+j] = v + c
		}
	}
	L.normalise(i, sc.memb, n, nc, memb)
	return total
}

func (L *Likelihood) normalise(i int, blocks []float64, n, nc int, memb []float64) {
	mx := math.Inf(-1)
	for m := range nc {
		memb[m] = L.grids[i].layout.LogIntegral(blocks[m*n : (m+1)*n])
		mx = max(mx, memb[m])
	}
	var sum float64
	for m := range nc {
		memb[m] = math.Exp(memb[m] - mx)
		sum += memb[m]
	}
	for m := range nc {
		memb[m] /= sum
	}
}

// LogL returns the total log-likelihood Σ_i ln L_i under p, leaving out excluded sources.
func (L *Likelihood) LogL(p *Params) float64 {
	var total float64
	for i := range L.Sources {
		if L.Excluded[i] {
			continue
		}
		total += L.SourceLogL(i, p)
	}
	return total
}

// ErrorEstimate returns the estimated error of ln L_i at p on the source's fixed
// quadrature (Σ |K15 − G7| / I over its panels).
func (L *Likelihood) ErrorEstimate(i int, p *Params) float64 {
	sc := L.getScratch(L.grids[i].layout.Len(), 0)
	defer L.pool.Put(sc)
	L.nodeValues(i, p, sc, nil)
	return L.grids[i].layout.Estimate(sc.vals)
}

// NodeDistances returns the distances (kpc) of source i's quadrature nodes, increasing.
func (L *Likelihood) NodeDistances(i int) []float64 { return append([]float64(nil), L.grids[i].d...) }

// NodeMasses fills dst (allocated when too short) with the share of source i's integral
// under p carried by each quadrature node, summing to one: a discrete form of the posterior
// of the source's distance given its data and p, on the nodes of NodeDistances.
func (L *Likelihood) NodeMasses(i int, p *Params, dst []float64) []float64 {
	g := L.grids[i]
	n := len(g.d)
	if cap(dst) < n {
		dst = make([]float64, n)
	}
	dst = dst[:n]
	sc := L.getScratch(n, 0)
	defer L.pool.Put(sc)
	L.nodeValues(i, p, sc, nil)
	w := g.layout.Weights()
	mx := math.Inf(-1)
	for _, v := range sc.vals {
		mx = max(mx, v)
	}
	var total float64
	for j, v := range sc.vals {
		dst[j] = w[j] * math.Exp(v-mx)
		total += dst[j]
	}
	for j := range dst {
		dst[j] /= total
	}
	return dst
}

// InnerProbability returns the probability under p that source i lies inside radius
// rInner (kpc), from its integrand at the quadrature nodes.
func (L *Likelihood) InnerProbability(i int, p *Params, rInner float64) float64 {
	mass := L.NodeMasses(i, p, nil)
	var in float64
	for j, d := range L.grids[i].d {
		if R, _, _ := L.Sources[i].Sight.InPlane(p.Motion.R0(), d); R < rInner {
			in += mass[j]
		}
	}
	return in
}

// Parallel runs f(i) for i in [0, n) on up to workers goroutines (GOMAXPROCS when ≤ 0)
// of the process's one worker pool (package internal/workpool), the caller among them.
// Results must be written to per-index slots, so that the outcome does not depend on the
// count.
func Parallel(n, workers int, f func(i int)) {
	workpool.Run(workers, n, func(_, i int) { f(i) })
}

// PeculiarMotion returns the source's peculiar motion (U, V, W) relative to circular
// rotation at distance d (kpc) under m, from its measured proper motions and line-of-sight
// velocity (converted to Galactic and heliocentric first); ok is false unless all three are
// measured.
func (s *Source) PeculiarMotion(m *Motion, d float64) (uvw UVW, ok bool) {
	if !s.HasV || !s.HasPM[0] || !s.HasPM[1] {
		return UVW{}, false
	}
	mul, mub := s.PM[0], s.PM[1]
	if !s.PMGalactic {
		mul, mub = s.Sight.PMToGalactic(mul, mub)
	}
	vh := s.V
	if s.VLSR {
		vh = s.Sight.LSRToHelio(vh)
	}
	return m.PeculiarMotion(&s.Sight, d, mul, mub, vh), true
}

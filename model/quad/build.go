package quad

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"
)

// Settings controls Build and Refine. The zero value of each field selects
// its default.
type Settings struct {
	// Tol is the target estimated relative error of the integral at every
	// pilot, Σ_panels |K15 − G7| / I; a relative error ε of the integral is
	// an error ε of its natural log. Refinement also resolves every peak
	// whose scale f·gap / I exceeds Tol/10 (see Layout.Unresolved). Default
	// 1e-4.
	Tol float64

	// MinPanels is the smallest number of equal panels the range is first
	// cut into, breakpoints aside. Default 8.
	MinPanels int

	// MaxWidth is the largest width of a first panel, in units of the
	// integration variable. It sets how narrow a feature lying away from
	// every breakpoint can be and still be found: the widest gap between
	// nodes is 0.104 × the panel width, so a Gaussian peak of standard
	// deviation σ ≥ MaxWidth/25 always has a node within 1.3σ of its
	// centre. In tests with peaks of σ ≥ MaxWidth/25 and no breakpoints, no
	// error exceeded Tol; narrower peaks, above all those riding on a
	// broader component, were at times underestimated, and should be
	// announced by a breakpoint. Default 0.25.
	MaxWidth float64

	// MaxSplits caps the number of bisections refinement makes beyond the
	// first panels. A layout that reaches it (or MinWidth) before meeting Tol
	// and resolving its peaks falls back (see Stats.Fallback). Default 400.
	MaxSplits int

	// MinWidth is the narrowest panel that may still be bisected, in units
	// of the integration variable. Default 1e-6.
	MinWidth float64

	// Depth is how far, in natural log units, the log-integrand must stay
	// below its largest value at every pilot, at all nodes and both ends of
	// a panel, for the panel to be deleted. +Inf keeps every panel. Default
	// 20.
	Depth float64

	// MergeShare is the share of Tol that merging may spend at each pilot,
	// summed over all merges of the layout. Default 0.1.
	MergeShare float64

	// NoMerge turns merging off.
	NoMerge bool
}

// resolved returns the settings with defaults in place, or an error.
func (s *Settings) resolved() (Settings, error) {
	var r Settings
	if s != nil {
		r = *s
	}
	if r.Tol == 0 {
		r.Tol = 1e-4
	}
	if r.MinPanels == 0 {
		r.MinPanels = 8
	}
	if r.MaxWidth == 0 {
		r.MaxWidth = 0.25
	}
	if r.MaxSplits == 0 {
		r.MaxSplits = 400
	}
	if r.MinWidth == 0 {
		r.MinWidth = 1e-6
	}
	if r.Depth == 0 {
		r.Depth = 20
	}
	if r.MergeShare == 0 {
		r.MergeShare = 0.1
	}
	switch {
	case !(r.Tol > 0) || math.IsInf(r.Tol, 1):
		return r, fmt.Errorf("quad: Tol = %g, want a positive finite number", r.Tol)
	case r.MinPanels < 1:
		return r, fmt.Errorf("quad: MinPanels = %d, want at least 1", r.MinPanels)
	case !(r.MaxWidth > 0):
		return r, fmt.Errorf("quad: MaxWidth = %g, want a positive number", r.MaxWidth)
	case r.MaxSplits < 1:
		return r, fmt.Errorf("quad: MaxSplits = %d, want at least 1", r.MaxSplits)
	case !(r.MinWidth > 0) || math.IsInf(r.MinWidth, 1):
		return r, fmt.Errorf("quad: MinWidth = %g, want a positive finite number", r.MinWidth)
	case !(r.Depth > 0):
		return r, fmt.Errorf("quad: Depth = %g, want a positive number", r.Depth)
	case !(r.MergeShare > 0 && r.MergeShare <= 1):
		return r, fmt.Errorf("quad: MergeShare = %g, want a number in (0, 1]", r.MergeShare)
	}
	return r, nil
}

// Stats describes a layout made by Build or Refine. Error, Deleted and
// Merged have one entry per pilot; Deleted and Merged are relative to the
// pilot's integral before deletion.
type Stats struct {
	// Panels and Nodes count the layout's panels and nodes.
	Panels, Nodes int

	// Converged reports whether the layout meets Tol by its refinement
	// estimate at every pilot: refinement met Tol and resolved every peak
	// above Tol/10 within MaxSplits bisections and MinWidth, or, failing
	// that, the fallback met Tol (see Fallback). A layout that did not
	// converge is still usable; it was not merged.
	Converged bool

	// Fallback reports that refinement ran out of bisections, or reached
	// MinWidth, before every peak was resolved, and that the layout is the
	// fallback: bisected on the error estimate alone, for at most MaxSplits
	// more bisections, until it met Tol at every pilot (then Converged is
	// true) or ran out again (then Converged is false).
	Fallback bool

	// Error bounds the error of the natural log of the layout's integral at
	// each pilot: −ln(1 − x), with x the relative error made of the
	// refinement estimate Σ|K15 − G7| / I of the panels kept, the mass
	// deleted and its estimated error, and what merging spent. It is a bound
	// as far as |K15 − G7| bounds the error of K15, which holds with a wide
	// margin for features the nodes resolve; see Settings.MaxWidth.
	Error []float64

	// Deleted is the share of each pilot's integral in the deleted panels
	// (for Refine, in the stretches of gaps that stayed gaps).
	Deleted []float64

	// Merged is the sum over merges of |K15(merged) − Σ K15(replaced)| / I at
	// each pilot: the most by which merging moved the integral.
	Merged []float64

	// Evaluations counts the calls of each pilot's function (the same for
	// every pilot).
	Evaluations int
}

// est is what a panel's 15 values at one pilot leave: the log of the Kronrod
// integral, the log of |K15 − G7|, the largest log value at a node, and the
// log of the scale f·gap of the largest peak the nodes do not resolve (see
// unresolvedPeak).
type est struct {
	lk, le, mx, lr float64
}

// span is a panel under construction.
type span struct {
	lo, hi float64
	probe  bool // a stretch of a gap that Refine looks into; may be deleted
}

// builder holds the state of one layout's refinement.
type builder struct {
	set   Settings
	f     []func(float64) float64
	np    int       // pilots
	spans []span    // panels, in no particular order until sorted
	ests  []est     // ests[i*np+p]: panel i at pilot p
	ref   []float64 // per pilot: scale, the largest lk added so far
	sumK  []float64 // per pilot: Σ exp(lk − ref)
	sumE  []float64 // per pilot: Σ exp(le − ref)
	evals int
	u, w  [PanelNodes]float64
	v     [PanelNodes]float64
	// fences are edges that merging may not cross (Refine's old panel edges).
	fences map[float64]bool
}

// joined reports whether panels i and i+1 touch and may be merged.
func (b *builder) joined(i int) bool {
	x := b.spans[i].hi
	return x == b.spans[i+1].lo && !b.fences[x]
}

func newBuilder(set Settings, pilots []func(float64) float64) (*builder, error) {
	if len(pilots) == 0 {
		return nil, errors.New("quad: no pilot integrands")
	}
	for i, f := range pilots {
		if f == nil {
			return nil, fmt.Errorf("quad: pilot %d is nil", i)
		}
	}
	np := len(pilots)
	return &builder{
		set:  set,
		f:    pilots,
		np:   np,
		ref:  fill(make([]float64, np), math.Inf(-1)),
		sumK: make([]float64, np),
		sumE: make([]float64, np),
	}, nil
}

func fill(x []float64, v float64) []float64 {
	for i := range x {
		x[i] = v
	}
	return x
}

// evalPanel integrates [a, b] at every pilot, writing the results to dst.
func (b *builder) evalPanel(a, c float64, dst []est) error {
	panelRule(a, c, b.u[:], b.w[:])
	h := 0.5 * (c - a)
	for p, f := range b.f {
		m := math.Inf(-1)
		for i, u := range b.u {
			v := f(u)
			if v != v || math.IsInf(v, 1) {
				return fmt.Errorf("quad: pilot %d gives %g at u = %g", p, v, u)
			}
			b.v[i] = v
			m = max(m, v)
		}
		if math.IsInf(m, -1) {
			dst[p] = est{m, m, m, m}
			continue
		}
		var k, g float64
		for i, v := range b.v {
			e := math.Exp(v - m)
			k += unitK[i] * e
			g += unitG[i] * e
		}
		dst[p] = est{
			lk: m + math.Log(h*k),
			le: m + math.Log(h*math.Abs(k-g)),
			mx: m,
			lr: unresolvedPeak(b.u[:], b.v[:]),
		}
	}
	b.evals += PanelNodes
	return nil
}

// add adds (sign +1) or removes (sign −1) a panel's share of the totals.
func (b *builder) add(e []est, sign float64) {
	for p := range b.np {
		lk := e[p].lk
		if math.IsInf(lk, -1) {
			continue
		}
		if lk > b.ref[p] {
			if r := b.ref[p]; math.IsInf(r, -1) {
				b.sumK[p], b.sumE[p] = 0, 0
			} else {
				s := math.Exp(r - lk)
				b.sumK[p] *= s
				b.sumE[p] *= s
			}
			b.ref[p] = lk
		}
		b.sumK[p] += sign * math.Exp(lk-b.ref[p])
		b.sumE[p] += sign * math.Exp(e[p].le-b.ref[p])
	}
}

// retotal recomputes the totals from scratch, free of rounding drift.
func (b *builder) retotal() {
	fill(b.ref, math.Inf(-1))
	for i := range b.spans {
		for p := range b.np {
			b.ref[p] = max(b.ref[p], b.ests[i*b.np+p].lk)
		}
	}
	fill(b.sumK, 0)
	fill(b.sumE, 0)
	for i := range b.spans {
		for p := range b.np {
			e := b.ests[i*b.np+p]
			if !math.IsInf(e.lk, -1) {
				b.sumK[p] += math.Exp(e.lk - b.ref[p])
				b.sumE[p] += math.Exp(e.le - b.ref[p])
			}
		}
	}
}

// logI returns the log of the integral at pilot p (−Inf if it is zero).
func (b *builder) logI(p int) float64 {
	if b.sumK[p] <= 0 {
		return math.Inf(-1)
	}
	return b.ref[p] + math.Log(b.sumK[p])
}

// relErr returns Σ|K15 − G7| / I at pilot p, zero when I is zero.
func (b *builder) relErr(p int) float64 {
	if b.sumK[p] <= 0 {
		return 0
	}
	return max(b.sumE[p], 0) / b.sumK[p]
}

// push appends a panel and its estimates.
func (b *builder) push(s span) error {
	i := len(b.spans)
	b.spans = append(b.spans, s)
	b.ests = append(b.ests, make([]est, b.np)...)
	e := b.ests[i*b.np : (i+1)*b.np]
	if err := b.evalPanel(s.lo, s.hi, e); err != nil {
		return err
	}
	b.add(e, 1)
	return nil
}

// unresolvedPeak returns ln(f_j·g_j) for the largest value f_j at an
// interior node j that is a local maximum of the panel's values which the
// nodes do not resolve, or −Inf if there is none; g_j is the wider of the
// two node gaps beside j. A maximum is unresolved when the parabola through
// ln f at nodes j−1, j, j+1 has curvature c with c·g_j² > 1: for a Gaussian
// peak of standard deviation σ, c = 1/σ² wherever the three nodes sit, so
// the test asks for nodes closer than σ: sampling that fine integrates a
// Gaussian closely (even the plain trapezoid sum with spacing σ errs by
// only 2 exp(−2π²) ≈ 5e-9, by Poisson summation; Trefethen & Weideman 2014,
// SIAM Review 56, 385, cited from memory). A narrower peak between nodes
// can make K15 and G7 agree by chance while both miss most of it, so
// |K15 − G7| alone cannot be trusted there.
func unresolvedPeak(u, v []float64) float64 {
	r := math.Inf(-1)
	for j := 1; j < len(v)-1; j++ {
		if math.IsInf(v[j], -1) || v[j] < v[j-1] || v[j] < v[j+1] {
			continue
		}
		g1, g2 := u[j]-u[j-1], u[j+1]-u[j]
		g := max(g1, g2)
		c := math.Inf(1)
		if !math.IsInf(v[j-1], -1) && !math.IsInf(v[j+1], -1) {
			c = -2 * ((v[j+1]-v[j])/g2 - (v[j]-v[j-1])/g1) / (g1 + g2)
		}
		if c*g*g > 1 {
			r = max(r, v[j]+math.Log(g))
		}
	}
	return r
}

// roughShare is the share of a pilot's integral, as f·gap / I, above which
// an unresolved peak must be resolved: a tenth of Tol.
const roughShare = 0.1

// refine bisects panels, at most splits times, until at every pilot the
// estimate Σ|K15 − G7| / I meets Tol and, with roughToo, no panel holds an
// unresolved peak (see unresolvedPeak) of scale above roughShare × Tol × I;
// it reports whether that was reached. The panel bisected next is the one
// with the largest share of the estimate at a pilot still above Tol, or of
// an unresolved peak, measured in units of its limit.
func (b *builder) refine(roughToo bool, splits int) (bool, error) {
	b.retotal()
	logI := make([]float64, b.np)
	overErr := make([]bool, b.np)
	logTol := math.Log(b.set.Tol)
	logRough := math.Log(roughShare * b.set.Tol)
	confirmed := false
	for {
		pending := false
		for p := range b.np {
			overErr[p] = b.relErr(p) > b.set.Tol
			logI[p] = b.logI(p)
			pending = pending || overErr[p]
		}
		best, score, rough := -1, math.Inf(-1), false
		for i, s := range b.spans {
			frozen := s.hi-s.lo < 2*b.set.MinWidth
			for p := range b.np {
				e := b.ests[i*b.np+p]
				r := e.lr - logI[p] - logRough
				if roughToo && r > 0 {
					rough = true
					if !frozen && r > score {
						best, score = i, r
					}
				}
				if overErr[p] && !frozen {
					if v := e.le - logI[p] - logTol; v > score {
						best, score = i, v
					}
				}
			}
		}
		if !pending && !rough {
			if confirmed {
				return true, nil
			}
			b.retotal() // decide on exact totals
			confirmed = true
			continue
		}
		confirmed = false
		if best < 0 || splits <= 0 {
			return false, nil
		}
		splits--
		s := b.spans[best]
		mid := 0.5 * (s.lo + s.hi)
		if !(s.lo < mid && mid < s.hi) {
			return false, nil
		}
		left := b.ests[best*b.np : (best+1)*b.np]
		b.add(left, -1)
		if err := b.evalPanel(s.lo, mid, left); err != nil {
			return false, err
		}
		b.add(left, 1)
		b.spans[best].hi = mid
		if err := b.push(span{lo: mid, hi: s.hi, probe: s.probe}); err != nil {
			return false, err
		}
	}
}

// sortSpans puts the panels in ascending order.
func (b *builder) sortSpans() {
	idx := make([]int, len(b.spans))
	for i := range idx {
		idx[i] = i
	}
	sort.Slice(idx, func(x, y int) bool { return b.spans[idx[x]].lo < b.spans[idx[y]].lo })
	spans := make([]span, len(idx))
	ests := make([]est, len(b.ests))
	for k, i := range idx {
		spans[k] = b.spans[i]
		copy(ests[k*b.np:(k+1)*b.np], b.ests[i*b.np:(i+1)*b.np])
	}
	b.spans, b.ests = spans, ests
}

// account is the error bookkeeping of a layout, relative to each pilot's
// integral before deletion.
type account struct {
	logI     []float64 // per pilot, log of the refined integral
	estimate []float64 // Σ|K15 − G7| / I of the refined panels kept
	deleted  []float64 // mass deleted / I
	delErr   []float64 // Σ|K15 − G7| / I of the deleted panels
	merged   []float64 // spent by merging / I
}

func (b *builder) newAccount() *account {
	b.retotal()
	a := &account{
		logI:     make([]float64, b.np),
		estimate: make([]float64, b.np),
		deleted:  make([]float64, b.np),
		delErr:   make([]float64, b.np),
		merged:   make([]float64, b.np),
	}
	for p := range b.np {
		a.logI[p] = b.logI(p)
		a.estimate[p] = b.relErr(p)
	}
	return a
}

// share returns exp(x − logI), zero when both are −Inf.
func share(x, logI float64) float64 {
	if math.IsInf(x, -1) {
		return 0
	}
	return math.Exp(x - logI)
}

// prune deletes the panels where the log-integrand is more than Depth below
// its maximum at every pilot, at all nodes and both ends. With probesOnly,
// only panels grown from probes of gaps may go.
func (b *builder) prune(a *account, probesOnly bool) error {
	if math.IsInf(b.set.Depth, 1) {
		return nil
	}
	top := fill(make([]float64, b.np), math.Inf(-1))
	for i := range b.spans {
		for p := range b.np {
			top[p] = max(top[p], b.ests[i*b.np+p].mx)
		}
	}
	low := func(p int, v float64) bool {
		return math.IsInf(top[p], -1) || v < top[p]-b.set.Depth
	}
	// Values at panel ends, evaluated only for candidates and shared by
	// touching neighbours.
	var lastX float64
	var lastV []float64
	endVals := func(x float64) ([]float64, error) {
		if lastV != nil && x == lastX {
			return lastV, nil
		}
		v := make([]float64, b.np)
		for p, f := range b.f {
			v[p] = f(x)
			if v[p] != v[p] || math.IsInf(v[p], 1) {
				return nil, fmt.Errorf("quad: pilot %d gives %g at u = %g", p, v[p], x)
			}
		}
		b.evals++
		lastX, lastV = x, v
		return v, nil
	}
	keepS := b.spans[:0]
	keepE := b.ests[:0]
	for i, s := range b.spans {
		e := b.ests[i*b.np : (i+1)*b.np]
		drop := !probesOnly || s.probe
		for p := 0; drop && p < b.np; p++ {
			drop = low(p, e[p].mx)
		}
		if drop {
			va, err := endVals(s.lo)
			if err != nil {
				return err
			}
			vb, err := endVals(s.hi)
			if err != nil {
				return err
			}
			for p := 0; drop && p < b.np; p++ {
				drop = low(p, va[p]) && low(p, vb[p])
			}
		}
		if drop {
			for p := range b.np {
				a.deleted[p] += share(e[p].lk, a.logI[p])
				a.delErr[p] += share(e[p].le, a.logI[p])
				a.estimate[p] -= share(e[p].le, a.logI[p])
			}
			continue
		}
		keepS = append(keepS, s)
		keepE = append(keepE, e...)
	}
	b.spans, b.ests = keepS, keepE
	for p := range b.np {
		a.estimate[p] = max(a.estimate[p], 0)
	}
	return nil
}

// merge merges runs of touching panels into fewer panels. A set of merges
// is made when each merged panel's Kronrod value reproduces the sum of the
// Kronrod values it replaces at every pilot, within what is left of the
// budget MergeShare × Tol. The merged panel is compared with the resolved
// panels it replaces, never with its own |K15 − G7|, which for a wide panel
// over a smooth peak overstates its error by orders of magnitude (package model,
// Quadrature): Layout.Estimate of a merged layout therefore may exceed Tol
// at the pilots while its integral there is within MergeShare × Tol of the
// refined one.
//
// Each maximal run of touching panels is first merged into the fewest
// panels, up to maxParts, cut at equal shares of its integral (see
// partition); where that fails, it is tried whole, then its halves,
// recursively; then passes from left to right try pairs of neighbours until
// a pass merges nothing. A merged panel is evaluated once, even if tried
// again against other panels.
func (b *builder) merge(a *account) error {
	m := &merger{
		b:      b,
		a:      a,
		budget: b.set.MergeShare * b.set.Tol,
		costs:  make([]float64, b.np),
		seen:   make(map[[2]float64][]est),
	}
	// Maximal runs, from the right so that indices to the left stay valid.
	end := len(b.spans)
	for i := len(b.spans) - 1; i >= 0; i-- {
		if i == 0 || !b.joined(i-1) {
			ok, err := m.partition(i, end)
			if err != nil {
				return err
			}
			if !ok {
				if err := m.split(i, end); err != nil {
					return err
				}
			}
			end = i
		}
	}
	for {
		mergedAny := false
		for j := 0; j+1 < len(b.spans); j++ {
			if !b.joined(j) {
				continue
			}
			ok, err := m.try(j, j+2)
			if err != nil {
				return err
			}
			mergedAny = mergedAny || ok
		}
		if !mergedAny {
			return nil
		}
	}
}

// merger holds the state of merging.
type merger struct {
	b      *builder
	a      *account
	budget float64
	costs  []float64
	seen   map[[2]float64][]est // merged panels evaluated, by their ends
}

// maxParts is the largest number of panels partition tries to merge a run into.
const maxParts = 6

// partition merges the touching panels i0 … i1−1 into the fewest panels, up to maxParts,
// whose edges lie at equal shares of the run's integral (averaged over the pilots, at the
// nearest edges of the panels replaced), when together they meet the conditions of merge;
// it reports whether it did.
func (m *merger) partition(i0, i1 int) (bool, error) {
	b, a, np := m.b, m.a, m.b.np
	if i1-i0 < 2 {
		return false, nil
	}
	// cum[i] is the run's mean share of the integral left of panel i0+i.
	cum := make([]float64, i1-i0+1)
	for i := i0; i < i1; i++ {
		var s float64
		for p := range np {
			s += share(b.ests[i*np+p].lk, a.logI[p])
		}
		cum[i-i0+1] = cum[i-i0] + s
	}
	total := cum[len(cum)-1]
	if !(total > 0) {
		return false, nil
	}
	costs := make([]float64, np)
	for k := 1; k <= min(maxParts, i1-i0-1); k++ {
		// Cuts at the panel edges nearest the shares j/k of the run's integral.
		cuts := []int{i0}
		for j := 1; j < k; j++ {
			q := total * float64(j) / float64(k)
			c := sort.SearchFloat64s(cum, q)
			if c > 0 && q-cum[c-1] < cum[min(c, len(cum)-1)]-q {
				c--
			}
			c += i0
			if c > cuts[len(cuts)-1] && c < i1 {
				cuts = append(cuts, c)
			}
		}
		cuts = append(cuts, i1)
		if len(cuts)-1 < k {
			continue
		}
		groups := make([][]est, len(cuts)-1)
		ok := true
		fill(costs, 0)
		for g := range groups {
			lo, hi := cuts[g], cuts[g+1]
			if hi-lo == 1 {
				continue
			}
			key := [2]float64{b.spans[lo].lo, b.spans[hi-1].hi}
			e, seen := m.seen[key]
			if !seen {
				e = make([]est, np)
				if err := b.evalPanel(key[0], key[1], e); err != nil {
					return false, err
				}
				m.seen[key] = e
			}
			groups[g] = e
			for p := range np {
				lk := math.Inf(-1)
				for i := lo; i < hi; i++ {
					lk = logAdd(lk, b.ests[i*np+p].lk)
				}
				costs[p] += absDiff(e[p].lk, lk, a.logI[p])
			}
		}
		for p := range np {
			ok = ok && a.merged[p]+costs[p] <= m.budget
		}
		if !ok {
			continue
		}
		for p := range np {
			a.merged[p] += costs[p]
		}
		for g := len(groups) - 1; g >= 0; g-- {
			lo, hi := cuts[g], cuts[g+1]
			if groups[g] == nil {
				continue
			}
			copy(b.ests[lo*np:(lo+1)*np], groups[g])
			b.spans[lo].hi = b.spans[hi-1].hi
			b.spans = slices.Delete(b.spans, lo+1, hi)
			b.ests = slices.Delete(b.ests, (lo+1)*np, hi*np)
		}
		return true, nil
	}
	return false, nil
}

// split merges the touching panels i0 … i1−1 into one if it can, and else
// tries each half in turn.
func (m *merger) split(i0, i1 int) error {
	if i1-i0 < 2 {
		return nil
	}
	ok, err := m.try(i0, i1)
	if ok || err != nil {
		return err
	}
	mid := (i0 + i1) / 2
	if err := m.split(mid, i1); err != nil {
		return err
	}
	return m.split(i0, mid)
}

// try merges the touching panels i0 … i1−1 into one if the budget of merge
// allows, and reports whether it did.
func (m *merger) try(i0, i1 int) (bool, error) {
	b, a, np := m.b, m.a, m.b.np
	key := [2]float64{b.spans[i0].lo, b.spans[i1-1].hi}
	e, ok := m.seen[key]
	if !ok {
		e = make([]est, np)
		if err := b.evalPanel(key[0], key[1], e); err != nil {
			return false, err
		}
		m.seen[key] = e
	}
	for p := range np {
		lk := math.Inf(-1)
		for i := i0; i < i1; i++ {
			lk = logAdd(lk, b.ests[i*np+p].lk)
		}
		m.costs[p] = absDiff(e[p].lk, lk, a.logI[p])
		if a.merged[p]+m.costs[p] > m.budget {
			return false, nil
		}
	}
	for p := range np {
		a.merged[p] += m.costs[p]
	}
	copy(b.ests[i0*np:(i0+1)*np], e)
	b.spans[i0].hi = key[1]
	b.spans = slices.Delete(b.spans, i0+1, i1)
	b.ests = slices.Delete(b.ests, (i0+1)*np, i1*np)
	return true, nil
}

// logAdd returns ln(e^x + e^y).
func logAdd(x, y float64) float64 {
	if x < y {
		x, y = y, x
	}
	if math.IsInf(y, -1) {
		return x
	}
	return x + math.Log1p(math.Exp(y-x))
}

// absDiff returns |e^x − e^y| / e^logI.
func absDiff(x, y, logI float64) float64 {
	if x < y {
		x, y = y, x
	}
	if math.IsInf(x, -1) {
		return 0
	}
	return share(x, logI) * -math.Expm1(y-x)
}

// firstSpans cuts [lo, hi] at the breakpoints inside it and each piece into
// equal panels no wider than min(MaxWidth, (hi − lo)/MinPanels).
func firstSpans(lo, hi float64, breaks []float64, set Settings) []span {
	inner := make([]float64, 0, len(breaks))
	for _, x := range breaks {
		if x > lo && x < hi {
			inner = append(inner, x)
		}
	}
	sort.Float64s(inner)
	// Breakpoints closer than MinWidth to the previous edge or to hi are
	// dropped.
	edges := []float64{lo}
	for _, x := range inner {
		if x-edges[len(edges)-1] >= set.MinWidth && hi-x >= set.MinWidth {
			edges = append(edges, x)
		}
	}
	edges = append(edges, hi)
	width := min(set.MaxWidth, (hi-lo)/float64(set.MinPanels))
	var out []span
	for i := range len(edges) - 1 {
		out = appendEqual(out, edges[i], edges[i+1], width, false)
	}
	return out
}

// appendEqual appends [a, c] cut into the fewest equal panels no wider than
// width (within rounding).
func appendEqual(out []span, a, c, width float64, probe bool) []span {
	n := max(int(math.Ceil((c-a)/width*(1-1e-12))), 1)
	for k := range n {
		s := span{lo: a + (c-a)*float64(k)/float64(n), hi: a + (c-a)*float64(k+1)/float64(n), probe: probe}
		if k == 0 {
			s.lo = a
		}
		if k == n-1 {
			s.hi = c
		}
		out = append(out, s)
	}
	return out
}

// cutSpans cuts the ascending spans at the breakpoints that lie inside one of
// them, farther than minWidth from its ends.
func cutSpans(spans []span, breaks []float64, minWidth float64) []span {
	br := slices.Clone(breaks)
	sort.Float64s(br)
	var out []span
	k := 0
	for _, sp := range spans {
		for k < len(br) && br[k] <= sp.lo {
			k++
		}
		for ; k < len(br) && br[k] < sp.hi; k++ {
			if x := br[k]; x-sp.lo >= minWidth && sp.hi-x >= minWidth {
				out = append(out, span{lo: sp.lo, hi: x, probe: sp.probe})
				sp.lo = x
			}
		}
		out = append(out, sp)
	}
	return out
}

// Build lays out the quadrature of a positive function over [lo, hi] from
// its natural log at one or more pilot parameter sets, as described in the
// package documentation. breaks are candidate breakpoints: places where the
// integrand may change sharply (peaks, steps, edges of −Inf regions); those
// outside (lo, hi) are ignored. s may be nil for the defaults.
//
// The pilot functions may return very negative values or −Inf; a NaN or
// +Inf is an error. They are called from the calling goroutine only, each
// at the same points. A layout that did not converge is returned with
// Stats.Converged false and no error.
func Build(lo, hi float64, breaks []float64, pilots []func(u float64) float64, s *Settings) (*Layout, Stats, error) {
	set, err := s.resolved()
	if err != nil {
		return nil, Stats{}, err
	}
	if err := checkRange(lo, hi); err != nil {
		return nil, Stats{}, err
	}
	b, err := newBuilder(set, pilots)
	if err != nil {
		return nil, Stats{}, err
	}
	for _, sp := range firstSpans(lo, hi, breaks, set) {
		if err := b.push(sp); err != nil {
			return nil, Stats{}, err
		}
	}
	converged, fallback, err := b.refineOrFallBack()
	if err != nil {
		return nil, Stats{}, err
	}
	b.sortSpans()
	a := b.newAccount()
	if err := b.prune(a, false); err != nil {
		return nil, Stats{}, err
	}
	if converged && !set.NoMerge {
		if err := b.merge(a); err != nil {
			return nil, Stats{}, err
		}
	}
	l, st, err := b.finish(lo, hi, converged, a)
	st.Fallback = fallback
	return l, st, err
}

// refineOrFallBack refines the panels; when that runs out of bisections or
// reaches MinWidth, it goes on bisecting on the error estimate alone, for as
// many bisections again. It reports whether the layout met Tol and whether
// it is the fallback.
func (b *builder) refineOrFallBack() (converged, fallback bool, err error) {
	converged, err = b.refine(true, b.set.MaxSplits)
	if converged || err != nil {
		return converged, false, err
	}
	converged, err = b.refine(false, b.set.MaxSplits)
	return converged, true, err
}

// finish makes the layout and its statistics.
func (b *builder) finish(lo, hi float64, converged bool, a *account) (*Layout, Stats, error) {
	panels := make([]Panel, len(b.spans))
	for i, s := range b.spans {
		panels[i] = Panel{s.lo, s.hi}
	}
	st := Stats{
		Panels:      len(panels),
		Nodes:       PanelNodes * len(panels),
		Converged:   converged,
		Error:       make([]float64, b.np),
		Deleted:     a.deleted,
		Merged:      a.merged,
		Evaluations: b.evals,
	}
	for p := range b.np {
		// A relative error x of the integral moves its log by at most
		// −ln(1 − x).
		x := a.estimate[p] + a.deleted[p] + a.delErr[p] + a.merged[p]
		st.Error[p] = math.Inf(1)
		if x < 1 {
			st.Error[p] = -math.Log1p(-x)
		}
	}
	return newLayout(lo, hi, panels), st, nil
}

// Refine returns a layout refined from l for new pilot parameter sets (for
// instance those where Check found l off by more than the tolerance): its
// panels are cut at the breakpoints breaks (as in Build: places where the new
// integrands may change sharply; those outside the range or within MinWidth
// of a panel's edge are ignored) and bisected as in Build until the estimate
// meets s.Tol and every peak above s.Tol/10 is resolved at every new pilot;
// every other panel is kept as it is. Gaps in l are looked into, in
// stretches as wide as Build's first panels, also cut at the breakpoints, and
// a stretch where the log-integrand comes within s.Depth of its maximum at
// some pilot becomes a panel and is refined too. The new panels are then
// merged as in Build, checked at the new pilots, but never across an edge of
// l's panels, so that each old panel stays a union of new ones (and, where
// the old pilots' integrands are smooth on it, as accurate for them). The
// bisections are capped by s.MaxSplits, with the fallback of Build. l is not
// changed. Stats.Error includes the mass the probes found in the gaps that
// remain.
func Refine(l *Layout, breaks []float64, pilots []func(u float64) float64, s *Settings) (*Layout, Stats, error) {
	set, err := s.resolved()
	if err != nil {
		return nil, Stats{}, err
	}
	if l == nil {
		return nil, Stats{}, errors.New("quad: no layout to refine")
	}
	if err := checkRange(l.lo, l.hi); err != nil {
		return nil, Stats{}, err
	}
	b, err := newBuilder(set, pilots)
	if err != nil {
		return nil, Stats{}, err
	}
	width := min(set.MaxWidth, (l.hi-l.lo)/float64(set.MinPanels))
	var spans []span
	at := l.lo
	for _, p := range l.panels {
		if p.Lo > at {
			spans = appendEqual(spans, at, p.Lo, width, true)
		}
		spans = append(spans, span{lo: p.Lo, hi: p.Hi})
		at = p.Hi
	}
	if l.hi > at {
		spans = appendEqual(spans, at, l.hi, width, true)
	}
	for _, sp := range cutSpans(spans, breaks, set.MinWidth) {
		if err := b.push(sp); err != nil {
			return nil, Stats{}, err
		}
	}
	b.fences = map[float64]bool{}
	for _, p := range l.panels {
		b.fences[p.Lo], b.fences[p.Hi] = true, true
	}
	converged, fallback, err := b.refineOrFallBack()
	if err != nil {
		return nil, Stats{}, err
	}
	b.sortSpans()
	a := b.newAccount()
	if err := b.prune(a, true); err != nil {
		return nil, Stats{}, err
	}
	if converged && !set.NoMerge {
		if err := b.merge(a); err != nil {
			return nil, Stats{}, err
		}
	}
	r, st, err := b.finish(l.lo, l.hi, converged, a)
	st.Fallback = fallback
	return r, st, err
}

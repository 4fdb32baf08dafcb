package quad

import (
	"errors"
	"fmt"
	"math"
)

// Panel is one interval [Lo, Hi] of the integration variable, integrated by
// the 15-point Kronrod rule. Lo < Hi.
type Panel struct {
	Lo, Hi float64
}

// Layout is a fixed quadrature over part of a range [lo, hi]: panels in
// ascending order that do not overlap, each with the 15 nodes and weights
// of the Kronrod rule. Neighbouring panels touch or leave a gap, where the
// integrand was found negligible. The zero Layout has no range and no
// panels: its integral is zero.
//
// A Layout does not change once made (other than by UnmarshalBinary), so
// one may be shared between goroutines.
type Layout struct {
	lo, hi  float64
	panels  []Panel
	nodes   []float64
	weights []float64
}

// NewLayout returns the layout of the given panels over the range [lo, hi].
// The panels must be finite, have Lo < Hi, lie in [lo, hi] and be in
// ascending order without overlap; they are copied.
func NewLayout(lo, hi float64, panels []Panel) (*Layout, error) {
	if err := checkRange(lo, hi); err != nil {
		return nil, err
	}
	for i, p := range panels {
		switch {
		case !(p.Lo < p.Hi) || math.IsInf(p.Lo, 0) || math.IsInf(p.Hi, 0):
			return nil, fmt.Errorf("quad: panel %d is [%g, %g], want finite ends with Lo < Hi", i, p.Lo, p.Hi)
		case p.Lo < lo || p.Hi > hi:
			return nil, fmt.Errorf("quad: panel %d [%g, %g] leaves the range [%g, %g]", i, p.Lo, p.Hi, lo, hi)
		case i > 0 && p.Lo < panels[i-1].Hi:
			return nil, fmt.Errorf("quad: panel %d [%g, %g] overlaps or precedes panel %d [%g, %g]",
				i, p.Lo, p.Hi, i-1, panels[i-1].Lo, panels[i-1].Hi)
		}
	}
	return newLayout(lo, hi, append([]Panel(nil), panels...)), nil
}

// newLayout builds the nodes and weights of checked panels, which it keeps.
func newLayout(lo, hi float64, panels []Panel) *Layout {
	l := &Layout{
		lo:      lo,
		hi:      hi,
		panels:  panels,
		nodes:   make([]float64, PanelNodes*len(panels)),
		weights: make([]float64, PanelNodes*len(panels)),
	}
	for i, p := range panels {
		j := PanelNodes * i
		panelRule(p.Lo, p.Hi, l.nodes[j:j+PanelNodes], l.weights[j:j+PanelNodes])
	}
	return l
}

func checkRange(lo, hi float64) error {
	if !(lo < hi) || math.IsInf(lo, 0) || math.IsInf(hi, 0) {
		return fmt.Errorf("quad: range [%g, %g] must be finite with lo < hi", lo, hi)
	}
	return nil
}

// Range returns the range [lo, hi] the layout was made for; its panels cover
// part or all of it.
func (l *Layout) Range() (lo, hi float64) { return l.lo, l.hi }

// Panels returns a copy of the panels, in ascending order.
func (l *Layout) Panels() []Panel { return append([]Panel(nil), l.panels...) }

// Len returns the number of nodes, PanelNodes per panel.
func (l *Layout) Len() int { return len(l.nodes) }

// Nodes returns a copy of the nodes, in ascending order: PanelNodes per panel,
// panel by panel.
func (l *Layout) Nodes() []float64 { return append([]float64(nil), l.nodes...) }

// Weights returns a copy of the Kronrod weights of the nodes, in the order of
// Nodes: the integral of f is approximated by Σ_j Weights[j] f(Nodes[j]).
func (l *Layout) Weights() []float64 { return append([]float64(nil), l.weights...) }

// blocks returns how many blocks of Len values logf holds, panicking, as for
// an index out of range, when its length is not a multiple of Len.
func (l *Layout) blocks(logf []float64) int {
	n := len(l.nodes)
	if n == 0 {
		if len(logf) != 0 {
			panic(fmt.Sprintf("quad: %d values for a layout without nodes", len(logf)))
		}
		return 0
	}
	if len(logf) == 0 || len(logf)%n != 0 {
		panic(fmt.Sprintf("quad: %d values for a layout of %d nodes", len(logf), n))
	}
	return len(logf) / n
}

// maxOf returns the largest value of x, or NaN if x holds a NaN.
func maxOf(x []float64) float64 {
	m := math.Inf(-1)
	for _, v := range x {
		if v > m {
			m = v
		} else if v != v {
			return math.NaN()
		}
	}
	return m
}

// LogIntegral returns the natural log of the integral of f from the values
// of ln f at the nodes: ln Σ_j Weights[j] f(Nodes[j]), summed in log space
// with the largest value as scale factor, so that the result is finite
// whenever one value is finite, and −Inf only when every value is −Inf (or
// the layout has no nodes).
//
// logf holds one or more blocks of Len values, block after block, each in
// the order of Nodes; the blocks are added (for instance the components of a
// mixture, each with its weight folded into its values). A NaN gives NaN, a
// +Inf gives +Inf. LogIntegral panics if len(logf) is not a multiple of Len.
func (l *Layout) LogIntegral(logf []float64) float64 {
	nb := l.blocks(logf)
	if nb == 0 {
		return math.Inf(-1)
	}
	m := maxOf(logf)
	if math.IsInf(m, 0) || m != m {
		return m
	}
	n := len(l.weights)
	var s float64
	for b := range nb {
		v := logf[b*n : (b+1)*n]
		for j, w := range l.weights {
			s += w * math.Exp(v[j]-m)
		}
	}
	return m + math.Log(s)
}

// Estimate returns the estimated relative error of the layout's integral
// (equivalently, the error of its natural log) for an integrand given by its
// log at the nodes, as for LogIntegral: Σ_panels |K15 − G7| / I, with K15
// and G7 the panel's 15-point Kronrod and 7-point Gauss values and I the
// Kronrod integral (Piessens et al. 1983, QUADPACK, sec. 2.2). It is zero
// when every value is −Inf, NaN if a value is NaN or +Inf.
//
// Estimate needs no evaluation beyond the nodes the caller already has, but
// it says nothing of mass lying in the gaps between panels, and it
// overstates the error of merged panels by orders of magnitude (Build merges
// by comparison with the refined panels, not by this estimate): to learn a
// layout's error for a new integrand, use Check.
func (l *Layout) Estimate(logf []float64) float64 {
	e, _ := l.scan(nil, logf)
	var s float64
	for _, v := range e {
		s += v
	}
	return s
}

// PanelEstimates returns, for each panel, its share |K15 − G7| / I of the
// estimate given by Estimate. It reuses dst if it has the capacity.
func (l *Layout) PanelEstimates(dst, logf []float64) []float64 {
	e, _ := l.scan(dst, logf)
	return e
}

// Unresolved returns the largest scale f_j·g_j / I of a peak the nodes do
// not resolve, for an integrand given by its log at the nodes as for
// LogIntegral, or 0 if there is none. A peak is an interior node j of a
// panel where ln f has a local maximum, g_j the wider node gap beside it,
// and it is unresolved when the parabola through ln f at nodes j−1, j, j+1
// is so sharply curved, c·g_j² > 1, that a Gaussian of that curvature would
// be narrower than the node gap. Refinement in Build and Refine leaves no
// such peak above a tenth of Tol at the pilots (merging may, where the merged
// panel still reproduces the refined ones); above that, K15 and G7 may agree
// by chance while both miss part of the peak, and Estimate cannot be
// trusted. NaN if a value is NaN or +Inf.
func (l *Layout) Unresolved(logf []float64) float64 {
	_, r := l.scan(nil, logf)
	return r
}

// scan returns each panel's |K15 − G7| / I and the largest unresolved peak
// scale f·g / I.
func (l *Layout) scan(dst, logf []float64) ([]float64, float64) {
	nb := l.blocks(logf)
	np := len(l.panels)
	if cap(dst) >= np {
		dst = dst[:np]
	} else {
		dst = make([]float64, np)
	}
	if nb == 0 {
		return dst, 0
	}
	m := maxOf(logf)
	switch {
	case m != m || math.IsInf(m, 1):
		for i := range dst {
			dst[i] = math.NaN()
		}
		return dst, math.NaN()
	case math.IsInf(m, -1):
		for i := range dst {
			dst[i] = 0
		}
		return dst, 0
	}
	n := len(l.nodes)
	var total float64
	rough := math.Inf(-1)
	var lt [PanelNodes]float64
	for i, p := range l.panels {
		var k, g float64
		for j := range PanelNodes {
			var t float64
			for b := range nb {
				t += math.Exp(logf[b*n+PanelNodes*i+j] - m)
			}
			k += unitK[j] * t
			g += unitG[j] * t
			lt[j] = math.Log(t)
		}
		h := 0.5 * (p.Hi - p.Lo)
		total += h * k
		dst[i] = h * math.Abs(k-g)
		rough = max(rough, unresolvedPeak(l.nodes[PanelNodes*i:PanelNodes*(i+1)], lt[:]))
	}
	for i := range dst {
		dst[i] /= total
	}
	return dst, math.Exp(rough) / total
}

// errFormat is returned for a binary layout that cannot be read.
var errFormat = errors.New("quad: not a layout in binary form")

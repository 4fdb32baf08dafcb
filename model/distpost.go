package model

import (
	"math"
	"math/rand/v2"
	"sort"
)

// DistancePosterior is the posterior of one source's distance, rebuilt from the shares of
// its integral carried by its quadrature nodes.
//
// A node's mass m_j = w_j g(u_j) is the quadrature weight w_j times the integrand g in
// u = ln d at the node, so m_j/w_j gives the posterior density at every node. Between
// neighbouring nodes, ln g is interpolated by the cubic through the four nearest nodes (the
// quadratic through three at the ends; a straight line across a gap between panels, where
// the density is negligible), which is exact for a log-normal posterior, and integrated on
// a fine grid; the cumulative distribution is linear between grid points. Half a node
// spacing beyond the end nodes, ln g continues along the line through the last two.
type DistancePosterior struct {
	u   []float64 // ln d on the fine grid, increasing
	cdf []float64 // cumulative share at u, from 0 to 1
}

// subSteps is the number of fine-grid steps between neighbouring nodes.
const subSteps = 8

// NewDistancePosterior returns the distance posterior of a source from the distances d
// (kpc, increasing) of its quadrature nodes, their quadrature weights w in u = ln d, and
// the node masses (any positive scale; see Likelihood.NodeMasses). Nodes with zero weight
// are left out. It returns nil when no node carries mass.
func NewDistancePosterior(d, w, mass []float64) *DistancePosterior {
	var u, lg []float64
	for j := range d {
		if w[j] > 0 && d[j] > 0 {
			u = append(u, math.Log(d[j]))
			if mass[j] > 0 {
				lg = append(lg, math.Log(mass[j]/w[j]))
			} else {
				lg = append(lg, math.Inf(-1))
			}
		}
	}
	n := len(u)
	mx := math.Inf(-1)
	for _, v := range lg {
		mx = max(mx, v)
	}
	if n == 0 || math.IsInf(mx, -1) || math.IsNaN(mx) {
		return nil
	}
	for j := range lg {
		lg[j] -= mx
		lg[j] = max(lg[j], -745) // keep the interpolant finite
	}
	if n == 1 {
		return &DistancePosterior{u: []float64{u[0], u[0]}, cdf: []float64{0, 1}}
	}
	p := &DistancePosterior{}
	// logAt interpolates ln g at x in [u[a], u[a+1]].
	gap := func(a int) bool {
		h := u[a+1] - u[a]
		left, right := math.Inf(1), math.Inf(1)
		if a > 0 {
			left = u[a] - u[a-1]
		}
		if a+2 < n {
			right = u[a+2] - u[a+1]
		}
		return h > 3*min(left, right)
	}
	logAt := func(a int, x float64) float64 {
		lo, hi := a-1, a+2
		if gap(a) || n == 2 {
			lo, hi = a, a+1
		} else {
			if lo < 0 {
				lo = 0
			}
			if hi > n-1 {
				hi = n - 1
			}
			// Keep the stencil inside the panel: do not reach across a gap.
			if lo < a && gap(lo) {
				lo = a
			}
			if hi > a+1 && gap(a+1) {
				hi = a + 1
			}
		}
		var s float64
		for i := lo; i <= hi; i++ {
			l := lg[i]
			for k := lo; k <= hi; k++ {
				if k != i {
					l *= (x - u[k]) / (u[i] - u[k])
				}
			}
			s += l
		}
		return s
	}
	line := func(a, b int, x float64) float64 {
		return lg[a] + (lg[b]-lg[a])*(x-u[a])/(u[b]-u[a])
	}
	var cum float64
	add := func(x, v float64) {
		if k := len(p.u); k > 0 {
			cum += 0.5 * (math.Exp(v) + math.Exp(p.cdf[k-1])) * (x - p.u[k-1])
		}
		p.u = append(p.u, x)
		p.cdf = append(p.cdf, v) // the log density for now; the cumulative below
	}
	cums := make([]float64, 0, (n+1)*subSteps+1)
	push := func(x, v float64) {
		add(x, v)
		cums = append(cums, cum)
	}
	// Below the first node.
	h0 := 0.5 * (u[1] - u[0])
	for s := 0; s < subSteps; s++ {
		x := u[0] - h0 + h0*float64(s)/subSteps
		push(x, line(0, 1, x))
	}
	for a := 0; a+1 < n; a++ {
		for s := 0; s < subSteps; s++ {
			x := u[a] + (u[a+1]-u[a])*float64(s)/subSteps
			v := lg[a]
			if s > 0 {
				v = logAt(a, x)
			}
			push(x, v)
		}
	}
	h1 := 0.5 * (u[n-1] - u[n-2])
	for s := 0; s <= subSteps; s++ {
		x := u[n-1] + h1*float64(s)/subSteps
		push(x, line(n-2, n-1, x))
	}
	if !(cum > 0) || math.IsInf(cum, 0) {
		return nil
	}
	for k := range cums {
		p.cdf[k] = cums[k] / cum
	}
	return p
}

// Quantile returns the distance (kpc) below which the fraction q of the posterior lies.
func (p *DistancePosterior) Quantile(q float64) float64 {
	if p == nil {
		return math.NaN()
	}
	n := len(p.u)
	k := sort.SearchFloat64s(p.cdf, q) // first k with cdf[k] ≥ q
	switch {
	case k <= 0:
		return math.Exp(p.u[0])
	case k >= n:
		return math.Exp(p.u[n-1])
	}
	a := (q - p.cdf[k-1]) / (p.cdf[k] - p.cdf[k-1])
	return math.Exp(p.u[k-1] + a*(p.u[k]-p.u[k-1]))
}

// MassQuantile returns the distance (kpc) below which the fraction q of a source's
// distance posterior lies, from its nodes' distances d, quadrature weights w and masses
// (see DistancePosterior). It returns NaN when no node carries mass.
func MassQuantile(d, w, mass []float64, q float64) float64 {
	return NewDistancePosterior(d, w, mass).Quantile(q)
}

// PeculiarDraws returns the peculiar motion (U, V, W, km/s) of source s at one distance
// per parameter set: for draw k, a distance drawn from that draw's distance posterior
// post[k] (at a uniform variate from rng) and motions[k]'s rotation curve and solar
// motion. Summarised, the draws carry the uncertainty of both the parameters and the
// distance. ok is false unless the source's proper motions and line-of-sight velocity are
// all measured.
func PeculiarDraws(s *Source, motions []*Motion, post []*DistancePosterior, rng *rand.Rand) (uvw []UVW, ok bool) {
	if !s.HasV || !s.HasPM[0] || !s.HasPM[1] {
		return nil, false
	}
	uvw = make([]UVW, 0, len(motions))
	for k, m := range motions {
		dist := post[k].Quantile(rng.Float64())
		if math.IsNaN(dist) {
			continue
		}
		v, _ := s.PeculiarMotion(m, dist)
		uvw = append(uvw, v)
	}
	return uvw, true
}

package model

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"slices"

	"github.com/mirabilis-astro/mirabilis/arms"
	"github.com/mirabilis-astro/mirabilis/model/quad"
)

// scanPoints is the number of points of the even grid in u = ln d on which each pilot's
// integrand and kinematic residuals are scanned for features before the panels are laid out.
const scanPoints = 600

// LayoutStats summarises the quadratures of all sources.
type LayoutStats struct {
	// MinNodes, MedianNodes and MaxNodes count the nodes per source.
	MinNodes, MedianNodes, MaxNodes int
	// TotalNodes is the sum over sources.
	TotalNodes int
	// Unconverged lists the sources whose refinement stopped before meeting the tolerance.
	Unconverged []string
	// Fallback lists the sources whose refinement ran out of bisections before resolving
	// every peak, and which use the fallback layout (see quad.Stats.Fallback); those of
	// them that still missed the tolerance are in Unconverged too.
	Fallback []string
	// MaxError is the largest estimated error of ln L_i at any pilot.
	MaxError float64
}

// BuildLayouts lays out every source's quadrature panels so that ln L_i is resolved to the
// spec's tolerance at each of the pilot parameter sets (package model, Quadrature): the range is ±5σ in
// parallax clipped to the distance bounds, split at the integrand's features (each arm
// crossing ± one and three widths, the distances where a predicted kinematic quantity equals
// the observed one, the parallax peak and every local maximum of the scanned integrand),
// refined by Gauss–Kronrod error estimates, pruned and merged (package quad). workers
// sources are laid out at once (GOMAXPROCS when ≤ 0); the result does not depend on it.
func (L *Likelihood) BuildLayouts(pilots []*Params, workers int) (LayoutStats, error) {
	if len(pilots) == 0 {
		return LayoutStats{}, errors.New("model: laying out quadratures needs at least one pilot parameter set")
	}
	grids := make([]*grid, len(L.Sources))
	stats := make([]quad.Stats, len(L.Sources))
	errs := make([]error, len(L.Sources))
	Parallel(len(L.Sources), workers, func(i int) {
		l, st, err := L.layoutSource(i, pilots)
		if err != nil {
			errs[i] = fmt.Errorf("source %s: %w", L.Sources[i].Name, err)
			return
		}
		grids[i], stats[i] = newGrid(L.Spec, &L.Sources[i], l), st
	})
	if err := errors.Join(errs...); err != nil {
		return LayoutStats{}, err
	}
	L.grids = grids
	return L.summarise(stats), nil
}

func (L *Likelihood) summarise(stats []quad.Stats) LayoutStats {
	var ls LayoutStats
	counts := make([]int, len(L.grids))
	for i, g := range L.grids {
		counts[i] = g.layout.Len()
		ls.TotalNodes += counts[i]
		if stats != nil {
			if !stats[i].Converged {
				ls.Unconverged = append(ls.Unconverged, L.Sources[i].Name)
			}
			if stats[i].Fallback {
				ls.Fallback = append(ls.Fallback, L.Sources[i].Name)
			}
			for _, e := range stats[i].Error {
				ls.MaxError = max(ls.MaxError, e)
			}
		}
	}
	if len(counts) > 0 {
		slices.Sort(counts)
		ls.MinNodes, ls.MaxNodes, ls.MedianNodes = counts[0], counts[len(counts)-1], counts[len(counts)/2]
	}
	return ls
}

// pilotFuncs returns the source's log-integrand in u at each pilot.
func (L *Likelihood) pilotFuncs(i int, pilots []*Params) []func(float64) float64 {
	s := &L.Sources[i]
	fs := make([]func(float64) float64, len(pilots))
	for k, p := range pilots {
		comp := make([]float64, L.Spec.NumComponents())
		fs[k] = func(u float64) float64 { return s.LogIntegrand(L.Spec, p, u, comp) }
	}
	return fs
}

// layoutSource lays out the quadrature of source i.
func (L *Likelihood) layoutSource(i int, pilots []*Params) (*quad.Layout, quad.Stats, error) {
	s := &L.Sources[i]
	dlo, dhi, _ := s.DistanceRange(L.Spec)
	lo, hi := math.Log(dlo), math.Log(dhi)
	fs := L.pilotFuncs(i, pilots)
	breaks := L.features(s, pilots, fs, lo, hi)
	set := quad.Settings{Tol: L.Spec.Tol}
	return quad.Build(lo, hi, breaks, fs, &set)
}

// sourceFeatures returns the breakpoints of source i at the parameter sets ps, whose
// log-integrands are fs, over the source's distance range.
func (L *Likelihood) sourceFeatures(i int, ps []*Params, fs []func(float64) float64) []float64 {
	s := &L.Sources[i]
	dlo, dhi, _ := s.DistanceRange(L.Spec)
	return L.features(s, ps, fs, math.Log(dlo), math.Log(dhi))
}

// features returns candidate breakpoints in u for source s: where the integrand may change
// sharply at some pilot.
func (L *Likelihood) features(s *Source, pilots []*Params, fs []func(float64) float64, lo, hi float64) []float64 {
	var br []float64
	add := func(u float64) {
		if u > lo && u < hi && !math.IsNaN(u) {
			br = append(br, u)
		}
	}
	if s.Plx > 0 {
		add(-math.Log(s.Plx))
	}
	// Where the sightline meets the rotation curve's core, the bar's radius, and its
	// closest approach to the centre: the kinematics change slope or turn fast there.
	cb := s.Sight.CosB
	for _, p := range pilots {
		R0 := p.Motion.R0()
		along := R0 * s.Sight.CosL
		if along > 0 {
			add(math.Log(along / cb))
		}
		perp2 := R0 * R0 * s.Sight.SinL * s.Sight.SinL
		for _, Rx := range []float64{L.Spec.Curve.rCore(), L.Spec.Bar.RInner} {
			if h2 := Rx*Rx - perp2; h2 > 0 {
				for _, dc := range []float64{along - math.Sqrt(h2), along + math.Sqrt(h2)} {
					if dc > 0 {
						add(math.Log(dc / cb))
					}
				}
			}
		}
	}
	// Where the sightline crosses a kinked arm's kink azimuth, or a radius at which an arm's
	// width reaches its floor: the arm density jumps or kinks there.
	for _, p := range pilots {
		if !L.Spec.Galaxy {
			break
		}
		R0 := p.Motion.R0()
		for _, a := range p.Layout.Arms {
			if a.Kinked {
				for n := -2; n <= 2; n++ {
					b := a.BetaKink + 2*math.Pi*float64(n)
					// The ray from the centre at azimuth b meets the line of sight at
					// in-plane distance dc = R0 sin b / sin(b + l), on the ray's side.
					den := math.Sin(b + s.Sight.L)
					if den == 0 {
						continue
					}
					dc := R0 * math.Sin(b) / den
					if dc > 0 && (R0-dc*s.Sight.CosL)*math.Cos(b)+dc*s.Sight.SinL*math.Sin(b) > 0 {
						add(math.Log(dc / cb))
					}
				}
			}
			if g := p.Layout.WidthSlope; g != 0 {
				Rf := R0 + (arms.MinWidth-a.Width)/g
				along := R0 * s.Sight.CosL
				if h2 := Rf*Rf - R0*R0*s.Sight.SinL*s.Sight.SinL; Rf > 0 && h2 > 0 {
					for _, dc := range []float64{along - math.Sqrt(h2), along + math.Sqrt(h2)} {
						if dc > 0 {
							add(math.Log(dc / cb))
						}
					}
				}
			}
		}
	}
	// The sources' layer: along a sightline of latitude b its density N(d sin b + z⊙; 0, H)
	// is a Gaussian in d of scale H/|sin b| about d = −z⊙/sin b (its peak when that lies
	// ahead, where the sightline crosses the mid-plane); breakpoints at the centre and a
	// few scales either side, where the integrand bends and then falls steeply.
	if L.Spec.Galaxy && L.Spec.Vertical && s.Sight.SinB != 0 {
		for _, p := range pilots {
			scale := p.ScaleHeight / math.Abs(s.Sight.SinB)
			d0 := -p.ZSun / s.Sight.SinB
			if d0 > 0 {
				add(math.Log(d0))
			}
			for _, k := range []float64{1, 2, 3, 5} {
				for _, d := range []float64{d0 - k*scale, d0 + k*scale} {
					if d > 0 {
						add(math.Log(d))
					}
				}
			}
		}
	}
	var cross []arms.Crossing
	for _, p := range pilots {
		if L.Spec.Galaxy {
			for k, a := range p.Layout.Arms {
				cross, _ = a.Crossings(cross[:0], p.Motion.R0(), s.Sight.L, math.Exp(hi)*cb, 30*L.Spec.EdgeSoftening)
				w := p.Layout.Arms[k].Width
				for _, c := range cross {
					d := c.D / cb
					add(math.Log(d))
					for _, off := range []float64{-3, -1, 1, 3} {
						if dd := d + off*w/cb; dd > 0 {
							add(math.Log(dd))
						}
					}
				}
			}
		}
	}
	// Scan each pilot's integrand and residuals on an even grid.
	step := (hi - lo) / (scanPoints - 1)
	vals := make([]float64, scanPoints)
	var prev [3]float64
	for k, p := range pilots {
		for j := range scanPoints {
			u := lo + float64(j)*step
			vals[j] = fs[k](u)
			res := s.residuals(p, math.Exp(u))
			for c, r := range res {
				if j > 0 && !math.IsNaN(r) && !math.IsNaN(prev[c]) && (r > 0) != (prev[c] > 0) {
					add(u - step/2)
				}
				prev[c] = r
			}
		}
		for j := 1; j < scanPoints-1; j++ {
			if vals[j] >= vals[j-1] && vals[j] > vals[j+1] {
				u := lo + float64(j)*step
				add(u - step)
				add(u + step)
			}
		}
	}
	slices.Sort(br)
	return thin(br, lo, breakGap)
}

// breakGap is the least distance in u = ln d between two breakpoints of a source. Every
// pilot puts its own breakpoints at each feature (an arm crossing and its flanks, a
// kinematic match, a scanned maximum), a little apart from the other pilots'; kept all,
// they cut the range into hundreds of slivers, which cost evaluations while the panels are
// built and, beyond the refinement's budget, left layouts unconverged and unmerged at
// thousands of nodes. A panel edge within 0.01 of a feature serves as well as one on it:
// the Kronrod nodes crowd towards the edges, and refinement splits wherever the error
// estimate asks.
const breakGap = 0.01

// thin keeps the first of each run of sorted breakpoints closer than gap to the one kept
// before it (or to lo).
func thin(br []float64, lo, gap float64) []float64 {
	out := br[:0]
	last := lo
	for _, x := range br {
		if x-last >= gap && (len(out) == 0 || x > out[len(out)-1]) {
			out = append(out, x)
			last = x
		}
	}
	return out
}

// residuals returns the observed-minus-predicted line-of-sight velocity and proper motions
// of s at distance d under p, NaN for absent terms.
func (s *Source) residuals(p *Params, d float64) [3]float64 {
	r := [3]float64{math.NaN(), math.NaN(), math.NaN()}
	pr := p.Motion.Predict(&s.Sight, d)
	if s.HasV {
		if s.VLSR {
			r[0] = s.V - pr.VLSR
		} else {
			r[0] = s.V - pr.VHelio
		}
	}
	m1, m2 := pr.MuAlphaStar, pr.MuDelta
	if s.PMGalactic {
		m1, m2 = pr.MuLStar, pr.MuB
	}
	if s.HasPM[0] {
		r[1] = s.PM[0] - m1
	}
	if s.HasPM[1] {
		r[2] = s.PM[1] - m2
	}
	return r
}

// QuadratureErrors measures the quadrature error of ln L_i at parameter set p for the
// sources listed (all when nil): for each, ln L_i on its fixed quadrature minus ln L_i on
// that quadrature refined at p to a tenth of the tolerance (quad.Check), in the order
// listed. A positive value means the fixed quadrature overstates L_i. Unlike the
// quadrature's own Gauss–Kronrod estimate, which overstates the error of merged panels by
// orders of magnitude, this is the error itself, to within a tenth of the tolerance.
func (L *Likelihood) QuadratureErrors(p *Params, sources []int) ([]float64, error) {
	if sources == nil {
		sources = make([]int, len(L.Sources))
		for i := range sources {
			sources[i] = i
		}
	}
	set := quad.Settings{Tol: L.Spec.Tol}
	out := make([]float64, len(sources))
	at := []*Params{p}
	for k, i := range sources {
		fs := L.pilotFuncs(i, at)
		d, _, err := quad.Check(L.grids[i].layout, L.sourceFeatures(i, at, fs), fs[0], &set)
		if err != nil {
			return nil, fmt.Errorf("source %s: %w", L.Sources[i].Name, err)
		}
		out[k] = d
	}
	return out, nil
}

// Monitor measures the quadrature error of ln L_i at parameter set p for the sources
// listed (all when nil), as QuadratureErrors does, and returns those whose error exceeds
// the tolerance, with the size of their error (+Inf where it could not be measured).
func (L *Likelihood) Monitor(p *Params, sources []int) map[int]float64 {
	if sources == nil {
		sources = make([]int, len(L.Sources))
		for i := range sources {
			sources[i] = i
		}
	}
	out := map[int]float64{}
	for _, i := range sources {
		d, err := L.QuadratureErrors(p, []int{i})
		e := math.Inf(1)
		if err == nil {
			e = math.Abs(d[0])
		}
		if !(e <= L.Spec.Tol) {
			out[i] = e
		}
	}
	return out
}

// Refine refines the quadrature of source i so that it meets the tolerance at the given
// parameter sets too: its panels are cut at the features found there and bisected as the
// error estimate asks (quad.Refine); the others are kept.
func (L *Likelihood) Refine(i int, at []*Params) error {
	set := quad.Settings{Tol: L.Spec.Tol}
	fs := L.pilotFuncs(i, at)
	l, _, err := quad.Refine(L.grids[i].layout, L.sourceFeatures(i, at, fs), fs, &set)
	if err != nil {
		return fmt.Errorf("source %s: %w", L.Sources[i].Name, err)
	}
	L.grids[i] = newGrid(L.Spec, &L.Sources[i], l)
	return nil
}

// MarshalLayouts encodes every source's quadrature layout, so that a resumed run uses
// exactly the nodes the uninterrupted run would have used.
func (L *Likelihood) MarshalLayouts() ([]byte, error) {
	var b bytes.Buffer
	binary.Write(&b, binary.LittleEndian, uint32(len(L.grids)))
	for _, g := range L.grids {
		data, err := g.layout.MarshalBinary()
		if err != nil {
			return nil, err
		}
		binary.Write(&b, binary.LittleEndian, uint32(len(data)))
		b.Write(data)
	}
	return b.Bytes(), nil
}

// UnmarshalLayouts restores layouts saved by MarshalLayouts.
func (L *Likelihood) UnmarshalLayouts(data []byte) error {
	r := bytes.NewReader(data)
	var n uint32
	if err := binary.Read(r, binary.LittleEndian, &n); err != nil || int(n) != len(L.Sources) {
		return fmt.Errorf("model: saved quadratures are for %d sources, the catalog has %d", n, len(L.Sources))
	}
	grids := make([]*grid, n)
	for i := range grids {
		var m uint32
		if err := binary.Read(r, binary.LittleEndian, &m); err != nil || int(m) > r.Len() {
			return errors.New("model: saved quadratures are truncated")
		}
		buf := make([]byte, m)
		r.Read(buf)
		var l quad.Layout
		if err := l.UnmarshalBinary(buf); err != nil {
			return fmt.Errorf("model: saved quadrature of source %s: %w", L.Sources[i].Name, err)
		}
		grids[i] = newGrid(L.Spec, &L.Sources[i], &l)
	}
	L.grids = grids
	return nil
}

// Summary describes the current quadratures (node counts; convergence is known only to
// BuildLayouts).
func (L *Likelihood) Summary() LayoutStats { return L.summarise(nil) }

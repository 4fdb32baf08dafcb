package model

import (
	"math"
	"sort"
)

// PlaneGapCause says why a survey does not see a range of longitudes in the Galactic plane.
type PlaneGapCause int

// The causes of a PlaneGap.
const (
	// GapExcluded: the longitudes lie in one of the selection's ExcludeL ranges (where a range
	// is both excluded and outside the declination band, the exclusion is named).
	GapExcluded PlaneGapCause = iota + 1
	// GapSouth: the directions' declination lies below the band's DecMin.
	GapSouth
	// GapNorth: the directions' declination lies above the band's DecMax.
	GapNorth
)

// PlaneGap is a range of Galactic longitude whose directions in the plane (b = 0) a
// survey does not see, all for one cause.
type PlaneGap struct {
	// From and To bound the range (rad, in [0, 2π]): it runs from From toward increasing
	// longitude to To, through l = 0 when From > To. The whole circle is From = 0, To = 2π.
	From, To float64
	// Cause says why the survey does not see it.
	Cause PlaneGapCause
}

// Width returns the range's extent in longitude (rad, in (0, 2π]).
func (g PlaneGap) Width() float64 {
	w := g.To - g.From
	if w <= 0 {
		w += 2 * math.Pi
	}
	return w
}

// planeGapStep is the spacing (rad) of the longitudes PlaneGaps tries before it refines
// the edges: 0.05°.
const planeGapStep = 0.05 * deg

// planeGapTol is the width (rad) to which PlaneGaps brackets each edge.
const planeGapTol = 1e-12

// PlaneGaps returns the ranges of Galactic longitude whose directions in the plane (b = 0)
// the survey does not see, in order of increasing From, each for one cause; adjacent
// ranges of different causes touch. It is nil when the survey sees the whole plane (and
// for an inactive selection).
//
// The ranges are found by asking Direction (and, for the cause, the band's limits one at a
// time and the excluded longitudes) at every 0.05° of longitude and at the ends of the
// excluded ranges, then bisecting every change to 1e-12 rad. A declination band's gap
// narrower than 0.05° (a limit within a hair of the plane's extreme declination, ±62.87°)
// can be missed; no excluded range is.
func (s *Selection) PlaneGaps() []PlaneGap {
	if !s.hasBand() && len(s.ExcludeL) == 0 {
		return nil
	}
	cause := s.planeCause
	// The longitudes to try: a fine grid and the ends of the excluded ranges.
	n := int(math.Ceil(2 * math.Pi / planeGapStep))
	ls := make([]float64, 0, n+2*len(s.ExcludeL))
	for k := range n {
		ls = append(ls, 2*math.Pi*float64(k)/float64(n))
	}
	for _, r := range s.ExcludeL {
		ls = append(ls, wrapTwoPi(r[0]), wrapTwoPi(r[1]))
	}
	sort.Float64s(ls)

	// Runs of one cause over [0, 2π), each starting at an edge.
	type run struct {
		from  float64
		cause PlaneGapCause
	}
	runs := []run{{0, cause(0)}}
	for k := range ls {
		a := ls[k]
		b := 2 * math.Pi
		if k+1 < len(ls) {
			b = ls[k+1]
		}
		ca := cause(a)
		// Every change of cause in (a, b]: bisect to the first, then continue past it.
		for {
			cb := cause(b)
			if b == 2*math.Pi {
				cb = runs[0].cause // l = 2π is l = 0
			}
			if cb == ca {
				break
			}
			lo, hi := a, b
			for hi-lo > planeGapTol {
				mid := 0.5 * (lo + hi)
				if mid <= lo || mid >= hi {
					break
				}
				if cause(mid) == ca {
					lo = mid
				} else {
					hi = mid
				}
			}
			if hi >= 2*math.Pi {
				break // the change is at l = 0, where the first run starts
			}
			a, ca = hi, cause(hi)
			runs = append(runs, run{hi, ca})
		}
	}
	// Each run ends where the next begins; the last wraps to the first.
	var gaps []PlaneGap
	for k, r := range runs {
		if r.cause == 0 {
			continue
		}
		to := 2 * math.Pi
		if k+1 < len(runs) {
			to = runs[k+1].from
		}
		gaps = append(gaps, PlaneGap{From: r.from, To: to, Cause: r.cause})
	}
	if len(runs) == 1 {
		return gaps // one cause all round: nothing, or the whole circle from 0 to 2π
	}
	// The last run continues through l = 0 into the first when their causes agree.
	if first, last := runs[0], runs[len(runs)-1]; first.cause != 0 && first.cause == last.cause {
		gaps[len(gaps)-1].To = gaps[0].To
		gaps = gaps[1:]
	}
	sort.Slice(gaps, func(i, j int) bool { return gaps[i].From < gaps[j].From })
	return gaps
}

// planeCause returns why the survey does not see Galactic longitude l (rad) in the plane,
// or 0 when it does: Direction decides, the excluded ranges and the band's limits taken one
// at a time name the cause.
func (s *Selection) planeCause(l float64) PlaneGapCause {
	if s.Direction(l, 0) {
		return 0
	}
	if s.excluded(l) {
		return GapExcluded
	}
	south := Selection{DecMin: s.DecMin, DecMax: math.Pi / 2}
	if !south.Direction(l, 0) {
		return GapSouth
	}
	return GapNorth
}

package main

import (
	"errors"
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"

	"github.com/mirabilis-astro/mirabilis/arms"
	"github.com/mirabilis-astro/mirabilis/internal/atomicfile"
	"github.com/mirabilis-astro/mirabilis/mcmc"
	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/fit"
	"github.com/mirabilis-astro/mirabilis/model/param"
	"github.com/mirabilis-astro/mirabilis/model/prior"
	"github.com/mirabilis-astro/mirabilis/plots"
)

// figuresDir is the folder of a run directory that holds the run's figures.
const figuresDir = "figures"

// The figures of a finished run, in the order they are drawn.
var figureMakers = []struct {
	file string
	make func(in *figureInput) (plots.Figure, vg.Length, vg.Length, error)
}{
	{"map.png", mapFigure},
	{"rotation.png", rotationFigure},
	{"pairs.png", globalsTriangle},
	{"pairs-arms.png", armsTriangle},
	{"trace.png", traceFigure},
	{"membership.png", membershipFigure},
}

// writeFigures draws the figures of a finished run into its figures folder and returns
// their paths. A figure that fails does not stop the others; the errors are returned
// together. A figure with nothing to show (no sampled arm parameter, say) is left out.
func writeFigures(out *fit.Outcome) ([]string, error) {
	if out == nil || out.Job == nil || out.Summary == nil {
		return nil, errors.New("figures: the run has no posterior summary to draw")
	}
	in, err := newFigureInput(out)
	if err != nil {
		return nil, fmt.Errorf("figures: %w", err)
	}
	dir := filepath.Join(out.Dir, figuresDir)
	if err := atomicfile.MkdirAll(dir); err != nil {
		return nil, fmt.Errorf("figures: %w", err)
	}
	// The figures are drawn side by side on the worker pool, each into its own slot, and
	// reported in their order.
	threads := 0
	if out.Job.Config != nil {
		threads = out.Job.Config.Sampler.Threads
	}
	paths := make([]string, len(figureMakers))
	errs := make([]error, len(figureMakers))
	model.Parallel(len(figureMakers), threads, func(k int) {
		f := figureMakers[k]
		fig, w, h, err := f.make(in)
		if err != nil {
			errs[k] = fmt.Errorf("%s: %w", f.file, err)
			return
		}
		if fig == nil {
			return
		}
		path := filepath.Join(dir, f.file)
		if err := plots.Save(fig, path, w, h); err != nil {
			errs[k] = err
			return
		}
		paths[k] = path
	})
	return slices.DeleteFunc(paths, func(p string) bool { return p == "" }), errors.Join(errs...)
}

// figureInput is what several figures share: the run, the model at the posterior medians,
// the arms' names in figure order and each source's tie to an arm.
type figureInput struct {
	out    *fit.Outcome
	sum    *fit.Summary
	job    *fit.Job
	median *model.Params
	arms   []plots.Arm
	tied   []int // per source: 0 free, k ≥ 1 tied to arm k
}

func newFigureInput(out *fit.Outcome) (*figureInput, error) {
	in := &figureInput{out: out, sum: out.Summary, job: out.Job}
	if in.job.Spec == nil || in.job.Like == nil {
		return nil, errors.New("the run's model is missing")
	}
	median, err := in.job.Spec.NewParams(in.sum.MedianValues)
	if err != nil {
		return nil, fmt.Errorf("the posterior median model: %w", err)
	}
	in.median = median
	for _, a := range in.job.Spec.Arms {
		in.arms = append(in.arms, plots.Arm{Name: a.Name})
	}
	if len(in.sum.Sources) != len(in.job.Like.Sources) {
		return nil, fmt.Errorf("the summary has %d sources, the catalog %d", len(in.sum.Sources), len(in.job.Like.Sources))
	}
	in.tied = make([]int, len(in.sum.Sources))
	for i := range in.tied {
		in.tied[i] = in.job.Like.Sources[i].Label
	}
	return in, nil
}

// membership returns source i's membership probabilities in the figures' convention
// (field first, then the arms), nil when the summary has none of the right length.
func (in *figureInput) membership(i int) []float64 {
	p := in.sum.Sources[i].Membership
	if len(p) != len(in.arms)+1 {
		return nil
	}
	return p
}

// ---- face-on map ----

// mapFigure draws the Galactic plane at the posterior median parameters: each arm's band
// (centre line ± width), every source at its median distance with its 16–84% distance
// range along the line of sight, coloured by membership, and the peculiar motions of the
// sources whose kinematics are all measured.
func mapFigure(in *figureInput) (plots.Figure, vg.Length, vg.Length, error) {
	d, err := mapData(in)
	if err != nil {
		return nil, 0, 0, err
	}
	fig, err := plots.FaceOnMap(d)
	if err != nil {
		return nil, 0, 0, err
	}
	return fig, 9 * vg.Inch, 9 * vg.Inch, nil
}

// mapData returns the face-on map's content (see mapFigure).
func mapData(in *figureInput) (plots.MapData, error) {
	R0 := in.median.Motion.R0()
	lay := in.median.Layout
	var tracks []plots.ArmTrack
	for k, a := range lay.Arms {
		o, err := a.Outline(R0, lay.WidthSlope, 0)
		if err != nil {
			return plots.MapData{}, err
		}
		tracks = append(tracks, plots.ArmTrack{Arm: in.arms[k], Centre: polars(o.Centre), Inner: polars(o.Inner), Outer: polars(o.Outer)})
	}
	var srcs []plots.MapSource
	var speeds []float64
	rMax := R0
	for i, r := range in.sum.Sources {
		sight := &in.job.Like.Sources[i].Sight
		at := plots.Polar{R: r.R, Beta: r.Beta * math.Pi / 180}
		if !allFinite(at.R, at.Beta) {
			continue
		}
		s := plots.MapSource{Name: r.Name, At: at, Near: at, Far: at, Prob: in.membership(i), TiedArm: in.tied[i]}
		if allFinite(r.DistanceLo, r.DistanceHi) && r.DistanceLo > 0 {
			s.Near = inPlane(sight, R0, r.DistanceLo)
			s.Far = inPlane(sight, R0, r.DistanceHi)
		}
		if r.PeculiarMeasured && allFinite(r.U, r.V) {
			s.Motion = &plots.MapVelocity{U: r.U, V: r.V, W: r.W}
			speeds = append(speeds, math.Hypot(r.U, r.V))
		}
		rMax = max(rMax, s.Far.R, s.At.R)
		srcs = append(srcs, s)
	}
	for _, t := range tracks {
		for _, p := range t.Outer {
			rMax = max(rMax, p.R)
		}
	}
	d := plots.MapData{
		Title:       "Face-on view from the north Galactic pole at the posterior median (rotation clockwise)",
		R0:          R0,
		Arms:        tracks,
		Sources:     srcs,
		MotionScale: motionScale(speeds, rMax),
	}
	sel := &in.job.Spec.Selection
	d.Unseen, d.UnseenLabel = unseenInPlane(sel)
	d.HalfDistance = sel.HalfDistance
	return d, nil
}

// unseenInPlane returns the ranges of longitude the selection leaves unseen in the plane
// (b = 0), touching ranges joined, and the legend's words for them, naming the band's
// limits that cut the plane and the excluded longitudes: "not surveyed (δ < −30°)".
func unseenInPlane(sel *model.Selection) ([]plots.LongitudeRange, string) {
	gaps := sel.PlaneGaps()
	if len(gaps) == 0 {
		return nil, ""
	}
	var out []plots.LongitudeRange
	var south, north, excluded bool
	for _, g := range gaps {
		switch g.Cause {
		case model.GapSouth:
			south = true
		case model.GapNorth:
			north = true
		case model.GapExcluded:
			excluded = true
		}
		if n := len(out); n > 0 && out[n-1].To == g.From {
			out[n-1].To = g.To
			continue
		}
		out = append(out, plots.LongitudeRange{From: g.From, To: g.To})
	}
	// A range ending at 2π continues into one starting at 0.
	if n := len(out); n > 1 && math.Mod(out[n-1].To, 2*math.Pi) == out[0].From {
		out[0].From = out[n-1].From
		out = out[:n-1]
	}
	var parts []string
	if south {
		parts = append(parts, "δ < "+degrees(sel.DecMin))
	}
	if north {
		parts = append(parts, "δ > "+degrees(sel.DecMax))
	}
	if excluded {
		var ls []string
		for _, r := range sel.ExcludeL {
			ls = append(ls, degrees(r[0])+"–"+degrees(r[1]))
		}
		parts = append(parts, "l "+strings.Join(ls, ", "))
	}
	return out, "not surveyed (" + strings.Join(parts, "; ") + ")"
}

// degrees writes an angle given in radians in degrees to at most four significant figures,
// with the typographic minus sign.
func degrees(rad float64) string {
	s := strconv.FormatFloat(rad*180/math.Pi, 'g', 4, 64)
	return strings.Replace(s, "-", "−", 1) + "°"
}

func polars(pts []arms.Point) []plots.Polar {
	out := make([]plots.Polar, len(pts))
	for i, p := range pts {
		out[i] = plots.Polar{R: p.R, Beta: p.Beta}
	}
	return out
}

func inPlane(s *model.Sightline, R0, d float64) plots.Polar {
	R, c, sn := s.InPlane(R0, d)
	return plots.Polar{R: R, Beta: math.Atan2(sn, c)}
}

// motionScale returns the length of the map's motion arrows in kpc per km/s: the 80th
// percentile of the sources' in-plane peculiar speeds draws 5% of the map's radius rMax
// (kpc); 0 (no arrows) when there are no speeds. The map's reference arrow gives the scale.
func motionScale(speeds []float64, rMax float64) float64 {
	if len(speeds) == 0 || !(rMax > 0) {
		return 0
	}
	v := mcmc.Quantile(0.8, speeds, nil)
	if !(v > 0) || math.IsInf(v, 0) {
		return 0
	}
	return 0.05 * rMax / v
}

// ---- rotation curve ----

// curveDraws is the number of posterior draws the rotation-curve figure is computed from.
const curveDraws = 400

// rotationFigure draws the rotation curve: the posterior median and its 68% and 95% bands,
// (R0, Θ0) with their 68% half-widths, and every source with measured proper motion and
// velocity at the circular speed it moves with (see fit.SourceSpeed), coloured by
// membership.
func rotationFigure(in *figureInput) (plots.Figure, vg.Length, vg.Length, error) {
	r, err := fit.Rotation(in.job, in.sum, in.chain(), curveDraws)
	if err != nil {
		return nil, 0, 0, err
	}
	srcs := make([]plots.CurveSource, len(r.Sources))
	for k, c := range r.Sources {
		srcs[k] = plots.CurveSource{Name: in.sum.Sources[c.Index].Name, R: c.R, RLo: c.RLo, RHi: c.RHi,
			Theta: c.Theta, ThetaLo: c.ThetaLo, ThetaHi: c.ThetaHi, Prob: in.membership(c.Index), TiedArm: in.tied[c.Index]}
	}
	b := r.Bands
	d := plots.CurveData{
		Title:     "Rotation curve: posterior median with 68% and 95% bands",
		R:         b.R,
		Median:    b.Median,
		Lo68:      b.Lo68,
		Hi68:      b.Hi68,
		Lo95:      b.Lo95,
		Hi95:      b.Hi95,
		R0:        r.R0,
		R0Err:     r.R0Err,
		Theta0:    r.Theta0,
		Theta0Err: r.Theta0Err,
		RCore:     r.RCore,
		RInner:    r.RInner,
		Arms:      in.arms,
		Sources:   srcs,
	}
	fig, err := plots.RotationCurvePlot(d)
	if err != nil {
		return nil, 0, 0, err
	}
	return fig, 9 * vg.Inch, 6 * vg.Inch, nil
}

// ---- triangle plots and traces ----

// maxArmTriangle is the most arm parameters the arm triangle shows in full; beyond it the
// triangle keeps only each arm's reference radius and pitch angle.
const maxArmTriangle = 16

// chainColumns sorts the sampled coordinates of a run: the global parameters (kinematics,
// dispersion, width slope), the arm parameters, and the fractions' stick-breaking reals.
func chainColumns(names []string, armNames []string) (globals, armParams, sticks []int) {
	for j, n := range names {
		switch info, _ := param.Lookup(n, armNames); {
		case param.IsStickName(n):
			sticks = append(sticks, j)
		case info.Kind == param.Arm:
			armParams = append(armParams, j)
		default:
			globals = append(globals, j)
		}
	}
	return globals, armParams, sticks
}

// paramLabel returns a parameter's name with its unit, for axis labels, in a model with
// the given arms.
func paramLabel(name string, armNames []string) string { return param.Label(name, armNames) }

// samplesAfterBurn returns the chain's draws after the summary's burn-in, keeping the
// columns cols.
func samplesAfterBurn(c *mcmc.Chain, burn int, cols []int) [][]float64 {
	var out [][]float64
	var x []float64
	for t := max(burn, 0); t < c.Len(); t++ {
		for k := range c.Walkers() {
			x = c.Position(t, k, x)
			row := make([]float64, len(cols))
			for k, j := range cols {
				row[k] = x[j]
			}
			out = append(out, row)
		}
	}
	return out
}

// triangleSide is the side of a triangle plot with the given axis names: each tile is at
// least 1.2 in wide and wide enough for its name at 11 pt (the size the triangle plot
// writes names in on tiles of that size), plus room for the tick labels and the title.
func triangleSide(names []string) vg.Length {
	face := font.DefaultCache.Lookup(font.Font{Typeface: "Liberation", Variant: "Sans"}, 11)
	tile := 1.2 * vg.Inch
	for _, n := range names {
		tile = max(tile, face.Width(n)+12)
	}
	return min(32*vg.Inch, max(5*vg.Inch, vg.Length(len(names))*tile+vg.Inch))
}

func (in *figureInput) chain() *mcmc.Chain {
	if in.out.Result == nil || in.out.Result.Chain == nil || in.out.Result.Chain.Len() == 0 {
		return nil
	}
	return in.out.Result.Chain
}

// triangle draws the triangle plot of chain columns cols after burn-in, naming each axis
// with label.
func (in *figureInput) triangle(title string, cols []int, label func(string) string) (plots.Figure, vg.Length, vg.Length, error) {
	c := in.chain()
	if c == nil || len(cols) == 0 {
		return nil, 0, 0, nil
	}
	names := make([]string, len(cols))
	for k, j := range cols {
		names[k] = label(c.Names[j])
	}
	fig, err := plots.NewPairsPlot(plots.PairsData{Title: title, Names: names, Samples: samplesAfterBurn(c, in.sum.Burn, cols)})
	if err != nil {
		return nil, 0, 0, err
	}
	side := triangleSide(names)
	return fig, side, side, nil
}

// globalsTriangle draws the triangle plot of the sampled global parameters.
func globalsTriangle(in *figureInput) (plots.Figure, vg.Length, vg.Length, error) {
	c := in.chain()
	if c == nil {
		return nil, 0, 0, nil
	}
	globals, _, _ := chainColumns(c.Names, armNames(in.arms))
	arms := armNames(in.arms)
	return in.triangle("Global parameters after burn-in", globals, func(n string) string { return paramLabel(n, arms) })
}

// armsTriangle draws the triangle plot of the sampled arm parameters, or of their reference
// radii and pitch angles alone when there are more than maxArmTriangle.
func armsTriangle(in *figureInput) (plots.Figure, vg.Length, vg.Length, error) {
	c := in.chain()
	if c == nil {
		return nil, 0, 0, nil
	}
	full, cols := armColumnsToShow(c.Names, armNames(in.arms))
	title := "Arm parameters after burn-in (Rref and width in kpc, pitch and kink in degrees)"
	if !full {
		title = "Arm reference radii (kpc) and pitch angles (degrees) after burn-in"
	}
	return in.triangle(title, cols, func(n string) string { return n })
}

// armColumnsToShow returns the arm parameters of the arm triangle: all of them up to
// maxArmTriangle, else the reference radii and (first) pitch angles. full reports whether
// all are shown.
func armColumnsToShow(names, armNames []string) (full bool, cols []int) {
	_, all, _ := chainColumns(names, armNames)
	if len(all) <= maxArmTriangle {
		return true, all
	}
	for _, j := range all {
		info, _ := param.Lookup(names[j], armNames)
		if names[j] == info.Arm+param.SuffixRref || names[j] == info.Arm+param.SuffixPitch {
			cols = append(cols, j)
		}
	}
	return false, cols
}

func armNames(a []plots.Arm) []string {
	out := make([]string, len(a))
	for i, x := range a {
		out[i] = x.Name
	}
	return out
}

// traceFigure draws every walker's trace of each sampled parameter, the burn-in shaded; the
// fractions' stick-breaking reals are shown as the membership fractions they stand for.
func traceFigure(in *figureInput) (plots.Figure, vg.Length, vg.Length, error) {
	c := in.chain()
	if c == nil {
		return nil, 0, 0, nil
	}
	_, _, sticks := chainColumns(c.Names, armNames(in.arms))
	var keep []int
	var names []string
	for j, n := range c.Names {
		if !slices.Contains(sticks, j) {
			keep = append(keep, j)
			names = append(names, n)
		}
	}
	nf := 0
	if len(sticks) > 0 {
		nf = len(sticks) + 1
		for k := range nf {
			names = append(names, fractionLabel(in.sum.Components, k))
		}
	}
	trace := make([][][]float64, c.Len())
	reals := make([]float64, len(sticks))
	for t := range trace {
		trace[t] = make([][]float64, c.Walkers())
		for w := range trace[t] {
			x := c.Position(t, w, nil)
			row := make([]float64, 0, len(names))
			for _, j := range keep {
				row = append(row, x[j])
			}
			if nf > 0 {
				for k, j := range sticks {
					reals[k] = x[j]
				}
				f, _ := prior.FractionsFromReals(nil, reals)
				row = append(row, f...)
			}
			trace[t][w] = row
		}
	}
	cols := 1
	switch n := len(names); {
	case n > 30:
		cols = 3
	case n > 8:
		cols = 2
	}
	rows := (len(names) + cols - 1) / cols
	fig, err := plots.NewTracePlot(plots.TraceData{
		Title:   fmt.Sprintf("Walker traces: %d walkers, burn-in (%d steps) shaded", c.Walkers(), in.sum.Burn),
		Names:   names,
		Chain:   trace,
		BurnIn:  min(in.sum.Burn, c.Len()),
		Columns: cols,
	})
	if err != nil {
		return nil, 0, 0, err
	}
	w := []vg.Length{8, 13, 17}[cols-1] * vg.Inch
	h := vg.Length(max(4, 1.3*float64(rows)+0.9)) * vg.Inch
	return fig, w, h, nil
}

// fractionLabel names the membership fraction of component k.
func fractionLabel(components []string, k int) string {
	if k < len(components) {
		return param.FractionName(components[k])
	}
	return param.FractionName(strconv.Itoa(k))
}

// ---- membership ----

// membershipFigure draws each source's membership probabilities as a stacked bar.
func membershipFigure(in *figureInput) (plots.Figure, vg.Length, vg.Length, error) {
	var rows []plots.MemberSource
	for i, r := range in.sum.Sources {
		rows = append(rows, plots.MemberSource{Name: r.Name, Prob: in.membership(i), TiedArm: in.tied[i]})
	}
	if len(rows) == 0 {
		return nil, 0, 0, nil
	}
	fig, err := plots.NewMembershipPlot(plots.MembershipData{Title: "Arm membership of each source", Arms: in.arms, Sources: rows})
	if err != nil {
		return nil, 0, 0, err
	}
	if fig.Compact() {
		return fig, 10 * vg.Inch, 5 * vg.Inch, nil
	}
	// Rows of about 11 pt, up to 14 in high, then more columns of 4.5 in each.
	const rowPt, overheadIn, maxHeightIn = 11.0, 1.6, 14.0
	h := min(maxHeightIn, max(4, overheadIn+float64(len(rows))*rowPt/72))
	perCol := max(1, int((h-overheadIn)*72/8)) // the chart's least row height is 8 pt
	cols := (len(rows) + perCol - 1) / perCol
	w := max(7, 4.5*float64(cols))
	return fig, vg.Length(w) * vg.Inch, vg.Length(h) * vg.Inch, nil
}

// allFinite reports whether every value is a finite number.
func allFinite(xs ...float64) bool {
	for _, x := range xs {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}

package plots

import (
	"fmt"
	"image/color"
	"math"
	"sort"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// CurveSource is one source on the rotation-curve figure: its radius and the
// circular speed its motion implies, each with an interval.
type CurveSource struct {
	// Name identifies the source (not drawn).
	Name string
	// R is the source's Galactocentric radius, kpc; RLo and RHi bound its
	// interval (for instance the 16th and 84th percentiles). RLo = RHi draws
	// no horizontal bar.
	R, RLo, RHi float64
	// Theta is the implied circular speed, km/s, with interval ThetaLo to
	// ThetaHi (ThetaLo = ThetaHi draws no vertical bar).
	Theta, ThetaLo, ThetaHi float64
	// Prob holds the membership probabilities (Prob[0] the field, Prob[k]
	// arm k); it picks the colour.
	Prob []float64
	// TiedArm is k ≥ 1 when the catalog label ties the source to arm k.
	TiedArm int
}

// CurveData is the input of RotationCurvePlot.
type CurveData struct {
	// Title heads the figure ("" for "Rotation curve").
	Title string
	// R are the radii at which the curve is given, kpc, ascending.
	R []float64
	// Median is the posterior median of Θ(R), km/s, at each R.
	Median []float64
	// Lo68, Hi68 bound the 68% credible band and Lo95, Hi95 the 95% band,
	// km/s at each R; either pair may be nil.
	Lo68, Hi68 []float64
	Lo95, Hi95 []float64
	// R0 and Theta0 mark the Sun's point on the curve (kpc, km/s); R0 ≤ 0
	// leaves it out. R0Err and Theta0Err, when positive, draw its 1σ bars.
	R0, Theta0       float64
	R0Err, Theta0Err float64
	// RCore is the radius inside which rotation is solid-body and RInner the
	// radius inside which non-circular motions dominate, kpc; both are
	// shaded lightly (0 leaves one out).
	RCore, RInner float64
	// Arms name and colour the arms (arm k is Arms[k−1]).
	Arms []Arm
	// Sources are the sources' implied circular speeds.
	Sources []CurveSource
	// KeyPos is the corner of the legend (KeyDefault: bottom right).
	KeyPos KeyPos
	// FontSize is the base text size (0: 11 pt).
	FontSize vg.Length
}

// Band is a plotter that fills the region between two curves Lo(X) and
// Hi(X). A non-finite value breaks the band.
type Band struct {
	X, Lo, Hi []float64
	// Color is the fill colour (with its alpha).
	Color color.Color
}

// DataRange implements plot.DataRanger over the finite points.
func (b Band) DataRange() (xmin, xmax, ymin, ymax float64) {
	var r rangeXY
	for i := range min(len(b.X), len(b.Lo), len(b.Hi)) {
		if finite(b.X[i], b.Lo[i], b.Hi[i]) {
			r.add(b.X[i], b.Lo[i])
			r.add(b.X[i], b.Hi[i])
		}
	}
	return r.get()
}

// Plot implements plot.Plotter.
func (b Band) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	n := min(len(b.X), len(b.Lo), len(b.Hi))
	for _, run := range finiteRuns(n, func(i int) bool { return finite(b.X[i], b.Lo[i], b.Hi[i]) }) {
		var poly []vg.Point
		for i := run[0]; i < run[1]; i++ {
			poly = append(poly, vg.Point{X: trX(b.X[i]), Y: trY(b.Lo[i])})
		}
		for i := run[1] - 1; i >= run[0]; i-- {
			poly = append(poly, vg.Point{X: trX(b.X[i]), Y: trY(b.Hi[i])})
		}
		if clipped := c.ClipPolygonXY(poly); len(clipped) > 2 {
			c.FillPolygon(b.Color, clipped)
		}
	}
}

// Thumbnail implements plot.Thumbnailer.
func (b Band) Thumbnail(c *draw.Canvas) { bandThumb(b.Color, 0.8).Thumbnail(c) }

// Curve is a plotter for a polyline through (X[i], Y[i]); a non-finite
// value breaks the line.
type Curve struct {
	X, Y []float64
	draw.LineStyle
}

// DataRange implements plot.DataRanger over the finite points.
func (l Curve) DataRange() (xmin, xmax, ymin, ymax float64) {
	var r rangeXY
	for i := range min(len(l.X), len(l.Y)) {
		r.add(l.X[i], l.Y[i])
	}
	return r.get()
}

// Plot implements plot.Plotter.
func (l Curve) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	n := min(len(l.X), len(l.Y))
	for _, run := range finiteRuns(n, func(i int) bool { return finite(l.X[i], l.Y[i]) }) {
		pts := make([]vg.Point, 0, run[1]-run[0])
		for i := run[0]; i < run[1]; i++ {
			pts = append(pts, vg.Point{X: trX(l.X[i]), Y: trY(l.Y[i])})
		}
		c.StrokeLines(l.LineStyle, c.ClipLinesXY(pts)...)
	}
}

// Thumbnail implements plot.Thumbnailer.
func (l Curve) Thumbnail(c *draw.Canvas) { lineThumb(l.LineStyle).Thumbnail(c) }

// finiteRuns returns the half-open index ranges [a, b) of the longest runs
// of consecutive indices in [0, n) for which ok holds.
func finiteRuns(n int, ok func(i int) bool) [][2]int {
	var runs [][2]int
	start := -1
	for i := 0; i <= n; i++ {
		if i < n && ok(i) {
			if start < 0 {
				start = i
			}
			continue
		}
		if start >= 0 {
			runs = append(runs, [2]int{start, i})
			start = -1
		}
	}
	return runs
}

// RadialZones is a plotter shading the regions R < RCore and R < RInner
// across the full height of the data area, each with a small label at the
// top ("core" and "bar region").
type RadialZones struct {
	// RCore and RInner are the zones' outer radii, kpc (≤ 0 for none).
	RCore, RInner float64
	// FontSize is the labels' size (0: 8 pt).
	FontSize vg.Length
}

// DataRange implements plot.DataRanger: x from 0 to the larger radius.
func (z RadialZones) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmax = math.Max(z.RCore, z.RInner)
	if !(xmax > 0) || math.IsInf(xmax, 0) {
		return math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	}
	return 0, xmax, math.Inf(1), math.Inf(-1)
}

// Plot implements plot.Plotter.
func (z RadialZones) Plot(c draw.Canvas, p *plot.Plot) {
	trX, _ := p.Transforms(&c)
	fs := z.FontSize
	if fs <= 0 {
		fs = 8
	}
	type zone struct {
		r     float64
		alpha float64
		label string
	}
	zones := []zone{{z.RInner, 0.05, "bar region"}, {z.RCore, 0.07, "core"}}
	sty := textStyle(fs, color.RGBA{R: 0x60, G: 0x60, B: 0x60, A: 0xFF}, draw.XRight, draw.YTop)
	for _, zn := range zones {
		if !(zn.r > 0) || math.IsInf(zn.r, 0) {
			continue
		}
		x1 := trX(zn.r)
		x0 := max(trX(0), c.Min.X)
		if x1 <= c.Min.X {
			continue
		}
		x1 = min(x1, c.Max.X)
		rect := vg.Rectangle{Min: vg.Point{X: x0, Y: c.Min.Y}, Max: vg.Point{X: x1, Y: c.Max.Y}}
		c.SetColor(withAlpha(color.Black, zn.alpha))
		c.Fill(rect.Path())
		if sty.Width(zn.label)+fs*0.6 < x1-x0 {
			c.FillText(sty, vg.Point{X: x1 - fs*0.3, Y: c.Max.Y - fs*0.3}, zn.label)
		}
	}
}

// CurvePoints is a plotter for sources' implied circular speeds: a marker in
// the colour of each source's most probable component (FieldColor for the
// field), more opaque the more probable, with bars for the intervals in R
// and Θ. Sources tied to an arm by label are outlined diamonds.
type CurvePoints struct {
	// Sources are the points.
	Sources []CurveSource
	// Colors are the arms' colours: Colors[k−1] for arm k.
	Colors []color.Color
	// Radius is the markers' radius (0: 2.6 pt).
	Radius vg.Length
}

// DataRange implements plot.DataRanger over the points and their bars.
func (s CurvePoints) DataRange() (xmin, xmax, ymin, ymax float64) {
	var r rangeXY
	for _, src := range s.Sources {
		if !finite(src.R, src.Theta) {
			continue
		}
		r.add(src.R, src.Theta)
		if finite(src.RLo, src.RHi) && src.RLo != src.RHi {
			r.add(src.RLo, src.Theta)
			r.add(src.RHi, src.Theta)
		}
		if finite(src.ThetaLo, src.ThetaHi) && src.ThetaLo != src.ThetaHi {
			r.add(src.R, src.ThetaLo)
			r.add(src.R, src.ThetaHi)
		}
	}
	return r.get()
}

// Plot implements plot.Plotter.
func (s CurvePoints) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	rad := s.Radius
	if rad <= 0 {
		rad = 2.6
	}
	order := make([]int, 0, len(s.Sources))
	for i, src := range s.Sources {
		if finite(src.R, src.Theta) {
			order = append(order, i)
		}
	}
	prob := func(i int) float64 {
		_, p := MostProbable(s.Sources[i].Prob, s.Sources[i].TiedArm)
		return p
	}
	sort.SliceStable(order, func(a, b int) bool { return prob(order[a]) < prob(order[b]) })
	for _, i := range order {
		src := s.Sources[i]
		k, pr := MostProbable(src.Prob, src.TiedArm)
		col := componentColor(k, s.Colors)
		bar := draw.LineStyle{Color: withAlpha(col, 0.35+0.45*pr), Width: 0.8}
		x, y := trX(src.R), trY(src.Theta)
		if finite(src.RLo, src.RHi) && src.RLo != src.RHi {
			c.StrokeLines(bar, c.ClipLinesXY([]vg.Point{{X: trX(src.RLo), Y: y}, {X: trX(src.RHi), Y: y}})...)
		}
		if finite(src.ThetaLo, src.ThetaHi) && src.ThetaLo != src.ThetaHi {
			c.StrokeLines(bar, c.ClipLinesXY([]vg.Point{{X: x, Y: trY(src.ThetaLo)}, {X: x, Y: trY(src.ThetaHi)}})...)
		}
	}
	for _, i := range order {
		src := s.Sources[i]
		pt := vg.Point{X: trX(src.R), Y: trY(src.Theta)}
		if !c.Contains(pt) {
			continue
		}
		k, pr := MostProbable(src.Prob, src.TiedArm)
		col := componentColor(k, s.Colors)
		if src.TiedArm >= 1 {
			tiedMark(c, pt, rad, col)
		} else {
			freeMark(c, pt, rad, col, pr)
		}
	}
}

// SunPoint is a plotter marking (R0, Θ0) on the rotation curve, with
// optional 1σ bars.
type SunPoint struct {
	R0, Theta0       float64
	R0Err, Theta0Err float64
	// Size is the symbol's radius (0: 4.5 pt).
	Size vg.Length
}

// DataRange implements plot.DataRanger over the point and its bars.
func (s SunPoint) DataRange() (xmin, xmax, ymin, ymax float64) {
	var r rangeXY
	if !finite(s.R0, s.Theta0) || !(s.R0 > 0) {
		return r.get()
	}
	r.add(s.R0, s.Theta0)
	if s.R0Err > 0 {
		r.add(s.R0-s.R0Err, s.Theta0)
		r.add(s.R0+s.R0Err, s.Theta0)
	}
	if s.Theta0Err > 0 {
		r.add(s.R0, s.Theta0-s.Theta0Err)
		r.add(s.R0, s.Theta0+s.Theta0Err)
	}
	return r.get()
}

// Plot implements plot.Plotter.
func (s SunPoint) Plot(c draw.Canvas, p *plot.Plot) {
	if !finite(s.R0, s.Theta0) || !(s.R0 > 0) {
		return
	}
	trX, trY := p.Transforms(&c)
	size := s.Size
	if size <= 0 {
		size = 4.5
	}
	pt := vg.Point{X: trX(s.R0), Y: trY(s.Theta0)}
	bar := draw.LineStyle{Color: inkColor, Width: 1.1}
	if s.R0Err > 0 && finite(s.R0Err) {
		c.StrokeLines(bar, c.ClipLinesXY([]vg.Point{{X: trX(s.R0 - s.R0Err), Y: pt.Y}, {X: trX(s.R0 + s.R0Err), Y: pt.Y}})...)
	}
	if s.Theta0Err > 0 && finite(s.Theta0Err) {
		c.StrokeLines(bar, c.ClipLinesXY([]vg.Point{{X: pt.X, Y: trY(s.Theta0 - s.Theta0Err)}, {X: pt.X, Y: trY(s.Theta0 + s.Theta0Err)}})...)
	}
	if c.Contains(pt) {
		sunMark(c, pt, size)
	}
}

// thetaRange returns the range of Θ the figure shows, km/s: the sources' speeds and their
// bars, the Sun's point, and the curve and its bands at radii outside the core (all radii
// when none is). It is empty (lo > hi) when there is nothing finite.
func (d CurveData) thetaRange() (lo, hi float64) {
	var r rangeXY
	_, _, y0, y1 := CurvePoints{Sources: d.Sources}.DataRange()
	r.add(0, y0)
	r.add(0, y1)
	_, _, y0, y1 = SunPoint{R0: d.R0, Theta0: d.Theta0, R0Err: d.R0Err, Theta0Err: d.Theta0Err}.DataRange()
	r.add(0, y0)
	r.add(0, y1)
	outside := false
	for _, x := range d.R {
		outside = outside || x >= d.RCore
	}
	for i, x := range d.R {
		if outside && x < d.RCore {
			continue
		}
		for _, ys := range [][]float64{d.Median, d.Lo68, d.Hi68, d.Lo95, d.Hi95} {
			if ys != nil {
				r.add(x, ys[i])
			}
		}
	}
	_, _, lo, hi = r.get()
	return lo, hi
}

// RotationCurvePlot draws the rotation curve Θ(R): the posterior median with
// its 68% and 95% credible bands, the Sun's point (R0, Θ0), each source's
// implied circular speed with its intervals coloured by its most probable
// arm, and the core and inner regions shaded lightly. R is in kpc from 0,
// Θ in km/s over the range of the data, the solid-body rise inside the core
// running in from below. Save the plot with the package function Save.
//
// It returns an error when the curve's arrays differ in length from R, or a
// source's membership does not match the arms.
func RotationCurvePlot(d CurveData) (*plot.Plot, error) {
	n := len(d.R)
	for _, a := range []struct {
		name string
		v    []float64
	}{{"Median", d.Median}, {"Lo68", d.Lo68}, {"Hi68", d.Hi68}, {"Lo95", d.Lo95}, {"Hi95", d.Hi95}} {
		if a.v != nil && len(a.v) != n {
			return nil, fmt.Errorf("plots: rotation curve: %s has %d values for %d radii", a.name, len(a.v), n)
		}
	}
	if (d.Lo68 == nil) != (d.Hi68 == nil) || (d.Lo95 == nil) != (d.Hi95 == nil) {
		return nil, fmt.Errorf("plots: rotation curve: a credible band needs both its lower and upper edge")
	}
	if err := checkSources(len(d.Arms), len(d.Sources), func(i int) (string, []float64, int) {
		return d.Sources[i].Name, d.Sources[i].Prob, d.Sources[i].TiedArm
	}); err != nil {
		return nil, fmt.Errorf("plots: rotation curve: %w", err)
	}
	base := d.FontSize
	if base <= 0 {
		base = 11
	}
	p := newPlot(base)
	p.Title.Text = d.Title
	if p.Title.Text == "" {
		p.Title.Text = "Rotation curve"
	}
	p.X.Label.Text = "R (kpc)"
	p.Y.Label.Text = "Θ (km/s)"
	cols := armColors(d.Arms)
	curveCol := inkColor

	zones := RadialZones{RCore: d.RCore, RInner: d.RInner, FontSize: base * 0.72}
	p.Add(zones)
	key := &Key{Pos: d.KeyPos, FontSize: base * 0.8}
	if d.KeyPos == KeyDefault {
		key.Pos = KeyBottomRight
	}
	var band95, band68 Band
	if d.Lo95 != nil {
		band95 = Band{X: d.R, Lo: d.Lo95, Hi: d.Hi95, Color: withAlpha(color.RGBA{R: 0x55, G: 0x55, B: 0x55, A: 0xFF}, 0.14)}
		p.Add(band95)
	}
	if d.Lo68 != nil {
		band68 = Band{X: d.R, Lo: d.Lo68, Hi: d.Hi68, Color: withAlpha(color.RGBA{R: 0x55, G: 0x55, B: 0x55, A: 0xFF}, 0.24)}
		p.Add(band68)
	}
	med := Curve{X: d.R, Y: d.Median, LineStyle: draw.LineStyle{Color: curveCol, Width: 1.6}}
	if d.Median != nil {
		p.Add(med)
		key.Add("posterior median", med)
	}
	if d.Lo68 != nil {
		key.Add("68% credible", band68)
	}
	if d.Lo95 != nil {
		key.Add("95% credible", band95)
	}
	pts := CurvePoints{Sources: d.Sources, Colors: cols}
	p.Add(pts)
	sun := SunPoint{R0: d.R0, Theta0: d.Theta0, R0Err: d.R0Err, Theta0Err: d.Theta0Err}
	if d.R0 > 0 && finite(d.R0, d.Theta0) {
		p.Add(sun)
		key.Add("(R0, Θ0)", markThumb(func(c draw.Canvas, pt vg.Point) { sunMark(c, pt, 4.5) }))
	}

	// Arms present among the sources, then the field and the tied symbol.
	present := make([]bool, len(d.Arms)+1)
	anyTied := false
	for _, s := range d.Sources {
		k, _ := MostProbable(s.Prob, s.TiedArm)
		present[k] = true
		anyTied = anyTied || s.TiedArm >= 1
	}
	rad := vg.Length(2.6)
	for k := 1; k <= len(d.Arms); k++ {
		if present[k] {
			col := cols[k-1]
			key.Add(d.Arms[k-1].Name, markThumb(func(c draw.Canvas, pt vg.Point) { freeMark(c, pt, rad, col, 1) }))
		}
	}
	if present[0] && len(d.Sources) > 0 {
		key.Add("field", markThumb(func(c draw.Canvas, pt vg.Point) { freeMark(c, pt, rad, FieldColor, 1) }))
	}
	if anyTied {
		key.Add("tied by catalog label", markThumb(func(c draw.Canvas, pt vg.Point) { tiedMark(c, pt, rad, ArmColor(0)) }))
	}
	p.Add(key)

	// Axes: R from 0; Θ spanning the data, padded a little: the sources with their
	// bars, the Sun's point, and the curve and its bands outside the solid-body core,
	// whose rise from zero would otherwise take most of the height.
	p.X.Min = 0
	if y0, y1 := d.thetaRange(); y1 > y0 {
		pad := 0.06 * (y1 - y0)
		p.Y.Min, p.Y.Max = y0-pad, y1+pad
	} else if !(p.Y.Max > p.Y.Min) {
		p.Y.Min, p.Y.Max = 0, 300
	} else {
		pad := 0.06 * (p.Y.Max - p.Y.Min)
		p.Y.Min -= pad
		p.Y.Max += pad
	}
	if !(p.X.Max > 0) {
		p.X.Max = 1
	}
	p.X.Max *= 1.02
	p.X.Padding, p.Y.Padding = 0, 0
	return p, nil
}

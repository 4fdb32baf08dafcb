package plots

import (
	"fmt"
	"image/color"
	"math"
	"sort"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Polar is a point in the Galactic plane in Galactocentric cylindrical
// coordinates.
type Polar struct {
	// R is the distance from the Galactic centre, kpc.
	R float64
	// Beta is the Galactocentric azimuth β, radians: 0 at the Sun and
	// increasing in the direction of Galactic rotation.
	Beta float64
}

// XY returns the face-on map coordinates of p, in kpc, as seen from the
// north Galactic pole with the Galactic centre at the origin and the Sun at
// (0, −R0):
//
//	x = −R sin β,  y = −R cos β.
//
// Derivation: in the heliocentric frame (x_h toward the centre, y_h toward
// l = 90°, z_h toward the north Galactic pole, right-handed) a point has
// R0 − x_h = R cos β and y_h = R sin β. Seen from the pole, with x_h pointing
// up the page, the right-handed y_h points to the left, so the map has
// x = −y_h and y = x_h − R0. The Sun moves along +y_h (l = 90°), i.e. to the
// left at the bottom of the map: clockwise about the centre, as the Galaxy
// turns when seen from the north.
func (p Polar) XY() (x, y float64) {
	s, c := math.Sincos(p.Beta)
	return -p.R * s, -p.R * c
}

// finite reports whether p has finite coordinates.
func (p Polar) finite() bool { return finite(p.R, p.Beta) }

// inwardUnit and rotationUnit are the map-plane unit vectors at azimuth β
// toward the Galactic centre and along Galactic rotation.
func inwardUnit(beta float64) (x, y float64) {
	s, c := math.Sincos(beta)
	return s, c
}

func rotationUnit(beta float64) (x, y float64) {
	s, c := math.Sincos(beta)
	return -c, s
}

// MapVelocity is a source's peculiar motion relative to circular rotation
// at its position, km/s.
type MapVelocity struct {
	// U is toward the Galactic centre, V along Galactic rotation, W toward
	// the north Galactic pole (W is not drawn on the face-on map).
	U, V, W float64
}

// MapSource is one source on the face-on map.
type MapSource struct {
	// Name identifies the source (not drawn on the map).
	Name string
	// At is the source's position at its median distance.
	At Polar
	// Near and Far end the segment along the line of sight drawn for the
	// distance uncertainty, usually the 16th and 84th percentiles of the
	// distance posterior. Equal values draw no segment.
	Near, Far Polar
	// Prob holds the membership probabilities: Prob[0] the field, Prob[k]
	// arm k. It may be nil (the source is drawn as field).
	Prob []float64
	// TiedArm is k ≥ 1 when the catalog label ties the source to arm k,
	// 0 when the source is free.
	TiedArm int
	// Motion is the peculiar motion drawn as an arrow; nil for none.
	Motion *MapVelocity
}

// ArmTrack is an arm's trace on the face-on map.
type ArmTrack struct {
	Arm
	// Centre samples the arm's centre line in order of azimuth.
	Centre []Polar
	// Inner and Outer sample the band's edges (for instance the centre line
	// ± one width), each in order of azimuth; either may be empty for no
	// band.
	Inner, Outer []Polar
	// LabelAt chooses the end of the centre line that carries the name
	// (default LabelOuterEnd).
	LabelAt LabelPlace
	// CentreLo and CentreHi, when given, bound the posterior spread of the
	// centre line (for instance its 16th and 84th percentiles of radius over
	// posterior draws at each azimuth), drawn as a deeper, narrower band than
	// the width's.
	CentreLo, CentreHi []Polar
}

// LabelPlace chooses where an arm's name is written.
type LabelPlace int

// The places for an arm's name.
const (
	// LabelOuterEnd writes the name beyond the end of the centre line
	// farther from the Galactic centre.
	LabelOuterEnd LabelPlace = iota
	// LabelFirst writes it beyond the first sample of the centre line.
	LabelFirst
	// LabelLast writes it beyond the last sample.
	LabelLast
	// LabelNone writes no name.
	LabelNone
)

// GalaxyGrid is a plotter for a light polar grid of the Galactic plane:
// circles of constant R and radial spokes of constant β.
type GalaxyGrid struct {
	// RMax is the radius of the outermost circle, kpc.
	RMax float64
	// Step is the spacing of the circles, kpc (0: 2 kpc when RMax ≤ 12,
	// otherwise 4 kpc).
	Step float64
	// Spokes is the number of spokes, evenly spaced in β from β = 0
	// (0: 12, one every 30°; negative: none).
	Spokes int
	// Labels writes each circle's radius and each spoke's β (degrees).
	Labels bool
	// Line is the grid's line style (zero: light grey, 0.5 pt).
	Line draw.LineStyle
	// FontSize is the labels' size (0: 7 pt).
	FontSize vg.Length

	// keepClear returns the rectangles of the data canvas the labels stay out of,
	// such as the legend's box; it may be nil.
	keepClear func(c draw.Canvas) []vg.Rectangle
}

func (g GalaxyGrid) step() float64 {
	switch {
	case g.Step > 0:
		return g.Step
	case g.RMax <= 12:
		return 2
	default:
		return 4
	}
}

func (g GalaxyGrid) spokes() int {
	if g.Spokes == 0 {
		return 12
	}
	return max(g.Spokes, 0)
}

func (g GalaxyGrid) line() draw.LineStyle {
	if g.Line.Width > 0 {
		return g.Line
	}
	return draw.LineStyle{Color: color.RGBA{R: 0xD4, G: 0xD4, B: 0xD4, A: 0xFF}, Width: 0.5}
}

func (g GalaxyGrid) fontSize() vg.Length {
	if g.FontSize > 0 {
		return g.FontSize
	}
	return 7
}

// DataRange implements plot.DataRanger: the square around the outermost
// circle.
func (g GalaxyGrid) DataRange() (xmin, xmax, ymin, ymax float64) {
	if !(g.RMax > 0) || math.IsInf(g.RMax, 0) {
		return math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	}
	return -g.RMax, g.RMax, -g.RMax, g.RMax
}

// Plot implements plot.Plotter.
func (g GalaxyGrid) Plot(c draw.Canvas, p *plot.Plot) {
	if !(g.RMax > 0) || math.IsInf(g.RMax, 0) {
		return
	}
	trX, trY := p.Transforms(&c)
	ls := g.line()
	step := g.step()
	nc := int(math.Floor(g.RMax/step + 1e-9))
	const segs = 240
	for i := 1; i <= nc; i++ {
		r := float64(i) * step
		pts := make([]vg.Point, segs+1)
		for j := range pts {
			x, y := Polar{R: r, Beta: 2 * math.Pi * float64(j) / segs}.XY()
			pts[j] = vg.Point{X: trX(x), Y: trY(y)}
		}
		c.StrokeLines(ls, c.ClipLinesXY(pts)...)
	}
	ns := g.spokes()
	r0 := step
	if nc < 1 {
		r0 = 0
	}
	rmax := float64(nc) * step
	if nc < 1 {
		rmax = g.RMax
	}
	for i := range ns {
		b := 2 * math.Pi * float64(i) / float64(ns)
		x0, y0 := Polar{R: r0, Beta: b}.XY()
		x1, y1 := Polar{R: rmax, Beta: b}.XY()
		c.StrokeLines(ls, c.ClipLinesXY([]vg.Point{{X: trX(x0), Y: trY(y0)}, {X: trX(x1), Y: trY(y1)}})...)
	}
	if !g.Labels {
		return
	}
	fs := g.fontSize()
	grey := color.RGBA{R: 0x80, G: 0x80, B: 0x80, A: 0xFF}
	// Radii along the spoke opposite the Sun, just right of it.
	for i := 1; i <= nc; i++ {
		r := float64(i) * step
		x, y := Polar{R: r, Beta: math.Pi}.XY()
		pt := vg.Point{X: trX(x) + fs*0.3, Y: trY(y) + fs*0.15}
		if c.Contains(pt) {
			fillTextHalo(c, textStyle(fs, grey, draw.XLeft, draw.YBottom), pt, fmt.Sprintf("%g", r))
		}
	}
	// Azimuths just inside the outermost circle or the data area's edge,
	// whichever comes first along the spoke, wholly inside the data area and
	// clear of the legend. The spoke toward the Sun says what the angles are.
	var clear []vg.Rectangle
	if g.keepClear != nil {
		clear = g.keepClear(c)
	}
	o := vg.Point{X: trX(0), Y: trY(0)}
	rc := float64(trX(rmax) - trX(0))
	sty := textStyle(fs, grey, draw.XCenter, draw.YCenter)
	for i := range ns {
		b := 2 * math.Pi * float64(i) / float64(ns)
		deg := math.Round(b * 180 / math.Pi)
		if deg > 180 {
			deg -= 360
		}
		if deg == 180 {
			continue // would sit on the radius labels
		}
		label := minusSign(fmt.Sprintf("%g°", deg))
		if deg == 0 {
			label = "β = 0°"
		}
		ix, iy := inwardUnit(b)
		ux, uy := -ix, -iy // outward
		t := rc
		if ux > 1e-9 {
			t = math.Min(t, float64(c.Max.X-o.X)/ux)
		} else if ux < -1e-9 {
			t = math.Min(t, float64(c.Min.X-o.X)/ux)
		}
		if uy > 1e-9 {
			t = math.Min(t, float64(c.Max.Y-o.Y)/uy)
		} else if uy < -1e-9 {
			t = math.Min(t, float64(c.Min.Y-o.Y)/uy)
		}
		t -= float64(fs) * 1.3
		var pt vg.Point
		for ; t > float64(fs); t -= float64(fs) * 0.5 {
			pt = vg.Point{X: o.X + vg.Length(t*ux), Y: o.Y + vg.Length(t*uy)}
			if contains(c.Rectangle, textBox(sty, pt, label)) {
				break
			}
		}
		if t <= float64(fs) || overlapsAny(textBox(sty, pt, label), clear) {
			continue
		}
		fillTextHalo(c, sty, pt, label)
	}
}

// ArmBands is a plotter for spiral arms: each arm's band filled in a pale
// tint of its colour, its centre line, and its name at one end.
type ArmBands struct {
	// Arms are the arms to draw; a nil Color takes ArmColor of the index.
	Arms []ArmTrack
	// BandAlpha is the opacity of the bands (0: 0.16).
	BandAlpha float64
	// LineWidth is the centre lines' width (0: 1.5 pt).
	LineWidth vg.Length
	// FontSize is the size of the names (0: 10 pt).
	FontSize vg.Length

	// avoid holds map points (x, y in kpc) that the names keep clear of, such as
	// the sources' marks and the tips of their arrows; markRadius is their size.
	avoid      [][2]float64
	markRadius vg.Length
	// keepClear returns the rectangles of the data canvas the names stay out of,
	// such as the legend's box; it may be nil.
	keepClear func(c draw.Canvas) []vg.Rectangle
}

func (a ArmBands) colors() []color.Color {
	arms := make([]Arm, len(a.Arms))
	for i, t := range a.Arms {
		arms[i] = t.Arm
	}
	return armColors(arms)
}

// DataRange implements plot.DataRanger over every finite sample of the
// centre lines and band edges.
func (a ArmBands) DataRange() (xmin, xmax, ymin, ymax float64) {
	var r rangeXY
	for _, t := range a.Arms {
		for _, set := range [][]Polar{t.Centre, t.Inner, t.Outer} {
			r.addPolar(set...)
		}
	}
	return r.get()
}

// canvasPoints returns the finite points of ps on the canvas whose data-to-canvas
// transforms are trX and trY.
func canvasPoints(ps []Polar, trX, trY func(float64) vg.Length) []vg.Point {
	out := make([]vg.Point, 0, len(ps))
	for _, q := range ps {
		if q.finite() {
			x, y := q.XY()
			out = append(out, vg.Point{X: trX(x), Y: trY(y)})
		}
	}
	return out
}

// Plot implements plot.Plotter.
func (a ArmBands) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	toPts := func(ps []Polar) []vg.Point { return canvasPoints(ps, trX, trY) }
	alpha := a.BandAlpha
	if alpha <= 0 {
		alpha = 0.16
	}
	lw := a.LineWidth
	if lw <= 0 {
		lw = 1.5
	}
	cols := a.colors()
	for i, t := range a.Arms {
		inner, outer := toPts(t.Inner), toPts(t.Outer)
		if len(inner) > 0 && len(outer) > 0 {
			poly := append([]vg.Point{}, inner...)
			for j := len(outer) - 1; j >= 0; j-- {
				poly = append(poly, outer[j])
			}
			if clipped := c.ClipPolygonXY(poly); len(clipped) > 2 {
				c.FillPolygon(withAlpha(cols[i], alpha), clipped)
			}
		}
	}
	for i, t := range a.Arms {
		centre := toPts(t.Centre)
		if len(centre) > 1 {
			c.StrokeLines(draw.LineStyle{Color: cols[i], Width: lw}, c.ClipLinesXY(centre)...)
		}
	}
	var taken []vg.Rectangle
	if a.keepClear != nil {
		taken = a.keepClear(c)
	}
	marks := make([]vg.Point, 0, len(a.avoid))
	for _, q := range a.avoid {
		if finite(q[0], q[1]) {
			marks = append(marks, vg.Point{X: trX(q[0]), Y: trY(q[1])})
		}
	}
	for i, t := range a.Arms {
		if pt, sty, ok := a.label(c, trX, trY, t, cols[i], marks, taken); ok {
			fillTextHalo(c, sty, pt, t.Name)
			taken = append(taken, textBox(sty, pt, t.Name))
		}
	}
}

// label returns where and how an arm's name is written: just beyond the chosen end of
// the centre line, continuing its direction, or else beyond the other end or beside
// either, whichever place covers the fewest marks and none of the taken rectangles
// (the legend, names already written) and lies inside the canvas.
func (a ArmBands) label(c draw.Canvas, trX, trY func(float64) vg.Length, t ArmTrack, col color.Color, marks []vg.Point, taken []vg.Rectangle) (vg.Point, text.Style, bool) {
	var pts []vg.Point
	var rs []float64
	for _, q := range t.Centre {
		if q.finite() {
			x, y := q.XY()
			pts = append(pts, vg.Point{X: trX(x), Y: trY(y)})
			rs = append(rs, q.R)
		}
	}
	if t.Name == "" || len(pts) == 0 || t.LabelAt == LabelNone {
		return vg.Point{}, text.Style{}, false
	}
	first := t.LabelAt == LabelFirst || (t.LabelAt == LabelOuterEnd && rs[0] > rs[len(rs)-1])
	if first {
		for l, r := 0, len(pts)-1; l < r; l, r = l+1, r-1 {
			pts[l], pts[r] = pts[r], pts[l]
		}
	}
	fs := a.FontSize
	if fs <= 0 {
		fs = 10
	}
	textCol := mix(col, color.Black, 0.25)
	r := a.markRadius
	if r <= 0 {
		r = 3
	}
	// The chosen end, then (unless the end was chosen explicitly) the other.
	ends := [][]vg.Point{pts}
	if t.LabelAt == LabelOuterEnd {
		rev := make([]vg.Point, len(pts))
		for j, q := range pts {
			rev[len(pts)-1-j] = q
		}
		ends = append(ends, rev)
	}
	var best vg.Point
	var bestSty text.Style
	bestCost := math.Inf(1)
	for e, path := range ends {
		// Walk back from the end to the last point inside the canvas.
		end := len(path) - 1
		for end > 0 && !c.Contains(path[end]) {
			end--
		}
		if !c.Contains(path[end]) {
			continue
		}
		// Direction from a point a few points' worth of path before the end.
		ux, uy := 0.0, 1.0
		for j := end - 1; j >= 0; j-- {
			dx, dy := float64(path[end].X-path[j].X), float64(path[end].Y-path[j].Y)
			if d := math.Hypot(dx, dy); d > 6 {
				ux, uy = dx/d, dy/d
				break
			}
		}
		sty := textStyle(fs, textCol, draw.XAlignment(-0.5+0.5*ux), draw.YAlignment(-0.5+0.5*uy))
		for k, shift := range [][2]float64{{0.35, 0}, {1.2, 0}, {0.35, 1.4}, {0.35, -1.4}, {2.2, 0}, {1.2, 2.4}, {1.2, -2.4}} {
			along, side := fs*vg.Length(shift[0]), fs*vg.Length(shift[1])
			pt := vg.Point{
				X: path[end].X + along*vg.Length(ux) - side*vg.Length(uy),
				Y: path[end].Y + along*vg.Length(uy) + side*vg.Length(ux),
			}
			box := textBox(sty, pt, t.Name)
			cost := 0.01*float64(k) + 0.05*float64(e)
			if !contains(c.Rectangle, box) {
				cost += 1000
			}
			if overlapsAny(box, taken) {
				cost += 1000
			}
			grown := vg.Rectangle{Min: vg.Point{X: box.Min.X - r, Y: box.Min.Y - r}, Max: vg.Point{X: box.Max.X + r, Y: box.Max.Y + r}}
			for _, m := range marks {
				if m.X >= grown.Min.X && m.X <= grown.Max.X && m.Y >= grown.Min.Y && m.Y <= grown.Max.Y {
					cost++
				}
			}
			if cost < bestCost {
				best, bestSty, bestCost = pt, sty, cost
			}
		}
	}
	if math.IsInf(bestCost, 1) {
		return vg.Point{}, text.Style{}, false
	}
	return best, bestSty, true
}

// textBox returns the rectangle text txt of style sty takes when drawn at pt.
func textBox(sty text.Style, pt vg.Point, txt string) vg.Rectangle {
	return sty.Rectangle(txt).Add(pt)
}

// contains reports whether the rectangle outer holds the rectangle r.
func contains(outer, r vg.Rectangle) bool {
	return r.Min.X >= outer.Min.X && r.Min.Y >= outer.Min.Y && r.Max.X <= outer.Max.X && r.Max.Y <= outer.Max.Y
}

// overlapsAny reports whether r overlaps any of the rectangles rs.
func overlapsAny(r vg.Rectangle, rs []vg.Rectangle) bool {
	for _, q := range rs {
		if r.Min.X < q.Max.X && q.Min.X < r.Max.X && r.Min.Y < q.Max.Y && q.Min.Y < r.Max.Y {
			return true
		}
	}
	return false
}

// Thumbnail implements plot.Thumbnailer with the first arm's style.
func (a ArmBands) Thumbnail(c *draw.Canvas) {
	if len(a.Arms) == 0 {
		return
	}
	armThumb(a.colors()[0], a.BandAlpha).Thumbnail(c)
}

// armThumb is the legend symbol of an arm: a pale band with its centre
// line.
func armThumb(col color.Color, alpha float64) plot.Thumbnailer {
	if alpha <= 0 {
		alpha = 0.16
	}
	return thumbFunc(func(c *draw.Canvas) {
		bandThumb(withAlpha(col, alpha), 0.9).Thumbnail(c)
		lineThumb(draw.LineStyle{Color: col, Width: 1.5}).Thumbnail(c)
	})
}

// SourceMarks is a plotter for sources on the face-on map: a marker in the
// colour of each source's most probable component (FieldColor for the
// field), more opaque the more probable, and a thin segment along the line
// of sight spanning its distance uncertainty. Free sources are discs; sources
// tied to an arm by their label are outlined diamonds.
type SourceMarks struct {
	// Sources are the sources to draw.
	Sources []MapSource
	// Colors are the arms' colours: Colors[k−1] for arm k.
	Colors []color.Color
	// Radius is the markers' radius (0: 3 pt).
	Radius vg.Length
	// NoRange leaves out the distance segments.
	NoRange bool
}

// DataRange implements plot.DataRanger over the sources' positions and
// distance segments.
func (s SourceMarks) DataRange() (xmin, xmax, ymin, ymax float64) {
	var r rangeXY
	for _, src := range s.Sources {
		r.addPolar(src.At)
		if !s.NoRange && src.Near != src.Far {
			r.addPolar(src.Near, src.Far)
		}
	}
	return r.get()
}

func (s SourceMarks) radius() vg.Length {
	if s.Radius > 0 {
		return s.Radius
	}
	return 3
}

// Plot implements plot.Plotter.
func (s SourceMarks) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	if !s.NoRange {
		for _, src := range s.Sources {
			if src.Near == src.Far || !src.Near.finite() || !src.Far.finite() {
				continue
			}
			k, pr := MostProbable(src.Prob, src.TiedArm)
			col := withAlpha(componentColor(k, s.Colors), 0.3+0.4*pr)
			x0, y0 := src.Near.XY()
			x1, y1 := src.Far.XY()
			c.StrokeLines(draw.LineStyle{Color: col, Width: 0.9},
				c.ClipLinesXY([]vg.Point{{X: trX(x0), Y: trY(y0)}, {X: trX(x1), Y: trY(y1)}})...)
		}
	}
	// Draw the least certain first so that confident sources stay on top.
	order := make([]int, 0, len(s.Sources))
	for i, src := range s.Sources {
		if src.At.finite() {
			order = append(order, i)
		}
	}
	sort.SliceStable(order, func(a, b int) bool {
		_, pa := MostProbable(s.Sources[order[a]].Prob, s.Sources[order[a]].TiedArm)
		_, pb := MostProbable(s.Sources[order[b]].Prob, s.Sources[order[b]].TiedArm)
		return pa < pb
	})
	r := s.radius()
	for _, i := range order {
		src := s.Sources[i]
		x, y := src.At.XY()
		pt := vg.Point{X: trX(x), Y: trY(y)}
		if !c.Contains(pt) {
			continue
		}
		k, pr := MostProbable(src.Prob, src.TiedArm)
		col := componentColor(k, s.Colors)
		if src.TiedArm >= 1 {
			tiedMark(c, pt, r, col)
		} else {
			freeMark(c, pt, r, col, pr)
		}
	}
}

// freeMark draws a free source: a disc whose fill and rim grow more opaque
// with the membership probability p.
func freeMark(c draw.Canvas, pt vg.Point, r vg.Length, col color.Color, p float64) {
	if !(p >= 0) {
		p = 0
	}
	fillCircle(c, pt, r, withAlpha(col, 0.12+0.8*p), withAlpha(col, 0.45+0.55*p), 0.8)
}

// tiedMark draws a source tied to an arm by its label: a diamond in the
// arm's colour with a dark rim.
func tiedMark(c draw.Canvas, pt vg.Point, r vg.Length, col color.Color) {
	fillDiamond(c, pt, r*1.3, col, inkColor, 0.7)
}

// MotionArrows is a plotter for the sources' peculiar motions: an arrow from
// each source along U toward the centre plus V along rotation, of length
// Scale × speed, and a reference arrow in the data area's lower left corner.
type MotionArrows struct {
	// Sources are the sources; those with a nil Motion are skipped.
	Sources []MapSource
	// Colors are the arms' colours: Colors[k−1] for arm k.
	Colors []color.Color
	// Scale is the map length of the arrows, kpc per km/s.
	Scale float64
	// RefSpeed is the reference arrow's speed, km/s (0: a round number near
	// the median in-plane speed; negative: no reference arrow).
	RefSpeed float64
	// FontSize is the size of the reference arrow's label (0: 8 pt).
	FontSize vg.Length
}

// tip returns the arrow's tip for a source, and false when it has none.
func (m MotionArrows) tip(src MapSource) (x0, y0, x1, y1 float64, ok bool) {
	if src.Motion == nil || !src.At.finite() || !finite(src.Motion.U, src.Motion.V, m.Scale) {
		return 0, 0, 0, 0, false
	}
	x0, y0 = src.At.XY()
	ix, iy := inwardUnit(src.At.Beta)
	rx, ry := rotationUnit(src.At.Beta)
	dx := m.Scale * (src.Motion.U*ix + src.Motion.V*rx)
	dy := m.Scale * (src.Motion.U*iy + src.Motion.V*ry)
	return x0, y0, x0 + dx, y0 + dy, true
}

// DataRange implements plot.DataRanger over the arrows' tails and tips.
func (m MotionArrows) DataRange() (xmin, xmax, ymin, ymax float64) {
	var r rangeXY
	for _, src := range m.Sources {
		if x0, y0, x1, y1, ok := m.tip(src); ok {
			r.add(x0, y0)
			r.add(x1, y1)
		}
	}
	return r.get()
}

// refSpeed returns the reference arrow's speed, or 0 for none.
func (m MotionArrows) refSpeed() float64 {
	if m.RefSpeed != 0 {
		return max(m.RefSpeed, 0)
	}
	var v []float64
	for _, src := range m.Sources {
		if src.Motion != nil && finite(src.Motion.U, src.Motion.V) {
			v = append(v, math.Hypot(src.Motion.U, src.Motion.V))
		}
	}
	if len(v) == 0 {
		return 0
	}
	sort.Float64s(v)
	med := v[len(v)/2]
	if med <= 0 {
		return 0
	}
	return niceStep(med)
}

// Plot implements plot.Plotter.
func (m MotionArrows) Plot(c draw.Canvas, p *plot.Plot) {
	if !(m.Scale > 0) || math.IsInf(m.Scale, 0) {
		return
	}
	trX, trY := p.Transforms(&c)
	drawn := false
	for _, src := range m.Sources {
		x0, y0, x1, y1, ok := m.tip(src)
		if !ok {
			continue
		}
		drawn = true
		k, _ := MostProbable(src.Prob, src.TiedArm)
		col := mix(componentColor(k, m.Colors), color.Black, 0.3)
		arrow(c, vg.Point{X: trX(x0), Y: trY(y0)}, vg.Point{X: trX(x1), Y: trY(y1)}, draw.LineStyle{Color: col, Width: 0.8})
	}
	ref := m.refSpeed()
	if !drawn || ref <= 0 {
		return
	}
	fs := m.FontSize
	if fs <= 0 {
		fs = 8
	}
	l := trX(m.Scale*ref) - trX(0)
	if l <= 0 || l > (c.Max.X-c.Min.X)/2 {
		return
	}
	start := vg.Point{X: c.Min.X + fs, Y: c.Min.Y + fs}
	sty := textStyle(fs, inkColor, draw.XLeft, draw.YBottom)
	lbl := fmt.Sprintf("%g km/s", ref)
	w := max(l, sty.Width(lbl))
	box := vg.Rectangle{Min: vg.Point{X: start.X - fs*0.4, Y: start.Y - fs*0.5}, Max: vg.Point{X: start.X + w + fs*0.4, Y: start.Y + fs*1.6}}
	c.SetColor(color.NRGBA{R: 255, G: 255, B: 255, A: 220})
	c.Fill(box.Path())
	arrow(c, start, vg.Point{X: start.X + l, Y: start.Y}, draw.LineStyle{Color: inkColor, Width: 0.9})
	c.FillText(sty, vg.Point{X: start.X, Y: start.Y + fs*0.35}, lbl)
}

// arrow strokes a line from a to b with an open head at b.
func arrow(c draw.Canvas, a, b vg.Point, sty draw.LineStyle) {
	dx, dy := float64(b.X-a.X), float64(b.Y-a.Y)
	l := math.Hypot(dx, dy)
	if l == 0 || !c.Contains(a) {
		return
	}
	c.StrokeLines(sty, c.ClipLinesXY([]vg.Point{a, b})...)
	h := math.Min(4, 0.45*l)
	ux, uy := dx/l, dy/l
	const s, co = 0.42261826174069944, 0.90630778703665 // sin, cos 25°
	left := vg.Point{X: b.X - vg.Length(h*(co*ux-s*uy)), Y: b.Y - vg.Length(h*(s*ux+co*uy))}
	right := vg.Point{X: b.X - vg.Length(h*(co*ux+s*uy)), Y: b.Y - vg.Length(h*(-s*ux+co*uy))}
	c.StrokeLines(sty, c.ClipLinesXY([]vg.Point{left, b, right})...)
}

// Landmarks is a plotter for the Sun, at (0, −R0), and the Galactic centre,
// at the origin.
type Landmarks struct {
	// R0 is the Sun's distance from the centre, kpc.
	R0 float64
	// Size is the symbols' radius (0: 4.5 pt).
	Size vg.Length
}

func (l Landmarks) size() vg.Length {
	if l.Size > 0 {
		return l.Size
	}
	return 4.5
}

// DataRange implements plot.DataRanger: the two landmarks.
func (l Landmarks) DataRange() (xmin, xmax, ymin, ymax float64) {
	var r rangeXY
	r.add(0, 0)
	if finite(l.R0) {
		r.add(0, -l.R0)
	}
	return r.get()
}

// Plot implements plot.Plotter.
func (l Landmarks) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	centre := vg.Point{X: trX(0), Y: trY(0)}
	if c.Contains(centre) {
		centreMark(c, centre, l.size())
	}
	if finite(l.R0) {
		sun := vg.Point{X: trX(0), Y: trY(-l.R0)}
		if c.Contains(sun) {
			sunMark(c, sun, l.size())
		}
	}
}

// sunMark draws the Sun: a ring around a dot.
func sunMark(c draw.Canvas, pt vg.Point, r vg.Length) {
	fillCircle(c, pt, r, color.White, inkColor, 1.1)
	fillCircle(c, pt, r*0.3, inkColor, nil, 0)
}

// centreMark draws the Galactic centre: a plus sign with a small ring.
func centreMark(c draw.Canvas, pt vg.Point, r vg.Length) {
	sty := draw.LineStyle{Color: inkColor, Width: 1.1}
	c.StrokeLine2(sty, pt.X-r*1.3, pt.Y, pt.X+r*1.3, pt.Y)
	c.StrokeLine2(sty, pt.X, pt.Y-r*1.3, pt.X, pt.Y+r*1.3)
	fillCircle(c, pt, r*0.45, color.White, inkColor, 0.9)
}

// rangeXY accumulates the bounding box of finite points.
type rangeXY struct {
	xmin, xmax, ymin, ymax float64
	n                      int
}

func (r *rangeXY) add(x, y float64) {
	if !finite(x, y) {
		return
	}
	if r.n == 0 {
		r.xmin, r.xmax, r.ymin, r.ymax = x, x, y, y
	} else {
		r.xmin, r.xmax = math.Min(r.xmin, x), math.Max(r.xmax, x)
		r.ymin, r.ymax = math.Min(r.ymin, y), math.Max(r.ymax, y)
	}
	r.n++
}

func (r *rangeXY) addPolar(ps ...Polar) {
	for _, q := range ps {
		if q.finite() {
			r.add(q.XY())
		}
	}
}

// get returns the box, or an empty (inverted infinite) range when no point
// was added, which leaves a plot's axes untouched.
func (r *rangeXY) get() (xmin, xmax, ymin, ymax float64) {
	if r.n == 0 {
		return math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	}
	return r.xmin, r.xmax, r.ymin, r.ymax
}

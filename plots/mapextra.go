package plots

import (
	"image/color"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// CentreSpread is a plotter for the posterior spread of the arms' centre lines:
// for each arm with CentreLo and CentreHi, the band between them, filled deeper
// than the width's band and edged in the arm's colour.
type CentreSpread struct {
	Arms []ArmTrack
	// Colors are the arms' colours, one per arm.
	Colors []color.Color
}

func (s CentreSpread) any() bool {
	for _, t := range s.Arms {
		if len(t.CentreLo) > 1 && len(t.CentreHi) > 1 {
			return true
		}
	}
	return false
}

// Plot implements plot.Plotter.
func (s CentreSpread) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	toPts := func(ps []Polar) []vg.Point { return canvasPoints(ps, trX, trY) }
	for i, t := range s.Arms {
		lo, hi := toPts(t.CentreLo), toPts(t.CentreHi)
		if len(lo) < 2 || len(hi) < 2 {
			continue
		}
		col := s.Colors[i%len(s.Colors)]
		poly := append([]vg.Point{}, lo...)
		for j := len(hi) - 1; j >= 0; j-- {
			poly = append(poly, hi[j])
		}
		if clipped := c.ClipPolygonXY(poly); len(clipped) > 2 {
			c.FillPolygon(withAlpha(col, 0.5), clipped)
		}
		edge := draw.LineStyle{Color: mix(col, color.Black, 0.35), Width: 0.5}
		c.StrokeLines(edge, c.ClipLinesXY(lo)...)
		c.StrokeLines(edge, c.ClipLinesXY(hi)...)
	}
}

// spreadThumb is the legend symbol of a centre line's spread: a narrow deep band
// with dark edges.
func spreadThumb(col color.Color) plot.Thumbnailer {
	return thumbFunc(func(c *draw.Canvas) {
		mid := (c.Min.Y + c.Max.Y) / 2
		h := (c.Max.Y - c.Min.Y) * 0.16
		r := vg.Rectangle{Min: vg.Point{X: c.Min.X, Y: mid - h}, Max: vg.Point{X: c.Max.X, Y: mid + h}}
		c.SetColor(withAlpha(col, 0.5))
		c.Fill(r.Path())
		edge := draw.LineStyle{Color: col, Width: 0.5}
		c.StrokeLine2(edge, c.Min.X, mid-h, c.Max.X, mid-h)
		c.StrokeLine2(edge, c.Min.X, mid+h, c.Max.X, mid+h)
	})
}

// AssignedMarks is a plotter for new sources placed in a fitted model: a ring in
// the colour of the most probable component around a dark dot, the distance's
// 16–84% range along the line of sight, and the source's name.
type AssignedMarks struct {
	Sources []MapSource
	// Colors are the arms' colours: Colors[k−1] for arm k.
	Colors []color.Color
	// FontSize is the names' size (0: 8 pt).
	FontSize vg.Length
}

// DataRange implements plot.DataRanger.
func (a AssignedMarks) DataRange() (xmin, xmax, ymin, ymax float64) {
	var r rangeXY
	for _, s := range a.Sources {
		r.addPolar(s.At, s.Near, s.Far)
	}
	return r.get()
}

// Plot implements plot.Plotter.
func (a AssignedMarks) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	fs := a.FontSize
	if fs <= 0 {
		fs = 8
	}
	r := vg.Length(3)
	for _, s := range a.Sources {
		if !s.At.finite() {
			continue
		}
		k, _ := MostProbable(s.Prob, s.TiedArm)
		col := componentColor(k, a.Colors)
		if s.Near.finite() && s.Far.finite() {
			x0, y0 := s.Near.XY()
			x1, y1 := s.Far.XY()
			c.StrokeLines(draw.LineStyle{Color: inkColor, Width: 1.4},
				c.ClipLinesXY([]vg.Point{{X: trX(x0), Y: trY(y0)}, {X: trX(x1), Y: trY(y1)}})...)
		}
		x, y := s.At.XY()
		pt := vg.Point{X: trX(x), Y: trY(y)}
		if !c.Contains(pt) {
			continue
		}
		assignedMark(c, pt, r, col)
		if s.Name != "" {
			fillTextHalo(c, textStyle(fs, inkColor, draw.XLeft, draw.YCenter), vg.Point{X: pt.X + r*2.6, Y: pt.Y}, s.Name)
		}
	}
}

// assignedMark draws a new source: a thick ring in col around a dark dot.
func assignedMark(c draw.Canvas, pt vg.Point, r vg.Length, col color.Color) {
	fillCircle(c, pt, r*2, color.White, col, 2)
	fillCircle(c, pt, r*0.7, inkColor, nil, 0)
}

package plots

import (
	"fmt"
	"image/color"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// LongitudeRange is a range of Galactic longitude seen from the Sun.
type LongitudeRange struct {
	// From and To bound the range, radians: it runs from From toward increasing
	// longitude (counterclockwise on the face-on map) to To, through l = 0 when
	// From > To. To − From = 2π is the whole circle.
	From, To float64
}

// width returns the range's extent (rad, in (0, 2π]).
func (r LongitudeRange) width() float64 {
	w := r.To - r.From
	if w > 2*math.Pi {
		return 2 * math.Pi
	}
	for w <= 0 {
		w += 2 * math.Pi
	}
	return w
}

// SurveyReach is a plotter for where a survey can see in the Galactic plane: the
// directions from the Sun it does not see, shaded as wedges from the Sun out to the edge
// of the data area, and the distance at which its completeness falls to one half, a
// dashed circle about the Sun. Both are drawn in subdued greys, beneath the arms.
type SurveyReach struct {
	// R0 is the Sun's distance from the Galactic centre, kpc; the Sun is at (0, −R0).
	R0 float64
	// Unseen are the ranges of longitude the survey does not see.
	Unseen []LongitudeRange
	// HalfDistance is the distance from the Sun at which the completeness is one half,
	// kpc (0: no circle).
	HalfDistance float64
}

// The looks of SurveyReach: a light slate fill edged in a pale line, and a dashed circle
// darker than the grid's circles but lighter than the ink.
var (
	reachFill   = withAlpha(color.RGBA{R: 0x5B, G: 0x66, B: 0x72, A: 0xFF}, 0.11)
	reachEdge   = draw.LineStyle{Color: color.RGBA{R: 0xA4, G: 0xAC, B: 0xB5, A: 0xFF}, Width: 0.6}
	reachCircle = draw.LineStyle{Color: color.RGBA{R: 0x4F, G: 0x5A, B: 0x66, A: 0xFF}, Width: 1.0,
		Dashes: []vg.Length{5, 3}}
)

// sunward returns the map position (kpc) at distance d (kpc) from the Sun toward Galactic
// longitude l (rad) in the plane: the heliocentric (d cos l, d sin l) taken to the map as
// in Polar.XY, x = −y_h, y = x_h − R0.
func sunward(R0, l, d float64) (x, y float64) {
	s, c := math.Sincos(l)
	return -d * s, -R0 + d*c
}

// active reports whether there is anything to draw.
func (s SurveyReach) active() bool {
	return finite(s.R0) && (len(s.Unseen) > 0 || s.HalfDistance > 0 && finite(s.HalfDistance))
}

// Plot implements plot.Plotter.
func (s SurveyReach) Plot(c draw.Canvas, p *plot.Plot) {
	if !s.active() {
		return
	}
	trX, trY := p.Transforms(&c)
	pt := func(x, y float64) vg.Point { return vg.Point{X: trX(x), Y: trY(y)} }
	sun := pt(0, -s.R0)
	// Beyond the farthest corner of the data range: the wedges reach the edge everywhere.
	far := 0.0
	for _, x := range []float64{p.X.Min, p.X.Max} {
		for _, y := range []float64{p.Y.Min, p.Y.Max} {
			far = math.Max(far, math.Hypot(x, y+s.R0))
		}
	}
	far *= 1.05
	const step = math.Pi / 360 // 0.5° along the arcs
	for _, r := range s.Unseen {
		if !finite(r.From, r.To) {
			continue
		}
		w := r.width()
		n := int(math.Ceil(w/step)) + 1
		var poly []vg.Point
		full := w >= 2*math.Pi-1e-12
		if !full {
			poly = append(poly, sun)
		}
		for k := range n {
			poly = append(poly, pt(sunward(s.R0, r.From+w*float64(k)/float64(n-1), far)))
		}
		if clipped := c.ClipPolygonXY(poly); len(clipped) > 2 {
			c.FillPolygon(reachFill, clipped)
		}
		if !full {
			for _, l := range []float64{r.From, r.From + w} {
				c.StrokeLines(reachEdge, c.ClipLinesXY([]vg.Point{sun, pt(sunward(s.R0, l, far))})...)
			}
		}
	}
	if d := s.HalfDistance; d > 0 && finite(d) {
		const segs = 360
		circle := make([]vg.Point, segs+1)
		for k := range circle {
			circle[k] = pt(sunward(s.R0, 2*math.Pi*float64(k)/segs, d))
		}
		c.StrokeLines(reachCircle, c.ClipLinesXY(circle)...)
	}
}

// halfDistanceLabel is the legend's entry for the completeness circle.
func halfDistanceLabel(d float64) string {
	return fmt.Sprintf("completeness ½ at %s kpc", minusSign(strconv.FormatFloat(d, 'g', 3, 64)))
}

// wedgeThumb is the legend symbol of an unseen range: a shaded wedge opening to the right
// from the symbol box's left edge.
func wedgeThumb() plot.Thumbnailer {
	return thumbFunc(func(c *draw.Canvas) {
		h := (c.Max.Y - c.Min.Y) / 2
		apex := vg.Point{X: c.Min.X, Y: c.Center().Y}
		top := vg.Point{X: c.Max.X, Y: apex.Y + h}
		bottom := vg.Point{X: c.Max.X, Y: apex.Y - h}
		c.FillPolygon(reachFill, []vg.Point{apex, top, bottom})
		c.StrokeLines(reachEdge, []vg.Point{top, apex, bottom})
	})
}

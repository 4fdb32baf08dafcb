package plots

import (
	"fmt"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// MapData is the input of FaceOnMap.
type MapData struct {
	// Title heads the figure ("" for a default naming the view).
	Title string
	// R0 is the Sun's distance from the Galactic centre, kpc (> 0).
	R0 float64
	// Arms are the arms' traces and bands; their order fixes the arms'
	// numbering (arm k is Arms[k−1]) and default colours.
	Arms []ArmTrack
	// Sources are the sources to mark.
	Sources []MapSource
	// Assigned are new sources placed in the fitted model (by assign), marked
	// as rings with their names; their Prob colours them as Sources'.
	Assigned []MapSource
	// MotionScale is the length of the motion arrows in kpc per km/s (for
	// instance 0.02: 50 km/s draws 1 kpc); 0 draws no arrows.
	MotionScale float64
	// RefSpeed is the speed of the reference arrow, km/s (0: chosen from
	// the data; negative: none).
	RefSpeed float64
	// Extent is the half-width of the map around the centre, kpc (0: from
	// the data with a 4% margin, rounded up to a whole kpc).
	Extent float64
	// GridStep is the spacing of the circles of constant R and of the axis
	// labels, kpc (0: 2 kpc for a half-width up to 12 kpc, else 4 kpc).
	GridStep float64
	// Unseen are the ranges of Galactic longitude whose directions in the plane a
	// survey does not see, shaded lightly as wedges from the Sun out to the map's
	// edge (nil: none).
	Unseen []LongitudeRange
	// UnseenLabel is the legend's entry for Unseen ("": "not surveyed").
	UnseenLabel string
	// HalfDistance is the distance from the Sun (kpc) at which the survey's
	// completeness falls to one half, drawn as a dashed circle about the Sun
	// and named in the legend (0: none). It does not widen the map.
	HalfDistance float64
	// KeyPos is the corner of the legend (KeyDefault: top right).
	KeyPos KeyPos
	// FontSize is the base text size (0: 11 pt).
	FontSize vg.Length
}

// FaceOnPlot is a face-on map: a plot.Plot drawn with equal scales on both
// axes, the axis ranges being widened at drawing time to the canvas' shape.
type FaceOnPlot struct {
	*plot.Plot
	grid GalaxyGrid // the polar grid added to Plot
	key  *Key       // the legend added to Plot
}

// Draw draws the map onto c with equal kpc per unit length on both axes.
func (f *FaceOnPlot) Draw(c draw.Canvas) {
	q := *f.Plot
	equalAspect(&q, c)
	q.Draw(c)
}

// Save writes the map to path; see the package function Save.
func (f *FaceOnPlot) Save(path string, width, height vg.Length) error {
	return Save(f, path, width, height)
}

// equalAspect widens the shorter axis range of p so that one kpc has the
// same length on both axes when p is drawn onto c.
func equalAspect(p *plot.Plot, c draw.Canvas) {
	x0, x1, y0, y1 := p.X.Min, p.X.Max, p.Y.Min, p.Y.Max
	if !finite(x0, x1, y0, y1) || !(x1 > x0) || !(y1 > y0) {
		return
	}
	// Tick labels depend on the ranges and the data area on the labels:
	// two rounds settle it.
	for range 3 {
		dc := p.DataCanvas(c)
		w, h := float64(dc.Max.X-dc.Min.X), float64(dc.Max.Y-dc.Min.Y)
		if w <= 0 || h <= 0 {
			return
		}
		sx, sy := (x1-x0)/w, (y1-y0)/h
		s := math.Max(sx, sy)
		cx, cy := (x0+x1)/2, (y0+y1)/2
		p.X.Min, p.X.Max = cx-s*w/2, cx+s*w/2
		p.Y.Min, p.Y.Max = cy-s*h/2, cy+s*h/2
	}
}

// FaceOnMap draws the Galactic plane as seen from the north Galactic pole
// (Galactic rotation clockwise), with the centre at the origin and the Sun at
// (0, −R0): a polar grid, the arms' bands, centre lines and names, the
// sources coloured by their most probable arm with their distance ranges
// along the line of sight, optional motion arrows, the Sun and the centre,
// the survey's reach when given (see SurveyReach), and a legend. Map coordinates are x = −R sin β, y = −R cos β (Polar.XY).
// The grid's spokes are Galactocentric azimuths β (labelled at the map's
// edge, β = 0° toward the Sun), which the legend says; those labels and the
// arms' names keep clear of the legend, and the names of the sources' marks
// and arrows where they can.
//
// It returns an error for a non-positive R0, for sources whose membership
// slice is longer than the arms plus the field, or whose TiedArm names no
// arm.
func FaceOnMap(d MapData) (*FaceOnPlot, error) {
	if !(d.R0 > 0) || math.IsInf(d.R0, 0) {
		return nil, fmt.Errorf("plots: face-on map: R0 = %g kpc, want a positive number", d.R0)
	}
	if err := checkSources(len(d.Arms), len(d.Sources), func(i int) (string, []float64, int) {
		return d.Sources[i].Name, d.Sources[i].Prob, d.Sources[i].TiedArm
	}); err != nil {
		return nil, fmt.Errorf("plots: face-on map: %w", err)
	}
	base := d.FontSize
	if base <= 0 {
		base = 11
	}
	p := newPlot(base)
	p.Title.Text = d.Title
	if p.Title.Text == "" {
		p.Title.Text = "Face-on view from the north Galactic pole (rotation clockwise)"
	}
	p.X.Label.Text = "x (kpc)"
	p.Y.Label.Text = "y (kpc)"

	bands := ArmBands{Arms: d.Arms, FontSize: base * 0.95}
	cols := bands.colors()
	marks := SourceMarks{Sources: d.Sources, Colors: cols}
	arrows := MotionArrows{Sources: d.Sources, Colors: cols, Scale: d.MotionScale, RefSpeed: d.RefSpeed, FontSize: base * 0.75}
	landmarks := Landmarks{R0: d.R0}
	spread := CentreSpread{Arms: d.Arms, Colors: cols}
	assigned := AssignedMarks{Sources: d.Assigned, Colors: cols, FontSize: base * 0.75}

	// The extent: every drawn element, squared about the centre.
	ext := d.Extent
	if !(ext > 0) || math.IsInf(ext, 0) {
		ext = d.R0
		rangers := []plot.DataRanger{bands, marks, assigned}
		if d.MotionScale > 0 {
			rangers = append(rangers, arrows)
		}
		for _, r := range rangers {
			x0, x1, y0, y1 := r.DataRange()
			for _, v := range []float64{x0, x1, y0, y1} {
				if finite(v) {
					ext = math.Max(ext, math.Abs(v))
				}
			}
		}
		ext *= 1.04
	}
	grid := GalaxyGrid{Step: d.GridStep, Labels: true, FontSize: base * 0.65}
	grid.RMax = ext
	step := grid.step()
	if d.Extent <= 0 {
		ext = math.Ceil(ext - 1e-9)
	}
	p.X.Tick.Marker = niceTicks{step: step}
	p.Y.Tick.Marker = niceTicks{step: step}
	grid.Step = step
	grid.RMax = ext * 2 // the circles fill the corners of a widened map

	key := &Key{Pos: d.KeyPos, FontSize: base * 0.8}
	clearOfKey := func(c draw.Canvas) []vg.Rectangle { return []vg.Rectangle{key.box(c)} }
	grid.keepClear = clearOfKey
	bands.keepClear = clearOfKey
	bands.markRadius = marks.radius()
	for _, src := range d.Sources {
		if src.At.finite() {
			x, y := src.At.XY()
			bands.avoid = append(bands.avoid, [2]float64{x, y})
		}
		if d.MotionScale > 0 {
			if _, _, x1, y1, ok := arrows.tip(src); ok {
				bands.avoid = append(bands.avoid, [2]float64{x1, y1})
			}
		}
	}
	reach := SurveyReach{R0: d.R0, Unseen: d.Unseen, HalfDistance: d.HalfDistance}
	p.Add(grid)
	if reach.active() {
		p.Add(reach)
	}
	p.Add(bands, spread, marks, assigned)
	if d.MotionScale > 0 {
		p.Add(arrows)
	}
	p.Add(landmarks)
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = -ext, ext, -ext, ext
	p.X.Padding, p.Y.Padding = 0, 0

	for i, a := range d.Arms {
		if a.Name != "" {
			key.Add(a.Name, armThumb(cols[i], bands.BandAlpha))
		}
	}
	if spread.any() {
		key.Add("centre line, 68% of draws", spreadThumb(inkColor))
		key.Add("± arm width (median)", bandThumb(withAlpha(inkColor, 0.16), 0.9))
	}
	r := marks.radius()
	if len(d.Assigned) > 0 {
		key.Add("new source (assign)", markThumb(func(c draw.Canvas, pt vg.Point) { assignedMark(c, pt, r, ArmColor(0)) }))
	}
	key.Add("field", markThumb(func(c draw.Canvas, pt vg.Point) { freeMark(c, pt, r, FieldColor, 1) }))
	key.Add("free source (opacity: P)", markThumb(func(c draw.Canvas, pt vg.Point) {
		freeMark(c, vg.Point{X: pt.X - r*1.6, Y: pt.Y}, r, ArmColor(0), 0.25)
		freeMark(c, vg.Point{X: pt.X + r*1.6, Y: pt.Y}, r, ArmColor(0), 1)
	}))
	key.Add("tied by catalog label", markThumb(func(c draw.Canvas, pt vg.Point) { tiedMark(c, pt, r, ArmColor(0)) }))
	key.Add("distance 16–84%", lineThumb(draw.LineStyle{Color: withAlpha(inkColor, 0.6), Width: 0.9}))
	if len(d.Unseen) > 0 {
		label := d.UnseenLabel
		if label == "" {
			label = "not surveyed"
		}
		key.Add(label, wedgeThumb())
	}
	if d.HalfDistance > 0 && finite(d.HalfDistance) {
		key.Add(halfDistanceLabel(d.HalfDistance), lineThumb(reachCircle))
	}
	key.Add("Sun", markThumb(func(c draw.Canvas, pt vg.Point) { sunMark(c, pt, Landmarks{}.size()) }))
	key.Add("Galactic centre", markThumb(func(c draw.Canvas, pt vg.Point) { centreMark(c, pt, Landmarks{}.size()) }))
	if grid.spokes() > 0 {
		key.Add("spokes: Galactocentric azimuth β", lineThumb(grid.line()))
		key.Add("   (β = 0° toward the Sun, not longitude)")
	}
	p.Add(key)
	return &FaceOnPlot{Plot: p, grid: grid, key: key}, nil
}

// checkSources checks every source's membership slice and tie against the
// number of arms.
func checkSources(nArms, n int, get func(i int) (name string, prob []float64, tied int)) error {
	for i := range n {
		name, prob, tied := get(i)
		if len(prob) > nArms+1 {
			return fmt.Errorf("source %d (%q): %d membership probabilities for %d arms and the field",
				i, name, len(prob), nArms)
		}
		if tied < 0 || tied > nArms {
			return fmt.Errorf("source %d (%q): tied to arm %d, want 0 (free) or 1..%d", i, name, tied, nArms)
		}
	}
	return nil
}

package plots

import (
	"fmt"
	"image"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// TraceData is the input of NewTracePlot.
type TraceData struct {
	// Title heads the figure ("" for none).
	Title string
	// Names are the parameters' names, one panel each.
	Names []string
	// Chain holds the walkers' positions: Chain[s][w][j] is parameter j of
	// walker w at step s. Every step has the same walkers. Non-finite values
	// break a walker's line.
	Chain [][][]float64
	// BurnIn is the number of leading steps discarded as burn-in; they are
	// shaded and their end marked (0: none).
	BurnIn int
	// Truths, when not nil, gives a reference value per parameter drawn as
	// a horizontal line; NaN entries draw none.
	Truths []float64
	// Columns is the number of panel columns (0: 1 for up to 8 parameters,
	// else 2).
	Columns int
	// MaxPoints caps the points kept per walker line (0: 2000): longer
	// chains are cut into MaxPoints/2 equal runs of steps and each run is
	// kept as its minimum and maximum, in step order, so that excursions
	// stay visible.
	MaxPoints int
	// Color is the walkers' colour (nil: the first arm colour); the lines'
	// opacity falls with the number of walkers.
	Color color.Color
}

// TracePlot shows every walker's value against step for each parameter, one
// panel per parameter, with the burn-in shaded.
type TracePlot struct {
	data   TraceData
	nsteps int
	nwalk  int
	lines  [][]Curve // lines[j][w]
	color  color.Color
	alpha  float64
	ranges [][2]float64
}

// NewTracePlot thins the walkers' lines and returns the trace plot.
//
// It returns an error for no names, an empty chain, a step whose walkers
// differ in number from the first step's, a position whose length differs
// from the number of names, a burn-in outside [0, steps] or Truths of the
// wrong length.
func NewTracePlot(d TraceData) (*TracePlot, error) {
	np := len(d.Names)
	if np == 0 {
		return nil, fmt.Errorf("plots: trace plot: no parameter names")
	}
	ns := len(d.Chain)
	if ns == 0 || len(d.Chain[0]) == 0 {
		return nil, fmt.Errorf("plots: trace plot: empty chain")
	}
	nw := len(d.Chain[0])
	for s, step := range d.Chain {
		if len(step) != nw {
			return nil, fmt.Errorf("plots: trace plot: step %d has %d walkers, step 0 has %d", s, len(step), nw)
		}
		for w, pos := range step {
			if len(pos) != np {
				return nil, fmt.Errorf("plots: trace plot: step %d walker %d has %d values for %d parameters", s, w, len(pos), np)
			}
		}
	}
	if d.BurnIn < 0 || d.BurnIn > ns {
		return nil, fmt.Errorf("plots: trace plot: burn-in of %d steps in a chain of %d", d.BurnIn, ns)
	}
	if d.Truths != nil && len(d.Truths) != np {
		return nil, fmt.Errorf("plots: trace plot: %d truth values for %d parameters", len(d.Truths), np)
	}
	if d.Columns < 0 {
		return nil, fmt.Errorf("plots: trace plot: %d columns", d.Columns)
	}
	t := &TracePlot{data: d, nsteps: ns, nwalk: nw}
	col := d.Color
	if col == nil {
		col = ArmColor(0)
	}
	t.color = col
	t.alpha = math.Max(0.06, math.Min(0.7, 4/math.Pow(float64(nw), 0.75)))
	maxPts := d.MaxPoints
	if maxPts <= 0 {
		maxPts = 2000
	}
	buckets := max(1, maxPts/2)
	t.lines = make([][]Curve, np)
	t.ranges = make([][2]float64, np)
	for j := range np {
		t.lines[j] = make([]Curve, nw)
		lo, hi := math.Inf(1), math.Inf(-1)
		for w := range nw {
			x, y := thinWalker(d.Chain, w, j, buckets)
			for _, v := range y {
				if finite(v) {
					lo, hi = math.Min(lo, v), math.Max(hi, v)
				}
			}
			t.lines[j][w] = Curve{X: x, Y: y}
		}
		if tr := t.truth(j); finite(tr) {
			lo, hi = math.Min(lo, tr), math.Max(hi, tr)
		}
		switch {
		case lo > hi: // no finite value
			lo, hi = 0, 1
		case lo == hi:
			h := 0.01 * math.Abs(lo)
			if h == 0 {
				h = 1
			}
			lo, hi = lo-h, hi+h
		default:
			pad := 0.05 * (hi - lo)
			lo, hi = lo-pad, hi+pad
		}
		t.ranges[j] = [2]float64{lo, hi}
	}
	return t, nil
}

// thinWalker returns walker w's trace of parameter j, reduced to the
// minimum and maximum of each of n runs of steps when the chain is longer
// than 2n steps. A run without finite values gives a NaN, which breaks the
// line.
func thinWalker(chain [][][]float64, w, j, n int) (x, y []float64) {
	ns := len(chain)
	if ns <= 2*n {
		x, y = make([]float64, ns), make([]float64, ns)
		for s := range ns {
			x[s], y[s] = float64(s), chain[s][w][j]
		}
		return x, y
	}
	x, y = make([]float64, 0, 2*n), make([]float64, 0, 2*n)
	for b := range n {
		s0, s1 := b*ns/n, (b+1)*ns/n
		imin, imax := -1, -1
		for s := s0; s < s1; s++ {
			v := chain[s][w][j]
			if !finite(v) {
				continue
			}
			if imin < 0 || v < chain[imin][w][j] {
				imin = s
			}
			if imax < 0 || v > chain[imax][w][j] {
				imax = s
			}
		}
		switch {
		case imin < 0:
			x, y = append(x, float64(s0)), append(y, math.NaN())
		case imin <= imax:
			x, y = append(x, float64(imin), float64(imax)), append(y, chain[imin][w][j], chain[imax][w][j])
		default:
			x, y = append(x, float64(imax), float64(imin)), append(y, chain[imax][w][j], chain[imin][w][j])
		}
	}
	return x, y
}

func (t *TracePlot) truth(j int) float64 {
	if t.data.Truths == nil {
		return math.NaN()
	}
	return t.data.Truths[j]
}

func (t *TracePlot) columns() int {
	switch {
	case t.data.Columns > 0:
		return min(t.data.Columns, len(t.data.Names))
	case len(t.data.Names) <= 8:
		return 1
	default:
		return 2
	}
}

// Draw draws the panels onto c, parameters filling each column in turn.
func (t *TracePlot) Draw(c draw.Canvas) {
	np := len(t.data.Names)
	cols := t.columns()
	rows := (np + cols - 1) / cols
	c.SetColor(color.White)
	c.Fill(c.Rectangle.Path())
	rowH := (c.Max.Y - c.Min.Y) / vg.Length(rows)
	base := max(6, min(11, rowH/6))
	if t.data.Title != "" {
		sty := textStyle(base*1.3, inkColor, draw.XCenter, draw.YTop)
		c.FillText(sty, vg.Point{X: c.Center().X, Y: c.Max.Y - base*0.4}, t.data.Title)
		c.Max.Y -= sty.Height(t.data.Title) + base*0.8
	}
	c = draw.Crop(c, base*0.5, -base, base*0.5, -base*0.6)
	plots := make([][]*plot.Plot, rows)
	for r := range rows {
		plots[r] = make([]*plot.Plot, cols)
	}
	for j := range np {
		col, r := j/rows, j%rows
		last := r == rows-1 || j == np-1
		plots[r][col] = t.panel(j, base, last, j == 0)
	}
	cv := plot.Align(plots, draw.Tiles{Rows: rows, Cols: cols, PadX: base * 2, PadY: base * 0.5}, c)
	var xs []tileName
	ys := make([][]tileName, cols)
	for j := range np {
		col, r := j/rows, j%rows
		plots[r][col].Draw(cv[r][col])
		ys[col] = append(ys[col], tileName{plots[r][col], cv[r][col], t.data.Names[j]})
		if r == rows-1 || j == np-1 {
			xs = append(xs, tileName{plots[r][col], cv[r][col], "step"})
		}
	}
	nameSty := plots[0][0].X.Label.TextStyle
	for _, y := range ys {
		drawYNames(c, y, nameSty)
	}
	// Each column's step axis sits under its own last panel.
	for _, x := range xs {
		drawXNames(c, []tileName{x}, nameSty)
	}
}

// Save writes the trace plot to path; see the package function Save.
func (t *TracePlot) Save(path string, width, height vg.Length) error {
	return Save(t, path, width, height)
}

// panel builds parameter j's panel; bottom panels carry the step axis, and
// the first names the burn-in.
func (t *TracePlot) panel(j int, base vg.Length, bottom, first bool) *plot.Plot {
	p := newPlot(base)
	p.BackgroundColor = nil
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Padding = 0
		a.LineStyle.Width = 0
		a.Tick.Length = base * 0.35
	}
	p.X.Min, p.X.Max = 0, float64(t.nsteps)
	p.X.Tick.Marker = niceTicks{n: 6, noLabels: !bottom}
	if bottom {
		p.X.Label.Text = namePlaceholder
	}
	p.Y.Min, p.Y.Max = t.ranges[j][0], t.ranges[j][1]
	p.Y.Tick.Marker = niceTicks{n: 4, margin: 0.1}
	p.Y.Label.Text = namePlaceholder
	if t.data.BurnIn > 0 {
		p.Add(burnIn{steps: float64(t.data.BurnIn)})
	}
	p.Add(walkerRaster{lines: t.lines[j], color: t.color, alpha: t.alpha})
	if t.data.BurnIn > 0 && first {
		p.Add(burnIn{steps: float64(t.data.BurnIn), label: true, fontSize: base * 0.8})
	}
	if tr := t.truth(j); finite(tr) {
		p.Add(truthLines{x: math.NaN(), y: tr})
	}
	p.Add(frame{})
	return p
}

// burnIn shades the burn-in steps and marks their end with a dashed line;
// with label set it writes "burn-in" instead, to go on top of the data.
type burnIn struct {
	steps    float64
	label    bool
	fontSize vg.Length
}

func (b burnIn) Plot(c draw.Canvas, p *plot.Plot) {
	trX, _ := p.Transforms(&c)
	x := min(trX(b.steps), c.Max.X)
	if b.label {
		sty := textStyle(b.fontSize, inkColor, draw.XRight, draw.YTop)
		if sty.Width("burn-in")+b.fontSize < x-c.Min.X {
			fillTextHalo(c, sty, vg.Point{X: x - b.fontSize*0.3, Y: c.Max.Y - b.fontSize*0.2}, "burn-in")
		}
		return
	}
	rect := vg.Rectangle{Min: c.Min, Max: vg.Point{X: x, Y: c.Max.Y}}
	c.SetColor(withAlpha(color.Black, 0.06))
	c.Fill(rect.Path())
	c.StrokeLine2(draw.LineStyle{Color: inkColor, Width: 0.8, Dashes: []vg.Length{3, 2}}, x, c.Min.Y, x, c.Max.Y)
}

// walkerRaster draws many thin, translucent walker lines of one colour as
// an image: every line adds one layer of opacity alpha to each pixel it
// covers, as if each were stroked over the others, at a small fraction of
// the cost of stroking (and, in vector formats, of the size). Lines are
// rasterised column by column at rasterRes pixels per point: in each column
// a line covers the span between its extremes there.
type walkerRaster struct {
	lines []Curve
	color color.Color
	alpha float64
}

// rasterRes is the resolution of walkerRaster, pixels per point (216 per
// inch, above the usual 150 dpi of Save).
const rasterRes = 3.0

func (w walkerRaster) Plot(c draw.Canvas, p *plot.Plot) {
	width, height := float64(c.Max.X-c.Min.X), float64(c.Max.Y-c.Min.Y)
	if !(width > 0 && height > 0) || len(w.lines) == 0 {
		return
	}
	nx := max(1, min(4000, int(math.Ceil(width*rasterRes))))
	ny := max(1, min(4000, int(math.Ceil(height*rasterRes))))
	sx, sy := float64(nx)/width, float64(ny)/height
	trX, trY := p.Transforms(&c)
	px := func(x float64) float64 { return float64(trX(x)-c.Min.X) * sx }
	py := func(y float64) float64 { return float64(c.Max.Y-trY(y)) * sy } // row 0 at the top

	counts := make([]uint16, nx*ny)
	lo, hi := make([]float64, nx), make([]float64, nx)
	for i := range lo {
		lo[i], hi[i] = math.Inf(1), math.Inf(-1)
	}
	touched := make([]int, 0, nx)
	cover := func(col int, y0, y1 float64) {
		if lo[col] > hi[col] {
			touched = append(touched, col)
		}
		lo[col] = math.Min(lo[col], math.Min(y0, y1))
		hi[col] = math.Max(hi[col], math.Max(y0, y1))
	}
	segment := func(x0, y0, x1, y1 float64) {
		if x1 < x0 {
			x0, y0, x1, y1 = x1, y1, x0, y0
		}
		c0 := max(0, int(math.Floor(x0)))
		c1 := min(nx-1, int(math.Floor(x1)))
		for col := c0; col <= c1; col++ {
			a, b := math.Max(x0, float64(col)), math.Min(x1, float64(col+1))
			ya, yb := y0, y1
			if x1 > x0 {
				ya = y0 + (y1-y0)*(a-x0)/(x1-x0)
				yb = y0 + (y1-y0)*(b-x0)/(x1-x0)
			}
			cover(col, ya, yb)
		}
	}
	const half = 0.7 // half the line's thickness, pixels
	for _, l := range w.lines {
		havePrev := false
		var x0, y0 float64
		for i := range min(len(l.X), len(l.Y)) {
			if !finite(l.X[i], l.Y[i]) {
				havePrev = false
				continue
			}
			x1, y1 := px(l.X[i]), py(l.Y[i])
			if havePrev {
				segment(x0, y0, x1, y1)
			} else {
				segment(x1, y1, x1, y1)
			}
			x0, y0, havePrev = x1, y1, true
		}
		for _, col := range touched {
			r0 := max(0, int(math.Floor(lo[col]-half+0.5)))
			r1 := min(ny-1, int(math.Floor(hi[col]+half-0.5)))
			for r := r0; r <= r1; r++ {
				if k := &counts[r*nx+col]; *k < math.MaxUint16 {
					*k++
				}
			}
			lo[col], hi[col] = math.Inf(1), math.Inf(-1)
		}
		touched = touched[:0]
	}

	r, g, b, _ := w.color.RGBA()
	opacity := map[uint16]uint8{}
	img := image.NewNRGBA(image.Rect(0, 0, nx, ny))
	for i, k := range counts {
		if k == 0 {
			continue
		}
		a, ok := opacity[k]
		if !ok {
			a = uint8(math.Round(255 * (1 - math.Pow(1-w.alpha, float64(k)))))
			opacity[k] = a
		}
		img.Pix[4*i], img.Pix[4*i+1], img.Pix[4*i+2], img.Pix[4*i+3] = uint8(r>>8), uint8(g>>8), uint8(b>>8), a
	}
	c.DrawImage(c.Rectangle, img)
}

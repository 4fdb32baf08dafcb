package plots

import (
	"fmt"
	"image"
	"image/color"
	"math"
	"slices"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// CornerData is the input of NewCornerPlot.
type CornerData struct {
	// Title heads the figure ("" for none).
	Title string
	// Names are the parameters' names, used as axis labels.
	Names []string
	// Samples are the posterior draws, Samples[i][j] being parameter j of
	// draw i. Non-finite values are skipped (for a 2-D panel, the draw is
	// skipped when either of its two values is).
	Samples [][]float64
	// Truths, when not nil, gives a reference value per parameter drawn as
	// a line; NaN entries draw none.
	Truths []float64
	// Bins is the number of histogram bins per axis (0: 2 n^(1/3) for n
	// draws, between 8 and 48).
	Bins int
	// Levels are the probabilities enclosed by the 2-D contours, each in
	// (0, 1) (nil: 0.683 and 0.954, the mass within 1σ and 2σ of a 1-D
	// normal distribution).
	Levels []float64
	// Smooth is the standard deviation, in bins, of the Gaussian that
	// smooths the 2-D histograms before shading and contouring (0: 1 bin;
	// negative: no smoothing).
	Smooth float64
	// Color is the colour of histograms, shading and contours (nil: the
	// first arm colour, a deep blue).
	Color color.Color
}

// marginal holds one parameter's binned draws and summary.
type marginal struct {
	lo, hi     float64 // axis range
	q16, q50   float64
	q84        float64
	n          int       // finite draws
	hist       []float64 // counts per bin
	haveValues bool
}

// panel2D holds one pair's smoothed 2-D histogram and contour thresholds.
type panel2D struct {
	grid   []float64 // bins×bins, row-major in y then x
	max    float64
	levels []float64 // thresholds, descending probability order
}

// CornerPlot is a triangle plot of a posterior sample: each parameter's
// histogram on the diagonal and each pair's 2-D density (shaded histogram
// with contours enclosing the chosen probabilities) below it. The binning is
// done once, when it is made; drawing scales the text to the tile size.
type CornerPlot struct {
	data   CornerData
	bins   int
	levels []float64
	color  color.Color
	margs  []marginal
	pairs  [][]panel2D // pairs[i][j] for j < i
}

// NewCornerPlot bins the draws and returns the triangle plot.
//
// It returns an error when there are no names or no draws, when a draw's
// length differs from the number of names, when Truths has the wrong length,
// or when a level lies outside (0, 1).
func NewCornerPlot(d CornerData) (*CornerPlot, error) {
	np := len(d.Names)
	if np == 0 {
		return nil, fmt.Errorf("plots: corner plot: no parameter names")
	}
	if len(d.Samples) == 0 {
		return nil, fmt.Errorf("plots: corner plot: no draws")
	}
	for i, s := range d.Samples {
		if len(s) != np {
			return nil, fmt.Errorf("plots: corner plot: draw %d has %d values for %d parameters", i, len(s), np)
		}
	}
	if d.Truths != nil && len(d.Truths) != np {
		return nil, fmt.Errorf("plots: corner plot: %d truth values for %d parameters", len(d.Truths), np)
	}
	levels := d.Levels
	if levels == nil {
		levels = []float64{0.683, 0.954}
	}
	for _, l := range levels {
		if !(l > 0 && l < 1) {
			return nil, fmt.Errorf("plots: corner plot: contour level %g, want a probability in (0, 1)", l)
		}
	}
	levels = slices.Clone(levels)
	slices.Sort(levels)
	bins := d.Bins
	if bins <= 0 {
		bins = int(math.Round(2 * math.Cbrt(float64(len(d.Samples)))))
		bins = max(8, min(48, bins))
	}
	if bins > 1000 {
		return nil, fmt.Errorf("plots: corner plot: %d bins, want at most 1000", bins)
	}
	col := d.Color
	if col == nil {
		col = ArmColor(0)
	}
	t := &CornerPlot{data: d, bins: bins, levels: levels, color: col}
	t.bin()
	return t, nil
}

// bin computes the marginals and the pairs' smoothed histograms.
func (t *CornerPlot) bin() {
	np, ns, nb := len(t.data.Names), len(t.data.Samples), t.bins
	t.margs = make([]marginal, np)
	idx := make([][]int16, np) // bin of each draw, −1 outside or non-finite
	vals := make([]float64, 0, ns)
	for j := range np {
		vals = vals[:0]
		for _, s := range t.data.Samples {
			if finite(s[j]) {
				vals = append(vals, s[j])
			}
		}
		m := &t.margs[j]
		m.n = len(vals)
		if m.n == 0 {
			m.lo, m.hi = 0, 1
			m.q16, m.q50, m.q84 = math.NaN(), math.NaN(), math.NaN()
		} else {
			m.haveValues = true
			slices.Sort(vals)
			m.q16, m.q50, m.q84 = quantileSorted(vals, 0.16), quantileSorted(vals, 0.5), quantileSorted(vals, 0.84)
			// The axis spans the central 99.8% of the draws plus 5%, so
			// that a few strays do not squeeze the bulk.
			lo, hi := quantileSorted(vals, 0.001), quantileSorted(vals, 0.999)
			if tr := t.truth(j); finite(tr) {
				lo, hi = math.Min(lo, tr), math.Max(hi, tr)
			}
			if span := hi - lo; span > 0 {
				lo, hi = lo-0.05*span, hi+0.05*span
			} else {
				h := 0.01 * math.Abs(lo)
				if h == 0 {
					h = 1
				}
				lo, hi = lo-h, hi+h
			}
			m.lo, m.hi = lo, hi
		}
		m.hist = make([]float64, nb)
		idx[j] = make([]int16, ns)
		w := (m.hi - m.lo) / float64(nb)
		for i, s := range t.data.Samples {
			v := s[j]
			b := -1
			if finite(v) && v >= m.lo && v <= m.hi {
				b = min(int((v-m.lo)/w), nb-1)
				m.hist[b]++
			}
			idx[j][i] = int16(b)
		}
	}
	kernel := gaussKernel(t.smooth())
	t.pairs = make([][]panel2D, np)
	for i := range np {
		t.pairs[i] = make([]panel2D, i)
		for j := range i {
			g := make([]float64, nb*nb)
			xi, yi := idx[j], idx[i]
			for s := range ns {
				if x, y := xi[s], yi[s]; x >= 0 && y >= 0 {
					g[int(y)*nb+int(x)]++
				}
			}
			g = smooth2D(g, nb, kernel)
			pn := panel2D{grid: g}
			for _, v := range g {
				pn.max = math.Max(pn.max, v)
			}
			pn.levels = densityThresholds(g, t.levels)
			t.pairs[i][j] = pn
		}
	}
}

func (t *CornerPlot) smooth() float64 {
	switch {
	case t.data.Smooth == 0:
		return 1
	case t.data.Smooth < 0:
		return 0
	default:
		return t.data.Smooth
	}
}

func (t *CornerPlot) truth(j int) float64 {
	if t.data.Truths == nil {
		return math.NaN()
	}
	return t.data.Truths[j]
}

// quantileSorted returns the q-quantile of sorted, non-empty x by linear
// interpolation between order statistics (Hyndman & Fan 1996, Am. Stat. 50,
// 361, definition 7).
func quantileSorted(x []float64, q float64) float64 {
	h := q * float64(len(x)-1)
	i := int(math.Floor(h))
	if i >= len(x)-1 {
		return x[len(x)-1]
	}
	return x[i] + (h-float64(i))*(x[i+1]-x[i])
}

// gaussKernel returns a normalised Gaussian kernel of standard deviation
// sigma (in bins), truncated at 3σ; nil for sigma ≤ 0.
func gaussKernel(sigma float64) []float64 {
	if !(sigma > 0) {
		return nil
	}
	h := int(math.Ceil(3 * sigma))
	k := make([]float64, 2*h+1)
	var sum float64
	for i := range k {
		x := float64(i-h) / sigma
		k[i] = math.Exp(-0.5 * x * x)
		sum += k[i]
	}
	for i := range k {
		k[i] /= sum
	}
	return k
}

// smooth2D convolves the n×n grid g with the separable kernel k, treating
// cells outside the grid as empty (mass that would leave the grid is lost).
func smooth2D(g []float64, n int, k []float64) []float64 {
	if len(k) <= 1 {
		return g
	}
	h := len(k) / 2
	tmp := make([]float64, len(g))
	for y := range n {
		for x := range n {
			var s float64
			for d := -h; d <= h; d++ {
				if xx := x + d; xx >= 0 && xx < n {
					s += k[d+h] * g[y*n+xx]
				}
			}
			tmp[y*n+x] = s
		}
	}
	out := make([]float64, len(g))
	for y := range n {
		for x := range n {
			var s float64
			for d := -h; d <= h; d++ {
				if yy := y + d; yy >= 0 && yy < n {
					s += k[d+h] * tmp[yy*n+x]
				}
			}
			out[y*n+x] = s
		}
	}
	return out
}

// densityThresholds returns, for each enclosed probability p (ascending),
// the density level whose super-level set {g ≥ level} holds a fraction p of
// the grid's total: the highest-density region estimated from a histogram
// (common practice, no source). The level is set midway between the last
// cell inside and the first outside, so that a contour there separates
// them. Empty grids give no levels.
func densityThresholds(g []float64, probs []float64) []float64 {
	v := slices.Clone(g)
	slices.SortFunc(v, func(a, b float64) int {
		switch {
		case a > b:
			return -1
		case a < b:
			return 1
		}
		return 0
	})
	var total float64
	for _, x := range v {
		total += x
	}
	if !(total > 0) {
		return nil
	}
	out := make([]float64, 0, len(probs))
	var cum float64
	i := 0
	for _, p := range probs {
		for i < len(v) && cum < p*total {
			cum += v[i]
			i++
		}
		last := v[max(i-1, 0)]
		next := 0.0
		if i < len(v) {
			next = v[i]
		}
		out = append(out, (last+next)/2)
	}
	return out
}

// Draw draws the triangle plot onto c.
func (t *CornerPlot) Draw(c draw.Canvas) {
	np := len(t.data.Names)
	c.SetColor(color.White)
	c.Fill(c.Rectangle.Path())
	w, h := c.Max.X-c.Min.X, c.Max.Y-c.Min.Y
	tile := min(w, h) / vg.Length(np)
	base := max(5.5, min(11, tile/8))
	if t.data.Title != "" {
		sty := textStyle(base*1.4, inkColor, draw.XCenter, draw.YTop)
		c.FillText(sty, vg.Point{X: c.Center().X, Y: c.Max.Y - base*0.4}, t.data.Title)
		c.Max.Y -= sty.Height(t.data.Title) + base*0.8
	}
	margin := base * 0.8
	c = draw.Crop(c, margin, -margin, margin, -margin)

	plots := make([][]*plot.Plot, np)
	for i := range np {
		plots[i] = make([]*plot.Plot, np)
		for j := 0; j <= i; j++ {
			plots[i][j] = t.tile(i, j, base, tile)
		}
	}
	gap := base * 0.25
	cv := plot.Align(plots, draw.Tiles{Rows: np, Cols: np, PadX: gap, PadY: gap}, c)
	var xs, ys []tileName
	for i := range np {
		for j := 0; j <= i; j++ {
			plots[i][j].Draw(cv[i][j])
		}
		xs = append(xs, tileName{plots[np-1][i], cv[np-1][i], t.data.Names[i]})
		if i > 0 {
			ys = append(ys, tileName{plots[i][0], cv[i][0], t.data.Names[i]})
		}
	}
	nameSty := plots[0][0].X.Label.TextStyle
	drawXNames(c, xs, nameSty)
	drawYNames(c, ys, nameSty)
	if np >= 2 {
		t.note(cv, base)
	}
}

// Save writes the triangle plot to path; see the package function Save.
func (t *CornerPlot) Save(path string, width, height vg.Length) error {
	return Save(t, path, width, height)
}

// note writes what the marks mean in the empty upper-right triangle.
func (t *CornerPlot) note(cv [][]draw.Canvas, base vg.Length) {
	np := len(cv)
	tr := cv[0][np-1]
	var pct string
	for i, l := range t.levels {
		if i > 0 {
			if i == len(t.levels)-1 {
				pct += " and "
			} else {
				pct += ", "
			}
		}
		pct += fmt.Sprintf("%.3g%%", 100*l)
	}
	lines := []string{
		fmt.Sprintf("%d draws", len(t.data.Samples)),
		"contours enclose " + pct,
		"dashed: median and 16–84% range",
	}
	if t.data.Truths != nil {
		lines = append(lines, "solid lines: reference values")
	}
	sty := textStyle(base, inkColor, draw.XRight, draw.YTop)
	y := tr.Max.Y
	for _, l := range lines {
		tr.FillText(sty, vg.Point{X: tr.Max.X, Y: y}, l)
		y -= sty.Height(l) * 1.25
	}
}

// tile builds the plot of row i, column j (j ≤ i), for tiles of about the
// given side and text of the given base size.
func (t *CornerPlot) tile(i, j int, base, tile vg.Length) *plot.Plot {
	np := len(t.data.Names)
	p := newPlot(base)
	p.BackgroundColor = nil
	nt := max(3, min(5, int(tile/45)))
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Padding = 0
		a.LineStyle.Width = 0
		a.Tick.Length = base * 0.35
	}
	mx := t.margs[j]
	p.X.Min, p.X.Max = mx.lo, mx.hi
	p.X.Tick.Marker = niceTicks{n: nt, margin: 0.05, noLabels: i != np-1}
	if i == np-1 {
		p.X.Label.Text = namePlaceholder
	}
	if i == j {
		top := 1.0
		for _, v := range mx.hist {
			top = math.Max(top, v)
		}
		p.Y.Min, p.Y.Max = 0, top*1.12
		p.Y.Tick.Marker = plot.ConstantTicks(nil)
		p.Y.Tick.Length = 0
		p.Add(hist1D{m: mx, color: t.color}, quantileLines{m: mx}, frame{})
		if tr := t.truth(j); finite(tr) {
			p.Add(truthLines{x: tr, y: math.NaN()})
		}
		return p
	}
	my := t.margs[i]
	p.Y.Min, p.Y.Max = my.lo, my.hi
	p.Y.Tick.Marker = niceTicks{n: nt, margin: 0.05, noLabels: j != 0}
	if j == 0 {
		p.Y.Label.Text = namePlaceholder
	}
	pn := t.pairs[i][j]
	p.Add(density2D{pn: pn, bins: t.bins, x: mx, y: my, color: t.color})
	if len(pn.levels) > 0 {
		p.Add(contourLines{t.contours(pn, mx, my)})
	}
	p.Add(frame{})
	if tx, ty := t.truth(j), t.truth(i); finite(tx) || finite(ty) {
		p.Add(truthLines{x: tx, y: ty})
	}
	return p
}

// contours returns the contour plotter of a 2-D panel, on a grid of cell
// centres edged with empty cells placed on the axis limits, so that every
// contour closes inside the panel.
func (t *CornerPlot) contours(pn panel2D, mx, my marginal) *plotter.Contour {
	g := paddedGrid{n: t.bins, g: pn.grid, x: mx, y: my}
	lines := make([]draw.LineStyle, len(pn.levels))
	for k := range lines {
		// The innermost region (smallest probability) is drawn boldest.
		lines[k] = draw.LineStyle{Color: mix(t.color, color.Black, 0.35), Width: vg.Points(1.0 - 0.25*float64(k))}
	}
	// plotter.Contour sorts its levels ascending (outermost first) when it
	// draws; order the styles to match.
	lv := slices.Clone(pn.levels)
	slices.Reverse(lv)
	slices.Reverse(lines)
	return &plotter.Contour{GridXYZ: g, Levels: lv, LineStyles: lines, Min: math.Inf(-1), Max: math.Inf(1)}
}

// contourLines draws a plotter.Contour without its glyph boxes, which
// would pad the panel by a few points at every grid node.
type contourLines struct{ c *plotter.Contour }

func (l contourLines) Plot(c draw.Canvas, p *plot.Plot) { l.c.Plot(c, p) }

// paddedGrid adapts a panel's histogram to plotter.GridXYZ.
type paddedGrid struct {
	n    int
	g    []float64
	x, y marginal
}

func (p paddedGrid) Dims() (c, r int) { return p.n + 2, p.n + 2 }

func (p paddedGrid) Z(c, r int) float64 {
	if c == 0 || r == 0 || c == p.n+1 || r == p.n+1 {
		return 0
	}
	return p.g[(r-1)*p.n+(c-1)]
}

func (p paddedGrid) X(c int) float64 { return edgeCentre(c, p.n, p.x.lo, p.x.hi) }
func (p paddedGrid) Y(r int) float64 { return edgeCentre(r, p.n, p.y.lo, p.y.hi) }

// edgeCentre is the coordinate of padded index k: the axis limits at 0 and
// n+1, bin centres between.
func edgeCentre(k, n int, lo, hi float64) float64 {
	switch k {
	case 0:
		return lo
	case n + 1:
		return hi
	}
	return lo + (float64(k)-0.5)*(hi-lo)/float64(n)
}

// hist1D draws a marginal histogram: a pale fill under a step outline.
type hist1D struct {
	m     marginal
	color color.Color
}

func (h hist1D) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	nb := len(h.m.hist)
	if nb == 0 || !h.m.haveValues {
		return
	}
	w := (h.m.hi - h.m.lo) / float64(nb)
	pts := []vg.Point{{X: trX(h.m.lo), Y: trY(0)}}
	for b, v := range h.m.hist {
		x0, x1 := h.m.lo+float64(b)*w, h.m.lo+float64(b+1)*w
		pts = append(pts, vg.Point{X: trX(x0), Y: trY(v)}, vg.Point{X: trX(x1), Y: trY(v)})
	}
	pts = append(pts, vg.Point{X: trX(h.m.hi), Y: trY(0)})
	c.FillPolygon(withAlpha(h.color, 0.18), c.ClipPolygonXY(pts))
	c.StrokeLines(draw.LineStyle{Color: h.color, Width: 1}, c.ClipLinesXY(pts)...)
}

// quantileLines marks the median and the 16th and 84th percentiles on a
// histogram.
type quantileLines struct{ m marginal }

func (q quantileLines) Plot(c draw.Canvas, p *plot.Plot) {
	trX, _ := p.Transforms(&c)
	sty := draw.LineStyle{Color: inkColor, Width: 0.7, Dashes: []vg.Length{2.5, 1.8}}
	for _, v := range []float64{q.m.q16, q.m.q50, q.m.q84} {
		if finite(v) {
			x := trX(v)
			if c.ContainsX(x) {
				c.StrokeLine2(sty, x, c.Min.Y, x, c.Max.Y)
			}
		}
	}
}

// truthLines draws reference values across a panel: a vertical line at x
// and a horizontal one at y (NaN for none).
type truthLines struct{ x, y float64 }

func (t truthLines) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	sty := draw.LineStyle{Color: armPalette[1], Width: 0.9}
	if finite(t.x) {
		if x := trX(t.x); c.ContainsX(x) {
			c.StrokeLine2(sty, x, c.Min.Y, x, c.Max.Y)
		}
	}
	if finite(t.y) {
		if y := trY(t.y); c.ContainsY(y) {
			c.StrokeLine2(sty, c.Min.X, y, c.Max.X, y)
		}
	}
}

// frame outlines the data area.
type frame struct{}

func (frame) Plot(c draw.Canvas, _ *plot.Plot) {
	c.SetLineStyle(draw.LineStyle{Color: inkColor, Width: 0.6})
	c.Stroke(c.Rectangle.Path())
}

// density2D shades a panel's smoothed 2-D histogram from white (empty) to
// the figure's colour (densest).
type density2D struct {
	pn    panel2D
	bins  int
	x, y  marginal
	color color.Color
}

func (d density2D) Plot(c draw.Canvas, p *plot.Plot) {
	if !(d.pn.max > 0) {
		return
	}
	n := d.bins
	img := image.NewNRGBA(image.Rect(0, 0, n, n))
	for y := range n {
		for x := range n {
			v := d.pn.grid[y*n+x] / d.pn.max
			a := math.Pow(v, 0.6) * 0.75
			img.SetNRGBA(x, n-1-y, color.NRGBA(mixN(d.color, a)))
		}
	}
	trX, trY := p.Transforms(&c)
	rect := vg.Rectangle{
		Min: vg.Point{X: trX(d.x.lo), Y: trY(d.y.lo)},
		Max: vg.Point{X: trX(d.x.hi), Y: trY(d.y.hi)},
	}
	c.DrawImage(rect, img)
}

// mixN returns colour c blended with white: a = 0 is white, 1 is c.
func mixN(c color.Color, a float64) color.NRGBA {
	m := mix(color.White, c, a)
	return color.NRGBA{R: m.R, G: m.G, B: m.B, A: 0xFF}
}

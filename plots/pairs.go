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

// PairsData is the input of NewPairsPlot.
type PairsData struct {
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
	q025, q975 float64
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

// PairsPlot shows the one- and two-dimensional marginals of a posterior
// sample: on the diagonal, each parameter's density (a smoothed histogram)
// with its central 68% shaded and, beneath it, a bar marking the median, the
// 68% interval (thick) and the 95% interval (thin); below the diagonal, each
// pair's 2-D density (shaded, with contours enclosing the chosen
// probabilities). The binning is done once, when it is made; drawing scales
// the text to the tile size.
type PairsPlot struct {
	data   PairsData
	bins   int
	levels []float64
	color  color.Color
	margs  []marginal
	pairs  [][]panel2D // pairs[i][j] for j < i
}

// NewPairsPlot bins the draws and returns the triangle plot.
//
// It returns an error when there are no names or no draws, when a draw's
// length differs from the number of names, when Truths has the wrong length,
// or when a level lies outside (0, 1).
func NewPairsPlot(d PairsData) (*PairsPlot, error) {
	np := len(d.Names)
	if np == 0 {
		return nil, fmt.Errorf("plots: pairs plot: no parameter names")
	}
	if len(d.Samples) == 0 {
		return nil, fmt.Errorf("plots: pairs plot: no draws")
	}
	for i, s := range d.Samples {
		if len(s) != np {
			return nil, fmt.Errorf("plots: pairs plot: draw %d has %d values for %d parameters", i, len(s), np)
		}
	}
	if d.Truths != nil && len(d.Truths) != np {
		return nil, fmt.Errorf("plots: pairs plot: %d truth values for %d parameters", len(d.Truths), np)
	}
	levels := d.Levels
	if levels == nil {
		levels = []float64{0.683, 0.954}
	}
	for _, l := range levels {
		if !(l > 0 && l < 1) {
			return nil, fmt.Errorf("plots: pairs plot: contour level %g, want a probability in (0, 1)", l)
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
		return nil, fmt.Errorf("plots: pairs plot: %d bins, want at most 1000", bins)
	}
	col := d.Color
	if col == nil {
		col = ArmColor(0)
	}
	t := &PairsPlot{data: d, bins: bins, levels: levels, color: col}
	t.bin()
	return t, nil
}

// bin computes the marginals and the pairs' smoothed histograms.
func (t *PairsPlot) bin() {
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
			m.q025, m.q975 = math.NaN(), math.NaN()
		} else {
			m.haveValues = true
			slices.Sort(vals)
			m.q16, m.q50, m.q84 = quantileSorted(vals, 0.16), quantileSorted(vals, 0.5), quantileSorted(vals, 0.84)
			m.q025, m.q975 = quantileSorted(vals, 0.025), quantileSorted(vals, 0.975)
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

func (t *PairsPlot) smooth() float64 {
	switch {
	case t.data.Smooth == 0:
		return 1
	case t.data.Smooth < 0:
		return 0
	default:
		return t.data.Smooth
	}
}

func (t *PairsPlot) truth(j int) float64 {
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
func (t *PairsPlot) Draw(c draw.Canvas) {
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
func (t *PairsPlot) Save(path string, width, height vg.Length) error {
	return Save(t, path, width, height)
}

// note writes what the marks mean in the empty upper-right triangle.
func (t *PairsPlot) note(cv [][]draw.Canvas, base vg.Length) {
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
		"shaded: central 68%",
		"bar: median, 68% and 95% intervals",
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
func (t *PairsPlot) tile(i, j int, base, tile vg.Length) *plot.Plot {
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
		// The lowest sixth of the tile holds the interval bar.
		p.Y.Min, p.Y.Max = -top*0.22, top*1.08
		p.Y.Tick.Marker = plot.ConstantTicks(nil)
		p.Y.Tick.Length = 0
		p.Add(density1D{m: mx, color: t.color}, intervalBar{m: mx, y: -top * 0.11, color: t.color}, frame{})
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
func (t *PairsPlot) contours(pn panel2D, mx, my marginal) *plotter.Contour {
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

// density1D draws a marginal density: the histogram smoothed by a Gaussian of
// one bin, as a curve through the bin centres over a pale fill, with the
// central 68% (between the 16th and 84th percentiles) filled deeper.
type density1D struct {
	m     marginal
	color color.Color
}

// curve returns the smoothed density at the bin centres, with the axis ends.
func (h density1D) curve() (xs, ys []float64) {
	nb := len(h.m.hist)
	sm := make([]float64, nb)
	k := gaussKernel(1)
	r := len(k) / 2
	for b := range nb {
		var s, wsum float64
		for i, w := range k {
			if j := b + i - r; j >= 0 && j < nb {
				s += w * h.m.hist[j]
				wsum += w
			}
		}
		sm[b] = s / wsum
	}
	w := (h.m.hi - h.m.lo) / float64(nb)
	xs, ys = []float64{h.m.lo}, []float64{sm[0]}
	for b, v := range sm {
		xs, ys = append(xs, h.m.lo+(float64(b)+0.5)*w), append(ys, v)
	}
	return append(xs, h.m.hi), append(ys, sm[nb-1])
}

func (h density1D) Plot(c draw.Canvas, p *plot.Plot) {
	if len(h.m.hist) == 0 || !h.m.haveValues {
		return
	}
	trX, trY := p.Transforms(&c)
	xs, ys := h.curve()
	// area returns the polygon under the curve between a and b.
	area := func(a, b float64) []vg.Point {
		at := func(x float64) float64 {
			for i := 1; i < len(xs); i++ {
				if x <= xs[i] {
					f := (x - xs[i-1]) / (xs[i] - xs[i-1])
					return ys[i-1] + f*(ys[i]-ys[i-1])
				}
			}
			return ys[len(ys)-1]
		}
		pts := []vg.Point{{X: trX(a), Y: trY(0)}, {X: trX(a), Y: trY(at(a))}}
		for i, x := range xs {
			if x > a && x < b {
				pts = append(pts, vg.Point{X: trX(x), Y: trY(ys[i])})
			}
		}
		return append(pts, vg.Point{X: trX(b), Y: trY(at(b))}, vg.Point{X: trX(b), Y: trY(0)})
	}
	c.FillPolygon(withAlpha(h.color, 0.12), c.ClipPolygonXY(area(h.m.lo, h.m.hi)))
	if finite(h.m.q16, h.m.q84) {
		c.FillPolygon(withAlpha(h.color, 0.42), c.ClipPolygonXY(area(h.m.q16, h.m.q84)))
	}
	line := make([]vg.Point, len(xs))
	for i := range xs {
		line[i] = vg.Point{X: trX(xs[i]), Y: trY(ys[i])}
	}
	c.StrokeLines(draw.LineStyle{Color: mix(h.color, color.Black, 0.2), Width: 1.1}, c.ClipLinesXY(line)...)
}

// intervalBar marks a marginal's median (an open dot), 68% interval (a thick
// bar) and 95% interval (a thin bar) at height y.
type intervalBar struct {
	m     marginal
	y     float64
	color color.Color
}

func (b intervalBar) Plot(c draw.Canvas, p *plot.Plot) {
	if !finite(b.m.q025, b.m.q16, b.m.q50, b.m.q84, b.m.q975) {
		return
	}
	trX, trY := p.Transforms(&c)
	y := trY(b.y)
	ink := mix(b.color, color.Black, 0.3)
	seg := func(lo, hi float64, w vg.Length) {
		pts := []vg.Point{{X: trX(lo), Y: y}, {X: trX(hi), Y: y}}
		c.StrokeLines(draw.LineStyle{Color: ink, Width: w}, c.ClipLinesX(pts)...)
	}
	seg(b.m.q025, b.m.q975, 0.9)
	seg(b.m.q16, b.m.q84, 3.2)
	if x := trX(b.m.q50); c.ContainsX(x) {
		fillCircle(c, vg.Point{X: x, Y: y}, 2.6, color.White, ink, 1.1)
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

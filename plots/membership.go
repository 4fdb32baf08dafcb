package plots

import (
	"fmt"
	"image"
	"image/color"
	"math"
	"sort"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// MemberSource is one source's row in the membership chart.
type MemberSource struct {
	// Name labels the row.
	Name string
	// Prob holds the membership probabilities: Prob[0] the field, Prob[k]
	// arm k. Non-finite and negative entries count as 0.
	Prob []float64
	// TiedArm is k ≥ 1 when the catalog label ties the source to arm k (its
	// bar is then arm k alone unless Prob says otherwise), 0 when free.
	TiedArm int
}

// MembershipData is the input of NewMembershipPlot.
type MembershipData struct {
	// Title heads the figure ("" for "Arm membership").
	Title string
	// Arms name and colour the arms (arm k is Arms[k−1]).
	Arms []Arm
	// Sources are the rows.
	Sources []MemberSource
	// KeepOrder draws the rows in the given order; by default they are
	// grouped by most probable component (arms in order, then the field)
	// and sorted by decreasing probability within each group.
	KeepOrder bool
	// MinRowHeight is the least height of a row (0: 8 pt); the rows are
	// spread over as many columns as the height then requires.
	MinRowHeight vg.Length
	// CompactAbove is the number of sources beyond which the chart is drawn
	// compact (0: 300; negative: never): one thin vertical column per
	// source, stacked from 0 to 1 in the components' colours, the sources
	// grouped by most probable component and named by group only.
	CompactAbove int
}

// Compact reports whether the chart is drawn compact (see CompactAbove).
func (m *MembershipPlot) Compact() bool {
	lim := m.data.CompactAbove
	if lim == 0 {
		lim = 300
	}
	return lim > 0 && len(m.rows) > lim
}

// MembershipPlot is a chart of stacked horizontal bars, one per source,
// splitting its unit length among the arms (in order) and the field (last,
// grey). Rows fill columns from top to bottom, as many columns as the
// canvas height requires.
type MembershipPlot struct {
	data   MembershipData
	colors []color.Color
	rows   []MemberSource
}

// NewMembershipPlot orders the sources and returns the chart. It returns an
// error when a source's membership does not match the arms.
func NewMembershipPlot(d MembershipData) (*MembershipPlot, error) {
	if err := checkSources(len(d.Arms), len(d.Sources), func(i int) (string, []float64, int) {
		return d.Sources[i].Name, d.Sources[i].Prob, d.Sources[i].TiedArm
	}); err != nil {
		return nil, fmt.Errorf("plots: membership chart: %w", err)
	}
	m := &MembershipPlot{data: d, colors: armColors(d.Arms)}
	m.rows = append([]MemberSource(nil), d.Sources...)
	if !d.KeepOrder {
		nArms := len(d.Arms)
		group := func(s MemberSource) int {
			k, _ := MostProbable(s.Prob, s.TiedArm)
			if k == 0 {
				return nArms + 1 // the field last
			}
			return k
		}
		sort.SliceStable(m.rows, func(a, b int) bool {
			ra, rb := m.rows[a], m.rows[b]
			ga, gb := group(ra), group(rb)
			if ga != gb {
				return ga < gb
			}
			_, pa := MostProbable(ra.Prob, ra.TiedArm)
			_, pb := MostProbable(rb.Prob, rb.TiedArm)
			return pa > pb
		})
	}
	return m, nil
}

// shares returns the lengths of a source's bar segments: arms 1..K, then
// the field.
func shares(s MemberSource, nArms int) []float64 {
	out := make([]float64, nArms+1)
	clean := func(v float64) float64 {
		if !(v > 0) || math.IsInf(v, 0) {
			return 0
		}
		return v
	}
	nonzero := false
	for k := 1; k <= nArms && k < len(s.Prob); k++ {
		out[k-1] = clean(s.Prob[k])
		nonzero = nonzero || out[k-1] > 0
	}
	if len(s.Prob) > 0 {
		out[nArms] = clean(s.Prob[0])
		nonzero = nonzero || out[nArms] > 0
	}
	if !nonzero && s.TiedArm >= 1 && s.TiedArm <= nArms {
		out[s.TiedArm-1] = 1
	}
	return out
}

// Draw draws the chart onto c.
func (m *MembershipPlot) Draw(c draw.Canvas) {
	c.SetColor(color.White)
	c.Fill(c.Rectangle.Path())
	base := vg.Length(10)
	title := m.data.Title
	if title == "" {
		title = "Arm membership"
	}
	tsty := textStyle(base*1.2, inkColor, draw.XCenter, draw.YTop)
	c.FillText(tsty, vg.Point{X: c.Center().X, Y: c.Max.Y - base*0.4}, title)
	c.Max.Y -= tsty.Height(title) + base*0.8
	c.Max.Y -= m.drawKey(c, base*0.85) + base*0.6
	c = draw.Crop(c, base*0.6, -base*1.2, base*0.4, 0)

	n := len(m.rows)
	if n == 0 {
		sty := textStyle(base, inkColor, draw.XCenter, draw.YCenter)
		c.FillText(sty, c.Center(), "no sources")
		return
	}
	if m.Compact() {
		m.drawCompact(c, base)
		return
	}
	minRow := m.data.MinRowHeight
	if minRow <= 0 {
		minRow = 8
	}
	axisH := base * 3.2 // the probability axis under each column
	avail := c.Max.Y - c.Min.Y - axisH
	perCol := max(1, int(avail/minRow))
	cols := (n + perCol - 1) / perCol
	perCol = (n + cols - 1) / cols
	rowH := avail / vg.Length(perCol)
	if maxRow := 3 * minRow; rowH > maxRow {
		// Few rows: keep the bars slim and the chart at the top.
		rowH = maxRow
		c.Min.Y = c.Max.Y - axisH - rowH*vg.Length(perCol)
	}
	fs := max(4.5, min(9, rowH*0.72))

	plots := make([][]*plot.Plot, 1)
	plots[0] = make([]*plot.Plot, cols)
	for col := range cols {
		lo, hi := col*perCol, min(n, (col+1)*perCol)
		plots[0][col] = m.column(m.rows[lo:hi], perCol, base, fs)
	}
	cv := plot.Align(plots, draw.Tiles{Rows: 1, Cols: cols, PadX: base * 1.5}, c)
	var xs []tileName
	for col := range cols {
		plots[0][col].Draw(cv[0][col])
		xs = append(xs, tileName{plots[0][col], cv[0][col], "probability"})
	}
	drawXNames(c, xs, textStyle(base*0.9, inkColor, draw.XCenter, draw.YBottom))
}

// Save writes the chart to path; see the package function Save.
func (m *MembershipPlot) Save(path string, width, height vg.Length) error {
	return Save(m, path, width, height)
}

// column builds one column of rows; perCol fixes the row spacing so that
// all columns share it.
func (m *MembershipPlot) column(rows []MemberSource, perCol int, base, fs vg.Length) *plot.Plot {
	p := newPlot(base * 0.9)
	p.BackgroundColor = nil
	p.X.Min, p.X.Max = 0, 1.07
	p.X.Tick.Marker = plot.TickerFunc(func(lo, hi float64) []plot.Tick {
		return []plot.Tick{{Value: 0, Label: "0"}, {Value: 0.25}, {Value: 0.5, Label: "0.5"}, {Value: 0.75}, {Value: 1, Label: "1"}}
	})
	p.X.Label.Text = namePlaceholder
	p.X.Padding = 0
	p.X.LineStyle.Width = 0
	p.Y.Min, p.Y.Max = -0.5, float64(perCol)-0.5
	ticks := make([]plot.Tick, len(rows))
	for i, r := range rows {
		ticks[i] = plot.Tick{Value: float64(perCol - 1 - i), Label: r.Name}
	}
	p.Y.Tick.Marker = plot.ConstantTicks(ticks)
	p.Y.Tick.Label.Font = sans(fs)
	p.Y.Tick.Length = 0
	p.Y.LineStyle.Width = 0
	p.Y.Padding = fs * 0.2
	p.Add(stackedBars{rows: rows, top: perCol - 1, colors: m.colors})
	return p
}

// stackedBars draws one bar per row, row i at y = top − i, split among the
// arms and the field; tied sources get a dark diamond past the bar's end.
type stackedBars struct {
	rows   []MemberSource
	top    int
	colors []color.Color
}

func (s stackedBars) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	nArms := len(s.colors)
	rowH := trY(1) - trY(0)
	half := rowH * 0.4
	for i, r := range s.rows {
		y := trY(float64(s.top - i))
		x := 0.0
		for k, v := range shares(r, nArms) {
			if v <= 0 {
				continue
			}
			x1 := math.Min(1, x+v)
			col := FieldColor
			if k < nArms {
				col = s.colors[k]
			}
			rect := vg.Rectangle{Min: vg.Point{X: trX(x), Y: y - half}, Max: vg.Point{X: trX(x1), Y: y + half}}
			c.SetColor(col)
			c.Fill(rect.Path())
			x = x1
		}
		if r.TiedArm >= 1 {
			fillDiamond(c, vg.Point{X: trX(1.035), Y: y}, min(half*1.1, 4), inkColor, nil, 0)
		}
	}
	c.StrokeLine2(draw.LineStyle{Color: inkColor, Width: 0.6}, trX(0), c.Min.Y, trX(0), c.Max.Y)
}

// drawKey writes the colour key in one centred line (wrapping when needed)
// at the top of c and returns its height.
func (m *MembershipPlot) drawKey(c draw.Canvas, fs vg.Length) vg.Length {
	type item struct {
		label string
		mark  func(pt vg.Point)
	}
	sw := fs * 0.9
	swatch := func(col color.Color) func(pt vg.Point) {
		return func(pt vg.Point) {
			r := vg.Rectangle{Min: vg.Point{X: pt.X, Y: pt.Y - sw/2}, Max: vg.Point{X: pt.X + sw, Y: pt.Y + sw/2}}
			c.SetColor(col)
			c.Fill(r.Path())
		}
	}
	var items []item
	for k, a := range m.data.Arms {
		items = append(items, item{a.Name, swatch(m.colors[k])})
	}
	items = append(items, item{"field", swatch(FieldColor)})
	if !m.Compact() {
		items = append(items, item{"tied by catalog label", func(pt vg.Point) {
			fillDiamond(c, vg.Point{X: pt.X + sw/2, Y: pt.Y}, sw*0.55, inkColor, nil, 0)
		}})
	}
	sty := textStyle(fs, inkColor, draw.XLeft, draw.YCenter)
	gap, inner := fs*1.4, fs*0.35
	width := func(it item) vg.Length { return sw + inner + sty.Width(it.label) }
	// Break into lines that fit.
	var lines [][]item
	var cur []item
	var w vg.Length
	avail := c.Max.X - c.Min.X - fs*2
	for _, it := range items {
		iw := width(it)
		if len(cur) > 0 && w+gap+iw > avail {
			lines = append(lines, cur)
			cur, w = nil, 0
		}
		if len(cur) > 0 {
			w += gap
		}
		cur = append(cur, it)
		w += iw
	}
	lines = append(lines, cur)
	lh := fs * 1.5
	for li, line := range lines {
		var lw vg.Length
		for i, it := range line {
			if i > 0 {
				lw += gap
			}
			lw += width(it)
		}
		x := c.Center().X - lw/2
		y := c.Max.Y - lh*vg.Length(li) - lh/2
		for _, it := range line {
			it.mark(vg.Point{X: x, Y: y})
			c.FillText(sty, vg.Point{X: x + sw + inner, Y: y}, it.label)
			x += width(it) + gap
		}
	}
	return lh * vg.Length(len(lines))
}

// drawCompact draws every source as one thin column of the stacked chart, the
// columns side by side in the chart's order, with each group's extent and
// count marked beneath.
func (m *MembershipPlot) drawCompact(c draw.Canvas, base vg.Length) {
	nArms := len(m.data.Arms)
	p := newPlot(base)
	p.BackgroundColor = nil
	n := len(m.rows)
	p.X.Min, p.X.Max = 0, float64(n)
	p.Y.Min, p.Y.Max = 0, 1
	p.Y.Label.Text = "probability"
	p.X.Label.Text = fmt.Sprintf("%d sources, grouped by most probable component and sorted by its probability", n)
	p.X.Tick.Marker = plot.ConstantTicks(nil)
	p.X.Label.Padding = base * 1.7 // room for the groups' names
	p.X.Padding, p.Y.Padding = 0, 0
	p.Y.Tick.Marker = plot.TickerFunc(func(lo, hi float64) []plot.Tick {
		return []plot.Tick{{Value: 0, Label: "0"}, {Value: 0.25}, {Value: 0.5, Label: "0.5"}, {Value: 0.75}, {Value: 1, Label: "1"}}
	})
	group := func(s MemberSource) int {
		k, _ := MostProbable(s.Prob, s.TiedArm)
		return k
	}
	p.Add(compactColumns{rows: m.rows, colors: m.colors, nArms: nArms}, frame{})
	// Group boundaries and labels under the axis.
	type span struct{ k, lo, hi int }
	var spans []span
	for i, r := range m.rows {
		k := group(r)
		if len(spans) == 0 || spans[len(spans)-1].k != k {
			spans = append(spans, span{k, i, i + 1})
		} else {
			spans[len(spans)-1].hi = i + 1
		}
	}
	p.Add(groupMarks{names: m.groupNames(), spans: func() [][3]int {
		out := make([][3]int, len(spans))
		for i, s := range spans {
			out[i] = [3]int{s.k, s.lo, s.hi}
		}
		return out
	}(), fs: base * 0.8})
	c = draw.Crop(c, 0, 0, base*1.6, 0)
	p.Draw(c)
}

func (m *MembershipPlot) groupNames() []string {
	out := []string{"field"}
	for _, a := range m.data.Arms {
		out = append(out, a.Name)
	}
	return out
}

// compactColumns draws one column per source as an image: one pixel column
// per source, stacked bottom-up from its most probable component, then the
// others in arm order with the field last.
type compactColumns struct {
	rows   []MemberSource
	colors []color.Color
	nArms  int
}

func (s compactColumns) Plot(c draw.Canvas, p *plot.Plot) {
	const h = 200 // pixel rows: probabilities to 0.005
	n := len(s.rows)
	img := image.NewNRGBA(image.Rect(0, 0, n, h))
	order := make([]int, 0, s.nArms+1)
	for i, r := range s.rows {
		y := 0.0
		sh := shares(r, s.nArms)
		best, _ := MostProbable(r.Prob, r.TiedArm)
		first := s.nArms // the field's share is last in sh
		if best > 0 {
			first = best - 1
		}
		order = append(order[:0], first)
		for k := range sh {
			if k != first {
				order = append(order, k)
			}
		}
		for _, k := range order {
			v := sh[k]
			col := FieldColor
			if k < s.nArms {
				col = s.colors[k]
			}
			nc := color.NRGBAModel.Convert(col).(color.NRGBA)
			nc.A = 0xFF
			y0, y1 := int(math.Round(y*h)), int(math.Round(math.Min(1, y+v)*h))
			for py := y0; py < y1; py++ {
				img.SetNRGBA(i, h-1-py, nc)
			}
			y += v
		}
	}
	trX, trY := p.Transforms(&c)
	c.DrawImage(vg.Rectangle{Min: vg.Point{X: trX(0), Y: trY(0)}, Max: vg.Point{X: trX(float64(n)), Y: trY(1)}}, img)
}

// groupMarks writes each group's name and count under the chart and separates
// the groups by lines.
type groupMarks struct {
	names []string
	spans [][3]int // component, first index, one past the last
	fs    vg.Length
}

func (g groupMarks) Plot(c draw.Canvas, p *plot.Plot) {
	trX, _ := p.Transforms(&c)
	sty := textStyle(g.fs, inkColor, draw.XCenter, draw.YTop)
	for i, s := range g.spans {
		x0, x1 := trX(float64(s[1])), trX(float64(s[2]))
		if i > 0 {
			c.StrokeLine2(draw.LineStyle{Color: color.White, Width: 1.2}, x0, c.Min.Y, x0, c.Max.Y)
		}
		label := fmt.Sprintf("%s (%d)", g.names[s[0]], s[2]-s[1])
		if sty.Width(label) < x1-x0+g.fs*2 {
			c.FillText(sty, vg.Point{X: (x0 + x1) / 2, Y: c.Min.Y - g.fs*0.3}, label)
		}
	}
}

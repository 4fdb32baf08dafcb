package plots

import (
	"image/color"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Arm names a spiral arm and the colour it is drawn in across all figures.
type Arm struct {
	// Name is the arm's name as shown in labels and legends.
	Name string
	// Color is the arm's colour; nil means ArmColor of the arm's position
	// in the figure's list of arms.
	Color color.Color
}

// armPalette is the colour-blind-safe palette of Okabe & Ito (2008, "Color
// Universal Design", https://jfly.uni-koeln.de/color/), reordered so that the
// colours that read best as thin lines on white come first; its yellow is
// left out because it does not show on a white page.
var armPalette = []color.RGBA{
	{R: 0x00, G: 0x72, B: 0xB2, A: 0xFF}, // blue
	{R: 0xD5, G: 0x5E, B: 0x00, A: 0xFF}, // vermillion
	{R: 0x00, G: 0x9E, B: 0x73, A: 0xFF}, // bluish green
	{R: 0xCC, G: 0x79, B: 0xA7, A: 0xFF}, // reddish purple
	{R: 0xE6, G: 0x9F, B: 0x00, A: 0xFF}, // orange
	{R: 0x56, G: 0xB4, B: 0xE9, A: 0xFF}, // sky blue
	{R: 0x6A, G: 0x3D, B: 0x9A, A: 0xFF}, // violet (added for a seventh arm)
}

// FieldColor is the colour of sources assigned to no arm (the field
// component).
var FieldColor color.Color = color.RGBA{R: 0x8C, G: 0x8C, B: 0x8C, A: 0xFF}

// inkColor is the colour of axes, text and neutral marks.
var inkColor = color.RGBA{R: 0x22, G: 0x22, B: 0x22, A: 0xFF}

// ArmColor returns the default colour of the i-th arm (0-based) of a figure:
// the Okabe–Ito colours in a fixed order, repeated darker beyond the
// seventh arm.
func ArmColor(i int) color.Color {
	if i < 0 {
		return FieldColor
	}
	c := armPalette[i%len(armPalette)]
	if i >= len(armPalette) {
		return mix(c, color.Black, 0.35)
	}
	return c
}

// armColors returns the colour of each arm, filling nil colours from
// ArmColor.
func armColors(arms []Arm) []color.Color {
	cs := make([]color.Color, len(arms))
	for i, a := range arms {
		cs[i] = a.Color
		if cs[i] == nil {
			cs[i] = ArmColor(i)
		}
	}
	return cs
}

// componentColor returns the colour of membership component k (0 the
// field, k ≥ 1 arm k) given the arms' colours.
func componentColor(k int, colors []color.Color) color.Color {
	if k <= 0 || k > len(colors) {
		return FieldColor
	}
	return colors[k-1]
}

// MostProbable returns the most probable component of a source and its
// probability. prob[0] is the field and prob[k] arm k; tied ≥ 1 means the
// source is tied to arm tied by its catalog label, in which case that arm is
// returned with probability 1. NaN and negative entries are ignored; an
// empty or all-NaN slice gives the field with probability 0.
func MostProbable(prob []float64, tied int) (k int, p float64) {
	if tied >= 1 {
		return tied, 1
	}
	for i, v := range prob {
		if v > p { // false for NaN
			k, p = i, v
		}
	}
	return k, p
}

// mix returns a blend of colours a and b: t = 0 gives a, t = 1 gives b. The
// result is opaque.
func mix(a, b color.Color, t float64) color.RGBA {
	ar, ag, ab, _ := a.RGBA()
	br, bg, bb, _ := b.RGBA()
	f := func(x, y uint32) uint8 {
		return uint8(math.Round(((1-t)*float64(x) + t*float64(y)) / 257))
	}
	return color.RGBA{R: f(ar, br), G: f(ag, bg), B: f(ab, bb), A: 0xFF}
}

// withAlpha returns colour c at opacity alpha in [0, 1], as a
// premultiplied color.RGBA.
func withAlpha(c color.Color, alpha float64) color.RGBA {
	alpha = math.Max(0, math.Min(1, alpha))
	r, g, b, _ := c.RGBA()
	m := func(x uint32) uint8 { return uint8(math.Round(float64(x) / 257 * alpha)) }
	return color.RGBA{R: m(r), G: m(g), B: m(b), A: uint8(math.Round(255 * alpha))}
}

// sans returns the figures' typeface (Liberation Sans) at the given size.
func sans(size vg.Length) font.Font {
	return font.From(font.Font{Typeface: "Liberation", Variant: "Sans"}, size)
}

// textStyle returns a plain text style in the figures' typeface.
func textStyle(size vg.Length, c color.Color, xa text.XAlignment, ya text.YAlignment) text.Style {
	return text.Style{
		Color:   c,
		Font:    sans(size),
		XAlign:  xa,
		YAlign:  ya,
		Handler: plot.DefaultTextHandler,
	}
}

// newPlot returns a plot in the house look: sans-serif text scaled from a
// base size (points), thin dark axes, short ticks, and the nice-number
// ticker.
func newPlot(base vg.Length) *plot.Plot {
	p := plot.New()
	p.Title.TextStyle.Font = sans(base * 1.2)
	p.Title.TextStyle.Color = inkColor
	p.Title.Padding = base * 0.6
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = sans(base)
		a.Label.TextStyle.Color = inkColor
		a.Label.Padding = base * 0.3
		a.Tick.Label.Font = sans(base * 0.85)
		a.Tick.Label.Color = inkColor
		a.Tick.Length = base * 0.4
		a.Tick.LineStyle.Color = inkColor
		a.Tick.LineStyle.Width = vg.Points(0.5)
		a.LineStyle.Color = inkColor
		a.LineStyle.Width = vg.Points(0.6)
		a.Padding = base * 0.2
		a.Tick.Marker = niceTicks{n: 5}
	}
	p.Legend.TextStyle.Font = sans(base * 0.85)
	return p
}

// niceTicks places labelled ticks at round numbers (1, 2, 2.5 or 5 times a
// power of ten) with about n of them across the range, and unlabelled ticks
// between; common practice, no source.
type niceTicks struct {
	n int
	// margin, a fraction of the range, keeps labelled ticks away from the
	// ends so that neighbouring panels' labels do not collide.
	margin float64
	// noLabels drops the labels (every tick becomes a minor tick).
	noLabels bool
	// step, when positive, fixes the spacing of the labelled ticks.
	step float64
}

// Ticks implements plot.Ticker.
func (t niceTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(hi > lo) || math.IsInf(lo, 0) || math.IsInf(hi, 0) {
		return nil
	}
	if t.step > 0 {
		ticks, _ := t.withStep(lo, hi, t.step)
		return ticks
	}
	n := max(t.n, 2)
	step := niceStep((hi - lo) / float64(n))
	ticks, labelled := t.withStep(lo, hi, step)
	// Rounding the step up may leave a single label; step down (at most
	// twice) until two show.
	for try := 0; try < 2 && labelled < 2 && !t.noLabels; try++ {
		step = smallerNiceStep(step)
		ticks, labelled = t.withStep(lo, hi, step)
	}
	return ticks
}

// withStep returns the ticks for labelled spacing step, with unlabelled
// ticks between, and the number of labels.
func (t niceTicks) withStep(lo, hi, step float64) ([]plot.Tick, int) {
	span := hi - lo
	minor := step / 5
	if m := step / math.Pow(10, math.Floor(math.Log10(step))); math.Abs(m-2) < 1e-9 {
		minor = step / 4
	}
	prec := 0
	for prec < 12 {
		m := step * math.Pow(10, float64(prec))
		if math.Abs(m-math.Round(m)) < 1e-6*m {
			break
		}
		prec++
	}
	var ticks []plot.Tick
	labelled := 0
	first := math.Ceil(lo/minor-1e-9) * minor
	for i := 0; i <= 200; i++ {
		v := first + float64(i)*minor
		if v > hi+1e-9*span {
			break
		}
		tk := plot.Tick{Value: v}
		major := math.Abs(v/step-math.Round(v/step)) < 1e-6
		inside := v >= lo+t.margin*span && v <= hi-t.margin*span
		if major && inside && !t.noLabels {
			if math.Abs(v) < 1e-9*step {
				v = 0
			}
			tk.Label = minusSign(strconv.FormatFloat(v, 'f', prec, 64))
			labelled++
		}
		ticks = append(ticks, tk)
	}
	return ticks, labelled
}

// smallerNiceStep returns the next round step below s in the sequence
// …, 1, 2, 2.5, 5, 10, ….
func smallerNiceStep(s float64) float64 {
	e := math.Pow(10, math.Floor(math.Log10(s)))
	switch m := s / e; {
	case m > 4.99:
		return 2.5 * e
	case m > 2.49:
		return 2 * e
	case m > 1.99:
		return e
	default:
		return 0.5 * e
	}
}

// niceStep rounds x up to 1, 2, 2.5 or 5 times a power of ten.
func niceStep(x float64) float64 {
	if !(x > 0) || math.IsInf(x, 0) {
		return 1
	}
	e := math.Pow(10, math.Floor(math.Log10(x)))
	for _, m := range []float64{1, 2, 2.5, 5, 10} {
		if m*e >= x*(1-1e-9) {
			return m * e
		}
	}
	return 10 * e
}

// fillTextHalo draws txt with a thin white outline so that it stays legible
// over lines and bands.
func fillTextHalo(c draw.Canvas, sty text.Style, pt vg.Point, txt string) {
	halo := sty
	halo.Color = color.White
	d := sty.Font.Size * 0.08
	for _, o := range [][2]float64{{1, 0}, {-1, 0}, {0, 1}, {0, -1}, {0.7, 0.7}, {-0.7, 0.7}, {0.7, -0.7}, {-0.7, -0.7}} {
		c.FillText(halo, vg.Point{X: pt.X + d*vg.Length(o[0]), Y: pt.Y + d*vg.Length(o[1])}, txt)
	}
	c.FillText(sty, pt, txt)
}

// finite reports whether every value is a finite number.
func finite(vs ...float64) bool {
	for _, v := range vs {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return false
		}
	}
	return true
}

// minusSign replaces a leading hyphen with the typographic minus sign.
func minusSign(s string) string {
	if strings.HasPrefix(s, "-") {
		return "−" + s[1:]
	}
	return s
}

// tileName is an axis name of one tile in a grid of aligned plots.
type tileName struct {
	p    *plot.Plot
	c    draw.Canvas // the tile's canvas from plot.Align
	name string
}

// namePlaceholder is the axis label of a tile whose name is written by
// drawXNames or drawYNames: it reserves one line of space.
const namePlaceholder = " "

// drawXNames writes x-axis names centred under each tile's data area on one
// common baseline (the lowest tile's bottom), so that the names line up
// whatever the height of each tile's tick labels.
func drawXNames(c draw.Canvas, items []tileName, sty text.Style) {
	if len(items) == 0 {
		return
	}
	y := items[0].c.Min.Y
	for _, it := range items {
		y = min(y, it.c.Min.Y)
	}
	sty.XAlign, sty.YAlign = draw.XCenter, draw.YBottom
	d := sty.FontExtents().Descent
	for _, it := range items {
		if it.name == "" {
			continue
		}
		dc := it.p.DataCanvas(it.c)
		c.FillText(sty, vg.Point{X: dc.Center().X, Y: y + d}, it.name)
	}
}

// drawYNames writes y-axis names, turned a quarter counterclockwise,
// centred beside each tile's data area on one common line (the leftmost
// tile's left edge).
func drawYNames(c draw.Canvas, items []tileName, sty text.Style) {
	if len(items) == 0 {
		return
	}
	x := items[0].c.Min.X
	for _, it := range items {
		x = min(x, it.c.Min.X)
	}
	sty.XAlign, sty.YAlign = draw.XCenter, draw.YBottom
	sty.Rotation = math.Pi / 2
	d := sty.FontExtents().Descent
	for _, it := range items {
		if it.name == "" {
			continue
		}
		dc := it.p.DataCanvas(it.c)
		h := sty.Height(it.name)
		c.FillText(sty, vg.Point{X: x + h - d, Y: dc.Center().Y}, it.name)
	}
}

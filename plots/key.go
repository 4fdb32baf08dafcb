package plots

import (
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// KeyPos selects the corner of a plot's data area that holds a Key.
type KeyPos int

// The corners of a data area, for placing a Key. KeyDefault leaves the
// choice to the figure (top right for a bare Key).
const (
	KeyDefault KeyPos = iota
	KeyTopRight
	KeyTopLeft
	KeyBottomRight
	KeyBottomLeft
)

// KeyEntry is one line of a Key: a row of symbols and their meaning.
type KeyEntry struct {
	// Label is the text of the entry.
	Label string
	// Thumbs draw the entry's symbol, on top of one another.
	Thumbs []plot.Thumbnailer
}

// Key is a plotter that draws a legend in a framed, nearly opaque box
// inside one corner of the data area, so that it reads cleanly over grid
// lines and data.
type Key struct {
	// Entries are the legend's lines, top to bottom.
	Entries []KeyEntry
	// Pos is the corner where the box sits (KeyDefault: top right).
	Pos KeyPos
	// FontSize is the size of the entries' text (default 9 pt).
	FontSize vg.Length
	// Inset is the gap between the box and the data area's edge (default
	// half the font size).
	Inset vg.Length
}

// Add appends an entry.
func (k *Key) Add(label string, thumbs ...plot.Thumbnailer) {
	k.Entries = append(k.Entries, KeyEntry{Label: label, Thumbs: thumbs})
}

// Size returns the width and height of the key's box.
func (k *Key) Size() (w, h vg.Length) {
	fs := k.fontSize()
	sty := textStyle(fs, inkColor, draw.XLeft, draw.YCenter)
	var tw vg.Length
	for _, e := range k.Entries {
		tw = max(tw, sty.Width(e.Label))
	}
	pad := fs * 0.6
	return pad*2 + k.thumbWidth() + fs*0.5 + tw, pad*2 + vg.Length(len(k.Entries))*k.rowHeight()
}

func (k *Key) fontSize() vg.Length {
	if k.FontSize > 0 {
		return k.FontSize
	}
	return 9
}

func (k *Key) thumbWidth() vg.Length { return k.fontSize() * 2 }
func (k *Key) rowHeight() vg.Length  { return k.fontSize() * 1.45 }

// box returns the rectangle the key takes on the data canvas c.
func (k *Key) box(c draw.Canvas) vg.Rectangle {
	fs := k.fontSize()
	inset := k.Inset
	if inset == 0 {
		inset = fs * 0.5
	}
	w, h := k.Size()
	var x0, y1 vg.Length
	switch k.Pos {
	case KeyTopLeft:
		x0, y1 = c.Min.X+inset, c.Max.Y-inset
	case KeyBottomRight:
		x0, y1 = c.Max.X-inset-w, c.Min.Y+inset+h
	case KeyBottomLeft:
		x0, y1 = c.Min.X+inset, c.Min.Y+inset+h
	default:
		x0, y1 = c.Max.X-inset-w, c.Max.Y-inset
	}
	return vg.Rectangle{Min: vg.Point{X: x0, Y: y1 - h}, Max: vg.Point{X: x0 + w, Y: y1}}
}

// Plot implements plot.Plotter.
func (k *Key) Plot(c draw.Canvas, _ *plot.Plot) {
	if len(k.Entries) == 0 {
		return
	}
	fs := k.fontSize()
	box := k.box(c)
	x0, y1 := box.Min.X, box.Max.Y
	c.SetColor(color.NRGBA{R: 255, G: 255, B: 255, A: 235})
	c.Fill(box.Path())
	c.SetLineStyle(draw.LineStyle{Color: color.RGBA{R: 0xB0, G: 0xB0, B: 0xB0, A: 0xFF}, Width: 0.5})
	c.Stroke(box.Path())

	pad := fs * 0.6
	sty := textStyle(fs, inkColor, draw.XLeft, draw.YCenter)
	rh := k.rowHeight()
	for i, e := range k.Entries {
		top := y1 - pad - vg.Length(i)*rh
		tc := draw.Canvas{Canvas: c.Canvas, Rectangle: vg.Rectangle{
			Min: vg.Point{X: x0 + pad, Y: top - rh + fs*0.2},
			Max: vg.Point{X: x0 + pad + k.thumbWidth(), Y: top - fs*0.2},
		}}
		for _, t := range e.Thumbs {
			t.Thumbnail(&tc)
		}
		c.FillText(sty, vg.Point{X: x0 + pad + k.thumbWidth() + fs*0.5, Y: top - rh/2}, e.Label)
	}
}

// thumbFunc draws a legend symbol into the given canvas.
type thumbFunc func(c *draw.Canvas)

// Thumbnail implements plot.Thumbnailer.
func (f thumbFunc) Thumbnail(c *draw.Canvas) { f(c) }

// lineThumb is a horizontal line across the symbol box.
func lineThumb(sty draw.LineStyle) plot.Thumbnailer {
	return thumbFunc(func(c *draw.Canvas) {
		y := c.Center().Y
		c.StrokeLine2(sty, c.Min.X, y, c.Max.X, y)
	})
}

// bandThumb is a filled box of height frac of the symbol box.
func bandThumb(fill color.Color, frac float64) plot.Thumbnailer {
	return thumbFunc(func(c *draw.Canvas) {
		hh := (c.Max.Y - c.Min.Y) * vg.Length(frac) / 2
		y := c.Center().Y
		r := vg.Rectangle{Min: vg.Point{X: c.Min.X, Y: y - hh}, Max: vg.Point{X: c.Max.X, Y: y + hh}}
		c.SetColor(fill)
		c.Fill(r.Path())
	})
}

// markThumb draws a mark in the middle of the symbol box.
func markThumb(mark func(c draw.Canvas, pt vg.Point)) plot.Thumbnailer {
	return thumbFunc(func(c *draw.Canvas) { mark(*c, c.Center()) })
}

// fillCircle draws a disc of radius r filled with fill and outlined with
// edge (nil colours are skipped).
func fillCircle(c draw.Canvas, pt vg.Point, r vg.Length, fill, edge color.Color, lw vg.Length) {
	var p vg.Path
	p.Move(vg.Point{X: pt.X + r, Y: pt.Y})
	p.Arc(pt, r, 0, 2*math.Pi)
	p.Close()
	if fill != nil {
		c.SetColor(fill)
		c.Fill(p)
	}
	if edge != nil && lw > 0 {
		c.SetLineStyle(draw.LineStyle{Color: edge, Width: lw})
		c.Stroke(p)
	}
}

// fillDiamond draws a square standing on a corner, of half-diagonal r.
func fillDiamond(c draw.Canvas, pt vg.Point, r vg.Length, fill, edge color.Color, lw vg.Length) {
	var p vg.Path
	p.Move(vg.Point{X: pt.X, Y: pt.Y + r})
	p.Line(vg.Point{X: pt.X + r, Y: pt.Y})
	p.Line(vg.Point{X: pt.X, Y: pt.Y - r})
	p.Line(vg.Point{X: pt.X - r, Y: pt.Y})
	p.Close()
	if fill != nil {
		c.SetColor(fill)
		c.Fill(p)
	}
	if edge != nil && lw > 0 {
		c.SetLineStyle(draw.LineStyle{Color: edge, Width: lw})
		c.Stroke(p)
	}
}

package plots

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"image/png"
	"io"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"

	"github.com/mirabilis-astro/mirabilis/internal/atomicfile"

	// The vector formats register themselves with vg/draw.
	_ "gonum.org/v1/plot/vg/vgeps"
	_ "gonum.org/v1/plot/vg/vgpdf"
)

// Figure is anything that draws itself onto a canvas: a *plot.Plot and every
// figure type of this package.
type Figure interface {
	Draw(c draw.Canvas)
}

// PNGDPI is the resolution, in dots per inch, of the raster images written by
// Save (.png, .jpg, .tif).
const PNGDPI = 150

// maxSide is the largest width or height Save accepts.
const maxSide = 200 * vg.Inch

// Save draws f into a file of the given width and height; the format follows
// the extension of path: .png, .jpg/.jpeg, .tif/.tiff (raster, PNGDPI dots
// per inch), .svg and .pdf (fonts embedded) or .eps. The file is written to
// a temporary name in the same folder and renamed into place, so a failed
// save leaves no partial file behind.
func Save(f Figure, path string, width, height vg.Length) (err error) {
	if f == nil {
		return errors.New("plots: saving a nil figure")
	}
	if !(width > 0 && height > 0 && width <= maxSide && height <= maxSide) {
		return fmt.Errorf("plots: saving %s: size %.4g × %.4g in must be positive and at most %.0f in",
			path, width/vg.Inch, height/vg.Inch, maxSide/vg.Inch)
	}
	format := strings.ToLower(strings.TrimPrefix(filepath.Ext(path), "."))
	var cw vg.CanvasWriterTo
	switch format {
	case "png":
		cw = fastPNG{vgimg.NewWith(vgimg.UseWH(width, height), vgimg.UseDPI(PNGDPI))}
	case "jpg", "jpeg":
		cw = vgimg.JpegCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(width, height), vgimg.UseDPI(PNGDPI))}
	case "tif", "tiff":
		cw = vgimg.TiffCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(width, height), vgimg.UseDPI(PNGDPI))}
	case "svg":
		// The layout is measured with the figures' own font; embedding it
		// keeps the text where it was placed in any viewer.
		cw = vgsvg.NewWith(vgsvg.UseWH(width, height), vgsvg.EmbedFonts(true))
	case "pdf", "eps":
		cw, err = draw.NewFormattedCanvas(width, height, format)
		if err != nil {
			return fmt.Errorf("plots: saving %s: %w", path, err)
		}
	default:
		return fmt.Errorf("plots: saving %s: unknown image format %q (want .png, .svg, .pdf, .eps, .jpg or .tif)", path, filepath.Ext(path))
	}
	f.Draw(draw.New(cw))

	err = atomicfile.WriteWith(path, func(w io.Writer) error {
		if format == "svg" {
			return writeSVG(w, cw)
		}
		_, err := cw.WriteTo(w)
		return err
	})
	if err != nil {
		return fmt.Errorf("plots: saving %s: %w", path, err)
	}
	return nil
}

// fastPNG is a raster canvas written as PNG with the fastest deflate level:
// large figures (a triangle plot of twenty parameters is some ten million
// pixels) then encode several times faster, for files a little larger.
type fastPNG struct {
	*vgimg.Canvas
}

// WriteTo implements io.WriterTo.
func (c fastPNG) WriteTo(w io.Writer) (int64, error) {
	cw := &countWriter{w: w}
	b := bufio.NewWriter(cw)
	enc := png.Encoder{CompressionLevel: png.BestSpeed}
	if err := enc.Encode(b, c.Image()); err != nil {
		return cw.n, err
	}
	err := b.Flush()
	return cw.n, err
}

// countWriter counts the bytes written through it.
type countWriter struct {
	w io.Writer
	n int64
}

func (c *countWriter) Write(p []byte) (int, error) {
	n, err := c.w.Write(p)
	c.n += int64(n)
	return n, err
}

// writeSVG writes the SVG canvas cw to w, labelling its embedded PNG images
// with their true media type: vg/vgsvg marks them image/jpg, which browsers
// forgive but stricter renderers (librsvg among them) refuse to draw.
func writeSVG(w io.Writer, cw io.WriterTo) error {
	var buf bytes.Buffer
	if _, err := cw.WriteTo(&buf); err != nil {
		return err
	}
	// "iVBORw0KGgo" is the base64 form of the PNG signature.
	fixed := bytes.ReplaceAll(buf.Bytes(), []byte("data:image/jpg;base64,iVBORw0KGgo"), []byte("data:image/png;base64,iVBORw0KGgo"))
	_, err := w.Write(fixed)
	return err
}

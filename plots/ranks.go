package plots

import (
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// RankHistogram is one parameter's histogram of ranks from simulation-based calibration:
// the number of mocks whose truth fell in each of len(Counts) equal bins of rank.
type RankHistogram struct {
	Name   string
	Counts []int
}

// rankFigure draws one panel per parameter.
type rankFigure struct {
	hist  []RankHistogram
	draws int
}

// RankHistograms returns a figure of rank histograms, one small panel per parameter, with
// the band that 99% of the bins' counts would fall in were the ranks uniform (binomial,
// normal approximation) shaded behind the bars and its middle drawn as a line. draws is
// the number of posterior draws the ranks were counted among (ranks 0 … draws).
func RankHistograms(hist []RankHistogram, draws int) Figure {
	return rankFigure{hist: hist, draws: draws}
}

// RankGrid returns the columns and rows of the panel grid for n parameters.
func RankGrid(n int) (cols, rows int) {
	cols = max(1, min(4, int(math.Ceil(math.Sqrt(float64(n))))))
	rows = max(1, (n+cols-1)/cols)
	return cols, rows
}

var (
	rankBarColor  = color.RGBA{R: 0x3A, G: 0x6E, B: 0x8F, A: 0xFF}
	rankBandColor = color.RGBA{R: 0xE8, G: 0xD9, B: 0xB5, A: 0xFF}
)

func (f rankFigure) Draw(c draw.Canvas) {
	cols, rows := RankGrid(len(f.hist))
	const base = vg.Length(8)
	plots := make([][]*plot.Plot, rows)
	for r := range plots {
		plots[r] = make([]*plot.Plot, cols)
	}
	for i, h := range f.hist {
		p := newPlot(base)
		p.Title.Text = h.Name
		p.X.Label.Text = "rank of truth"
		if i%cols == 0 {
			p.Y.Label.Text = "mocks"
		}
		bins := len(h.Counts)
		total := 0
		for _, n := range h.Counts {
			total += n
		}
		width := float64(f.draws+1) / float64(max(bins, 1))
		exp := float64(total) / float64(max(bins, 1))
		sd := math.Sqrt(exp * (1 - 1/float64(max(bins, 1))))
		lo, hi := math.Max(0, exp-2.576*sd), exp+2.576*sd
		band, err := plotter.NewPolygon(plotter.XYs{{X: 0, Y: lo}, {X: float64(f.draws + 1), Y: lo}, {X: float64(f.draws + 1), Y: hi}, {X: 0, Y: hi}})
		if err == nil {
			band.Color = rankBandColor
			band.LineStyle.Width = 0
			p.Add(band)
		}
		bars := make(plotter.XYs, 0, 2*bins+2)
		for b, n := range h.Counts {
			x0, x1 := float64(b)*width, float64(b+1)*width
			bars = append(bars, plotter.XY{X: x0, Y: float64(n)}, plotter.XY{X: x1, Y: float64(n)})
		}
		if line, err := plotter.NewLine(bars); err == nil {
			line.Color = rankBarColor
			line.Width = vg.Points(1.2)
			line.FillColor = withAlpha(rankBarColor, 0.35)
			p.Add(line)
		}
		if mid, err := plotter.NewLine(plotter.XYs{{X: 0, Y: exp}, {X: float64(f.draws + 1), Y: exp}}); err == nil {
			mid.Color = inkColor
			mid.Width = vg.Points(0.6)
			mid.Dashes = []vg.Length{vg.Points(2), vg.Points(2)}
			p.Add(mid)
		}
		p.X.Min, p.X.Max = 0, float64(f.draws+1)
		p.Y.Min = 0
		top := hi
		for _, n := range h.Counts {
			top = math.Max(top, float64(n))
		}
		p.Y.Max = top * 1.1
		plots[i/cols][i%cols] = p
	}
	c.SetColor(color.White)
	c.Fill(c.Rectangle.Path())
	cv := plot.Align(plots, draw.Tiles{Rows: rows, Cols: cols, PadX: base * 1.5, PadY: base * 1.2, PadTop: base, PadBottom: base, PadLeft: base, PadRight: base}, c)
	for r := range plots {
		for k, p := range plots[r] {
			if p != nil {
				p.Draw(cv[r][k])
			}
		}
	}
}

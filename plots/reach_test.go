package plots

import (
	"image/color"
	"math"
	"slices"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/recorder"
)

// TestFaceOnMapReachRenders draws the map with a survey's reach: it renders, the legend
// names the wedges and the circle, and nothing of it is drawn or named without them.
func TestFaceOnMapReachRenders(t *testing.T) {
	d := MapData{R0: testR0, Arms: testTracks(), Sources: testSources(60, 1), MotionScale: 0.02,
		Unseen:       []LongitudeRange{{From: 247.11 * math.Pi / 180, To: 358.75 * math.Pi / 180}, {From: 80 * math.Pi / 180, To: 100 * math.Pi / 180}},
		UnseenLabel:  "not surveyed (δ < −30°)",
		HalfDistance: 9}
	fig, err := FaceOnMap(d)
	if err != nil {
		t.Fatal(err)
	}
	saveBoth(t, fig, 9*vg.Inch, 9*vg.Inch)
	labels := keyLabels(fig)
	for _, want := range []string{"not surveyed (δ < −30°)", "completeness ½ at 9 kpc"} {
		if !slices.Contains(labels, want) {
			t.Errorf("legend %q lacks %q", labels, want)
		}
	}
	d.Unseen, d.UnseenLabel, d.HalfDistance = nil, "", 0
	bare, err := FaceOnMap(d)
	if err != nil {
		t.Fatal(err)
	}
	if n := len(keyLabels(bare)); n != len(labels)-2 {
		t.Errorf("without a selection the legend has %d entries, with it %d: want two fewer", n, len(labels))
	}
}

func keyLabels(f *FaceOnPlot) []string {
	var out []string
	for _, e := range f.key.Entries {
		out = append(out, e.Label)
	}
	return out
}

// reachCanvas draws r onto a recorder over a 200 pt square data area showing ±10 kpc: 10 pt
// per kpc, the origin at (100, 100) pt.
func reachCanvas(r SurveyReach) []recorder.Action {
	rec := new(recorder.Canvas)
	c := draw.Canvas{Canvas: rec, Rectangle: vg.Rectangle{Max: vg.Point{X: 200, Y: 200}}}
	p := plot.New()
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = -10, 10, -10, 10
	r.Plot(c, p)
	return rec.Actions
}

// pathPoints returns the end points of a path's components.
func pathPoints(p vg.Path) []vg.Point {
	var out []vg.Point
	for _, c := range p {
		if c.Type == vg.MoveComp || c.Type == vg.LineComp {
			out = append(out, c.Pos)
		}
	}
	return out
}

// TestReachWedgeEdges checks where the wedges and the circle fall. The direction of
// longitude l from the Sun is taken from mapPoint (the model's R and β of a point at
// (l, d), see TestMapOrientation), not from the plotter's own formula: the filled wedge's
// corners must all lie within the range as seen from the Sun, reach out to both edges of
// it, and the two edge lines run along l = From and l = To; every point of the dashed
// circle lies HalfDistance from the Sun.
func TestReachWedgeEdges(t *testing.T) {
	const ptPerKpc = 10
	sunX, sunY := vg.Length(100), vg.Length(100-ptPerKpc*testR0)
	// The longitude (rad, [0, 2π)) of a canvas point seen from the Sun, through mapPoint's
	// directions toward l = 0 and l = 90°.
	x0, y0 := mapPoint(0, 1)
	x90, y90 := mapPoint(math.Pi/2, 1)
	sx, sy := mapPoint(0, 0)
	lonOf := func(q vg.Point) float64 {
		dx, dy := float64(q.X-sunX)/ptPerKpc, float64(q.Y-sunY)/ptPerKpc
		a := dx*(x0-sx) + dy*(y0-sy)   // along l = 0
		b := dx*(x90-sx) + dy*(y90-sy) // along l = 90°
		l := math.Atan2(b, a)
		if l < 0 {
			l += 2 * math.Pi
		}
		return l
	}
	deg := math.Pi / 180
	for _, r := range []LongitudeRange{{30 * deg, 75 * deg}, {247.11 * deg, 358.75 * deg}, {350 * deg, 10 * deg}, {100 * deg, 300 * deg}} {
		acts := reachCanvas(SurveyReach{R0: testR0, Unseen: []LongitudeRange{r}, HalfDistance: 4})
		var col color.Color
		var dashed bool
		var fills, edges, circles int
		for _, a := range acts {
			switch a := a.(type) {
			case *recorder.SetColor:
				col = a.Color
			case *recorder.SetLineDash:
				dashed = len(a.Dashes) > 0
			case *recorder.Fill:
				if col != reachFill {
					continue
				}
				fills++
				var lo, hi float64 = math.Inf(1), math.Inf(-1)
				for _, q := range pathPoints(a.Path) {
					if math.Hypot(float64(q.X-sunX), float64(q.Y-sunY)) < 1e-6 {
						continue // the apex
					}
					// Offset from From: inside the range it is in [0, width].
					off := math.Mod(lonOf(q)-r.From+4*math.Pi, 2*math.Pi)
					if off > 2*math.Pi-1e-6 {
						off -= 2 * math.Pi
					}
					lo, hi = math.Min(lo, off), math.Max(hi, off)
				}
				if lo < -1e-9 || math.Abs(lo) > 1e-6 || math.Abs(hi-r.width()) > 1e-6 {
					t.Errorf("range %.2f..%.2f°: wedge spans %.6f..%.6f° past From, want 0..%.6f", r.From/deg, r.To/deg, lo/deg, hi/deg, r.width()/deg)
				}
			case *recorder.Stroke:
				pts := pathPoints(a.Path)
				if len(pts) < 2 {
					continue
				}
				if dashed {
					circles++
					for _, q := range pts {
						// Where the data area cuts it, a point lies on a chord of 0.5°.
						if d := math.Hypot(float64(q.X-sunX), float64(q.Y-sunY)) / ptPerKpc; d > 4+1e-9 || d < 4*math.Cos(math.Pi/360)-1e-9 {
							t.Errorf("circle point %.3f kpc from the Sun, want 4", d)
						}
					}
					continue
				}
				edges++
				if math.Hypot(float64(pts[0].X-sunX), float64(pts[0].Y-sunY)) > 1e-9 {
					t.Errorf("edge starts at %v, want the Sun at (%v, %v)", pts[0], sunX, sunY)
				}
				l := lonOf(pts[len(pts)-1])
				if math.Abs(math.Remainder(l-r.From, 2*math.Pi)) > 1e-6 && math.Abs(math.Remainder(l-r.To, 2*math.Pi)) > 1e-6 {
					t.Errorf("range %.2f..%.2f°: an edge runs along l = %.6f°", r.From/deg, r.To/deg, l/deg)
				}
			}
		}
		if fills != 1 || edges != 2 || circles < 1 {
			t.Errorf("range %.2f..%.2f°: %d wedges, %d edges, %d circle pieces drawn; want 1, 2 and some", r.From/deg, r.To/deg, fills, edges, circles)
		}
	}
	// The whole circle fills the data area and draws no edges.
	acts := reachCanvas(SurveyReach{R0: testR0, Unseen: []LongitudeRange{{0, 2 * math.Pi}}})
	var strokes int
	for _, a := range acts {
		if _, ok := a.(*recorder.Stroke); ok {
			strokes++
		}
	}
	if strokes != 0 {
		t.Errorf("a range of the whole circle draws %d lines, want none", strokes)
	}
}

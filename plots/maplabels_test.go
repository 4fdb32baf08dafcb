package plots

import (
	"image/color"
	"strings"
	"testing"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/recorder"
)

// TestMapExplainsSpokesAndKeepsLabelsClear draws the face-on map onto a recorder and checks
// that the spokes are explained (the legend names β, the spoke toward the Sun says β = 0°)
// and that no azimuth label is written under the legend.
func TestMapExplainsSpokesAndKeepsLabelsClear(t *testing.T) {
	fig, err := FaceOnMap(MapData{R0: testR0, Arms: testTracks(), Sources: testSources(150, 1), MotionScale: 0.02})
	if err != nil {
		t.Fatal(err)
	}
	key := fig.key
	if key == nil {
		t.Fatal("the map has no legend")
	}
	explained := false
	for _, e := range key.Entries {
		explained = explained || strings.Contains(e.Label, "azimuth β")
	}
	if !explained {
		t.Error("the legend does not say what the spokes are")
	}

	rec := &recorder.Canvas{}
	c := draw.NewCanvas(rec, 7*vg.Inch, 7*vg.Inch)
	fig.Draw(c)
	q := *fig.Plot
	equalAspect(&q, c)
	box := key.box(q.DataCanvas(c))
	sawZero := false
	for _, a := range rec.Actions {
		fs, ok := a.(*recorder.FillString)
		if !ok || !strings.HasSuffix(fs.String, "°") {
			continue
		}
		sawZero = sawZero || fs.String == "β = 0°"
		p := fs.Point
		if p.X >= box.Min.X && p.X <= box.Max.X && p.Y >= box.Min.Y && p.Y <= box.Max.Y {
			t.Errorf("azimuth label %q drawn at %v, under the legend %v", fs.String, p, box)
		}
	}
	if !sawZero {
		t.Error("no spoke is labelled β = 0°")
	}
}

// TestArmNameAvoidsMarks checks that an arm's name moves off the end of its centre line
// when sources sit there, and off the legend, and stays at the end when the place is free.
func TestArmNameAvoidsMarks(t *testing.T) {
	p := newPlot(11)
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = -10, 10, -10, 10
	c := draw.NewCanvas(&recorder.Canvas{}, 6*vg.Inch, 6*vg.Inch)
	dc := p.DataCanvas(c)
	trX, trY := p.Transforms(&dc)
	track := testTracks()[0]
	bands := ArmBands{Arms: []ArmTrack{track}}
	col := color.Black

	free, sty, ok := bands.label(dc, trX, trY, track, col, nil, nil)
	if !ok {
		t.Fatal("no place for the name on an empty map")
	}
	freeBox := textBox(sty, free, track.Name)

	// Marks over the free place, spread through its box.
	var marks []vg.Point
	for fx := 0.1; fx < 1; fx += 0.2 {
		for fy := 0.2; fy < 1; fy += 0.3 {
			marks = append(marks, vg.Point{
				X: freeBox.Min.X + vg.Length(fx)*(freeBox.Max.X-freeBox.Min.X),
				Y: freeBox.Min.Y + vg.Length(fy)*(freeBox.Max.Y-freeBox.Min.Y),
			})
		}
	}
	pt, sty2, ok := bands.label(dc, trX, trY, track, col, marks, nil)
	if !ok {
		t.Fatal("no place for the name among marks")
	}
	box := textBox(sty2, pt, track.Name)
	for _, m := range marks {
		if m.X >= box.Min.X && m.X <= box.Max.X && m.Y >= box.Min.Y && m.Y <= box.Max.Y {
			t.Errorf("the name at %v covers the mark at %v", box, m)
		}
	}
	// A legend over the free place pushes the name off it.
	pt, sty2, ok = bands.label(dc, trX, trY, track, col, nil, []vg.Rectangle{freeBox})
	if !ok || overlapsAny(textBox(sty2, pt, track.Name), []vg.Rectangle{freeBox}) {
		t.Errorf("the name overlaps the legend: %v, %v", ok, textBox(sty2, pt, track.Name))
	}
}

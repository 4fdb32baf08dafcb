package plots

import (
	"math"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/recorder"
)

// mapPoint places a source at Galactic longitude l (radians, b = 0) and
// distance d (kpc) on the map, through the model's definitions of R and β.
func mapPoint(l, d float64) (x, y float64) {
	return fromHelio(d*math.Cos(l), d*math.Sin(l)).XY()
}

// TestMapOrientation checks the face-on map's handedness. Facts used: the
// heliocentric axes (x to the centre, y to l = 90°, z to the north
// Galactic pole) are right-handed and the Galaxy rotates toward l = 90° at
// the Sun (the IAU definition of Galactic coordinates, Blaauw et al. 1960,
// MNRAS 121, 123); seen from the north pole, that rotation is clockwise.
func TestMapOrientation(t *testing.T) {
	sx, sy := Polar{R: testR0, Beta: 0}.XY()
	if math.Abs(sx) > 1e-12 || math.Abs(sy+testR0) > 1e-12 {
		t.Fatalf("Sun at (%g, %g), want (0, %g)", sx, sy, -testR0)
	}
	// Toward the centre (l = 0) from the Sun is up the map (+y).
	x, y := mapPoint(0, 1)
	if math.Abs(x) > 1e-12 || math.Abs(y-(sy+1)) > 1e-12 {
		t.Errorf("l = 0, d = 1 kpc at (%g, %g), want (0, %g)", x, y, sy+1)
	}
	// A point at l = 90° near the Sun lies clockwise from it about the
	// centre: the z-component of Sun × point is negative.
	x, y = mapPoint(math.Pi/2, 0.3)
	if b := fromHelio(0, 0.3).Beta; !(b > 0) {
		t.Fatalf("β at l = 90° is %g, want small and positive", b)
	}
	if cross := sx*y - sy*x; !(cross < 0) {
		t.Errorf("l = 90° point at (%g, %g): Sun × point = %g, want < 0 (clockwise)", x, y, cross)
	}
	// Seen from the north pole (+z toward the viewer), the map of the
	// heliocentric plane must be a rotation, not a mirror image: its
	// Jacobian has determinant +1 everywhere.
	const h = 1e-6
	for _, pt := range [][2]float64{{0, 0}, {3, -2}, {-4, 5}, {7, 1}} {
		fx := func(dx, dy float64) (float64, float64) {
			return fromHelio(pt[0]+dx, pt[1]+dy).XY()
		}
		x1, y1 := fx(h, 0)
		x0, y0 := fx(-h, 0)
		x3, y3 := fx(0, h)
		x2, y2 := fx(0, -h)
		a, c := (x1-x0)/(2*h), (y1-y0)/(2*h)
		b, d := (x3-x2)/(2*h), (y3-y2)/(2*h)
		if det := a*d - b*c; math.Abs(det-1) > 1e-6 {
			t.Errorf("at heliocentric %v: Jacobian determinant %g, want +1", pt, det)
		}
	}
}

// TestMotionDirections checks the arrows' directions: U points to the
// centre and V along rotation, which is clockwise on the map (see
// TestMapOrientation for the facts used).
func TestMotionDirections(t *testing.T) {
	for _, beta := range []float64{-1, 0, 0.4, 2.5} {
		at := Polar{R: 7, Beta: beta}
		x0, y0 := at.XY()
		m := MotionArrows{Scale: 0.01}
		_, _, x1, y1, ok := m.tip(MapSource{At: at, Motion: &MapVelocity{U: 50}})
		if !ok {
			t.Fatal("no arrow")
		}
		if r1 := math.Hypot(x1, y1); math.Abs(r1-(7-0.5)) > 1e-9 {
			t.Errorf("β = %g: U = 50 km/s moved R from 7 to %g, want 6.5", beta, r1)
		}
		_, _, x1, y1, _ = m.tip(MapSource{At: at, Motion: &MapVelocity{V: 50}})
		if cross := x0*y1 - y0*x1; !(cross < 0) {
			t.Errorf("β = %g: V > 0 arrow turns counterclockwise (cross %g)", beta, cross)
		}
		if l := math.Hypot(x1-x0, y1-y0); math.Abs(l-0.5) > 1e-9 {
			t.Errorf("β = %g: arrow length %g kpc, want 0.5", beta, l)
		}
		// Along rotation is also the direction of increasing β.
		xb, yb := Polar{R: 7, Beta: beta + 1e-6}.XY()
		if dot := (xb-x0)*(x1-x0) + (yb-y0)*(y1-y0); !(dot > 0) {
			t.Errorf("β = %g: V arrow does not point toward increasing β", beta)
		}
	}
}

func TestFaceOnMapRenders(t *testing.T) {
	fig, err := FaceOnMap(MapData{R0: testR0, Arms: testTracks(), Sources: testSources(60, 1), MotionScale: 0.02})
	if err != nil {
		t.Fatal(err)
	}
	saveBoth(t, fig, 6*vg.Inch, 6*vg.Inch)
}

func TestFaceOnMapNoSources(t *testing.T) {
	fig, err := FaceOnMap(MapData{R0: testR0})
	if err != nil {
		t.Fatal(err)
	}
	saveBoth(t, fig, 4*vg.Inch, 4*vg.Inch)
}

func TestFaceOnMapNaNSkipped(t *testing.T) {
	src := testSources(5, 2)
	src[0].At.R = math.NaN()
	src[1].Near.Beta = math.Inf(1)
	src[2].Motion.U = math.NaN()
	src[3].Prob = []float64{math.NaN(), 0.2}
	arms := testTracks()
	arms[0].Centre[3].R = math.NaN()
	arms[1].Inner[0].Beta = math.NaN()
	fig, err := FaceOnMap(MapData{R0: testR0, Arms: arms, Sources: src, MotionScale: 0.02})
	if err != nil {
		t.Fatal(err)
	}
	saveBoth(t, fig, 4*vg.Inch, 4*vg.Inch)
}

func TestFaceOnMapErrors(t *testing.T) {
	for name, d := range map[string]MapData{
		"zero R0":  {},
		"NaN R0":   {R0: math.NaN()},
		"too many": {R0: 8, Sources: []MapSource{{Prob: []float64{0.5, 0.5}}}},
		"bad tie":  {R0: 8, Arms: testTracks(), Sources: []MapSource{{TiedArm: 9}}},
	} {
		if _, err := FaceOnMap(d); err == nil {
			t.Errorf("%s: no error", name)
		}
	}
}

// covers reports whether the range contains the point.
func covers(xmin, xmax, ymin, ymax, x, y float64) bool {
	const eps = 1e-9
	return x >= xmin-eps && x <= xmax+eps && y >= ymin-eps && y <= ymax+eps
}

func TestMapDataRanges(t *testing.T) {
	src := testSources(40, 3)
	// The map coordinates written out: x = −R sin β, y = −R cos β.
	xy := func(p Polar) (float64, float64) { return -p.R * math.Sin(p.Beta), -p.R * math.Cos(p.Beta) }

	m := SourceMarks{Sources: src}
	x0, x1, y0, y1 := m.DataRange()
	for _, s := range src {
		for _, p := range []Polar{s.At, s.Near, s.Far} {
			if x, y := xy(p); !covers(x0, x1, y0, y1, x, y) {
				t.Errorf("SourceMarks range misses (%g, %g)", x, y)
			}
		}
	}
	arms := testTracks()
	x0, x1, y0, y1 = ArmBands{Arms: arms}.DataRange()
	for _, a := range arms {
		for _, set := range [][]Polar{a.Centre, a.Inner, a.Outer} {
			for _, p := range set {
				if x, y := xy(p); !covers(x0, x1, y0, y1, x, y) {
					t.Errorf("ArmBands range misses (%g, %g)", x, y)
				}
			}
		}
	}
	ma := MotionArrows{Sources: src, Scale: 0.05}
	x0, x1, y0, y1 = ma.DataRange()
	for _, s := range src {
		// The tip: U toward the centre, V along rotation (clockwise).
		x, y := xy(s.At)
		r := math.Hypot(x, y)
		ux, uy := -x/r, -y/r // toward the centre
		vx, vy := y/r, -x/r  // clockwise tangent
		tx := x + 0.05*(s.Motion.U*ux+s.Motion.V*vx)
		ty := y + 0.05*(s.Motion.U*uy+s.Motion.V*vy)
		if !covers(x0, x1, y0, y1, tx, ty) || !covers(x0, x1, y0, y1, x, y) {
			t.Errorf("MotionArrows range misses the arrow of %s", s.Name)
		}
	}
	x0, x1, y0, y1 = Landmarks{R0: testR0}.DataRange()
	if !covers(x0, x1, y0, y1, 0, -testR0) || !covers(x0, x1, y0, y1, 0, 0) {
		t.Error("Landmarks range misses the Sun or the centre")
	}
	x0, x1, y0, y1 = GalaxyGrid{RMax: 12}.DataRange()
	if x0 != -12 || x1 != 12 || y0 != -12 || y1 != 12 {
		t.Errorf("GalaxyGrid range %g..%g × %g..%g, want ±12", x0, x1, y0, y1)
	}
	// No data: an empty range that leaves a plot's axes alone.
	x0, x1, _, _ = SourceMarks{}.DataRange()
	if !(x0 > x1) {
		t.Errorf("empty SourceMarks range %g..%g, want empty", x0, x1)
	}
}

// TestEqualAspect checks that a face-on map is drawn with the same scale on
// both axes whatever the canvas' shape.
func TestEqualAspect(t *testing.T) {
	fig, err := FaceOnMap(MapData{R0: testR0, Arms: testTracks()})
	if err != nil {
		t.Fatal(err)
	}
	for _, wh := range [][2]vg.Length{{400, 300}, {300, 500}, {500, 500}} {
		c := draw.NewCanvas(new(recorder.Canvas), wh[0], wh[1])
		q := *fig.Plot
		equalAspect(&q, c)
		dc := q.DataCanvas(c)
		sx := (q.X.Max - q.X.Min) / float64(dc.Max.X-dc.Min.X)
		sy := (q.Y.Max - q.Y.Min) / float64(dc.Max.Y-dc.Min.Y)
		if math.Abs(sx/sy-1) > 1e-3 {
			t.Errorf("canvas %v: %g vs %g kpc per point", wh, sx, sy)
		}
		// The requested extent stays inside.
		if q.X.Min > fig.X.Min+1e-9 || q.X.Max < fig.X.Max-1e-9 || q.Y.Min > fig.Y.Min+1e-9 || q.Y.Max < fig.Y.Max-1e-9 {
			t.Errorf("canvas %v: ranges shrank", wh)
		}
	}
	// Drawing does not change the figure's own ranges.
	before := fig.X
	fig.Draw(draw.NewCanvas(new(recorder.Canvas), 400, 200))
	if fig.X.Min != before.Min || fig.X.Max != before.Max {
		t.Error("Draw changed the plot's ranges")
	}
}

// TestMapGridMatchesTicks checks that the circles of the polar grid and the
// labelled axis ticks share one spacing.
func TestMapGridMatchesTicks(t *testing.T) {
	for _, c := range []struct {
		extent, want float64
	}{{8, 2}, {10, 2}, {16, 4}} {
		fig, err := FaceOnMap(MapData{R0: testR0, Extent: c.extent})
		if err != nil {
			t.Fatal(err)
		}
		grid := fig.grid
		if grid.step() != c.want {
			t.Errorf("extent %g: grid spacing %g, want %g", c.extent, grid.step(), c.want)
		}
		for _, ax := range []plot.Axis{fig.X, fig.Y} {
			var lbl []float64
			for _, tk := range ax.Tick.Marker.Ticks(-c.extent, c.extent) {
				if tk.Label != "" {
					lbl = append(lbl, tk.Value)
				}
			}
			if len(lbl) < 2 || math.Abs(lbl[1]-lbl[0]-c.want) > 1e-9 {
				t.Errorf("extent %g: labelled ticks %v, want spacing %g", c.extent, lbl, c.want)
			}
		}
	}
}

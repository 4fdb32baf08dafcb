package plots

import (
	"math"
	"testing"

	"gonum.org/v1/plot/vg"
)

// testCurve is the invented rotation curve of the tests: 226 km/s at R0,
// rising by 0.6 km/s/kpc, solid-body inside 2 kpc.
func testCurve() CurveData {
	theta := func(r float64) float64 {
		f := func(r float64) float64 { return 226 + 0.6*(r-testR0) }
		if r < 2 {
			return f(2) * r / 2
		}
		return f(r)
	}
	d := CurveData{R0: testR0, Theta0: theta(testR0), R0Err: 0.2, Theta0Err: 6, RCore: 2, RInner: 4, Arms: testArmList()}
	for r := 0.0; r <= 14; r += 0.25 {
		s := 4 + 0.8*math.Abs(r-testR0)
		d.R = append(d.R, r)
		d.Median = append(d.Median, theta(r))
		d.Lo68, d.Hi68 = append(d.Lo68, theta(r)-s), append(d.Hi68, theta(r)+s)
		d.Lo95, d.Hi95 = append(d.Lo95, theta(r)-2*s), append(d.Hi95, theta(r)+2*s)
	}
	for i, s := range testSources(50, 4) {
		e := 5 + float64(i%7)
		th := theta(s.At.R) + e*math.Sin(float64(i))
		d.Sources = append(d.Sources, CurveSource{
			Name: s.Name, R: s.At.R, RLo: math.Min(s.Near.R, s.Far.R), RHi: math.Max(s.Near.R, s.Far.R),
			Theta: th, ThetaLo: th - e, ThetaHi: th + e, Prob: s.Prob, TiedArm: s.TiedArm,
		})
	}
	return d
}

func TestRotationCurveRenders(t *testing.T) {
	p, err := RotationCurvePlot(testCurve())
	if err != nil {
		t.Fatal(err)
	}
	saveBoth(t, p, 6*vg.Inch, 4*vg.Inch)
}

func TestRotationCurveEdgeCases(t *testing.T) {
	d := testCurve()
	d.Sources = nil
	d.Median[5] = math.NaN()
	d.Lo95[7] = math.Inf(-1)
	p, err := RotationCurvePlot(d)
	if err != nil {
		t.Fatal(err)
	}
	saveBoth(t, p, 5*vg.Inch, 3*vg.Inch)

	// Nothing at all still draws an empty frame.
	p, err = RotationCurvePlot(CurveData{})
	if err != nil {
		t.Fatal(err)
	}
	saveBoth(t, p, 4*vg.Inch, 3*vg.Inch)

	// A single source with NaN bars.
	p, err = RotationCurvePlot(CurveData{Sources: []CurveSource{{R: 5, Theta: 220, RLo: math.NaN(), RHi: 6}}})
	if err != nil {
		t.Fatal(err)
	}
	saveBoth(t, p, 4*vg.Inch, 3*vg.Inch)
}

func TestRotationCurveErrors(t *testing.T) {
	d := testCurve()
	d.Hi68 = d.Hi68[:3]
	if _, err := RotationCurvePlot(d); err == nil {
		t.Error("short Hi68: no error")
	}
	d = testCurve()
	d.Lo95 = nil
	if _, err := RotationCurvePlot(d); err == nil {
		t.Error("half a band: no error")
	}
	d = testCurve()
	d.Sources[0].TiedArm = 7
	if _, err := RotationCurvePlot(d); err == nil {
		t.Error("tie to a missing arm: no error")
	}
}

func TestCurveDataRanges(t *testing.T) {
	d := testCurve()
	x0, x1, y0, y1 := Band{X: d.R, Lo: d.Lo95, Hi: d.Hi95}.DataRange()
	for i := range d.R {
		if !covers(x0, x1, y0, y1, d.R[i], d.Lo95[i]) || !covers(x0, x1, y0, y1, d.R[i], d.Hi95[i]) {
			t.Fatalf("Band range misses radius %g", d.R[i])
		}
	}
	x0, x1, y0, y1 = CurvePoints{Sources: d.Sources}.DataRange()
	for _, s := range d.Sources {
		for _, pt := range [][2]float64{{s.R, s.Theta}, {s.RLo, s.Theta}, {s.RHi, s.Theta}, {s.R, s.ThetaLo}, {s.R, s.ThetaHi}} {
			if !covers(x0, x1, y0, y1, pt[0], pt[1]) {
				t.Fatalf("CurvePoints range misses %v", pt)
			}
		}
	}
	x0, x1, y0, y1 = SunPoint{R0: 8, Theta0: 230, R0Err: 0.5, Theta0Err: 7}.DataRange()
	if x0 != 7.5 || x1 != 8.5 || y0 != 223 || y1 != 237 {
		t.Errorf("SunPoint range %g..%g × %g..%g", x0, x1, y0, y1)
	}
	x0, x1, _, _ = RadialZones{RCore: 2, RInner: 4}.DataRange()
	if x0 != 0 || x1 != 4 {
		t.Errorf("RadialZones range %g..%g, want 0..4", x0, x1)
	}
	// A NaN splits a curve but stays out of its range.
	x0, x1, y0, y1 = Curve{X: []float64{1, 2, math.NaN(), 4}, Y: []float64{5, math.Inf(1), 7, 8}}.DataRange()
	if x0 != 1 || x1 != 4 || y0 != 5 || y1 != 8 {
		t.Errorf("Curve range %g..%g × %g..%g, want 1..4 × 5..8", x0, x1, y0, y1)
	}
}

func TestFiniteRuns(t *testing.T) {
	v := []float64{1, math.NaN(), 2, 3, math.NaN(), math.NaN(), 4}
	got := finiteRuns(len(v), func(i int) bool { return finite(v[i]) })
	want := [][2]int{{0, 1}, {2, 4}, {6, 7}}
	if len(got) != len(want) {
		t.Fatalf("runs %v, want %v", got, want)
	}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("runs %v, want %v", got, want)
		}
	}
}

// TestRotationAxisStartsNearData checks that the Θ axis spans the sources, the Sun's point
// and the curve outside the solid-body core, and not the core's rise from zero.
func TestRotationAxisStartsNearData(t *testing.T) {
	d := testCurve()
	p, err := RotationCurvePlot(d)
	if err != nil {
		t.Fatal(err)
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, s := range d.Sources {
		lo, hi = math.Min(lo, s.ThetaLo), math.Max(hi, s.ThetaHi)
	}
	for i, r := range d.R {
		if r >= d.RCore {
			lo, hi = math.Min(lo, d.Lo95[i]), math.Max(hi, d.Hi95[i])
		}
	}
	if p.Y.Min > lo || p.Y.Max < hi {
		t.Errorf("Θ axis %g..%g misses the data %g..%g", p.Y.Min, p.Y.Max, lo, hi)
	}
	// 6% of the data's span on either side (the figure's padding), no more.
	if pad := 0.06 * (hi - lo); p.Y.Min < lo-pad-1e-9 || p.Y.Max > hi+pad+1e-9 {
		t.Errorf("Θ axis %g..%g reaches beyond the padded data %g..%g", p.Y.Min, p.Y.Max, lo-pad, hi+pad)
	}
	if p.Y.Min < 100 {
		t.Errorf("Θ axis starts at %g km/s: the core's rise from zero takes the height", p.Y.Min)
	}
}

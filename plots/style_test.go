package plots

import (
	"image/color"
	"math"
	"os"
	"path/filepath"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
)

// The plotters and figures satisfy the interfaces they are made for.
var (
	_ plot.Plotter     = GalaxyGrid{}
	_ plot.Plotter     = ArmBands{}
	_ plot.Plotter     = SourceMarks{}
	_ plot.Plotter     = MotionArrows{}
	_ plot.Plotter     = Landmarks{}
	_ plot.Plotter     = &Key{}
	_ plot.Plotter     = Band{}
	_ plot.Plotter     = Curve{}
	_ plot.Plotter     = RadialZones{}
	_ plot.Plotter     = CurvePoints{}
	_ plot.Plotter     = SunPoint{}
	_ plot.DataRanger  = GalaxyGrid{}
	_ plot.DataRanger  = ArmBands{}
	_ plot.DataRanger  = SourceMarks{}
	_ plot.DataRanger  = MotionArrows{}
	_ plot.DataRanger  = Landmarks{}
	_ plot.DataRanger  = Band{}
	_ plot.DataRanger  = Curve{}
	_ plot.DataRanger  = RadialZones{}
	_ plot.DataRanger  = CurvePoints{}
	_ plot.DataRanger  = SunPoint{}
	_ plot.Thumbnailer = ArmBands{}
	_ plot.Thumbnailer = Band{}
	_ plot.Thumbnailer = Curve{}
	_ Figure           = (*plot.Plot)(nil)
	_ Figure           = (*FaceOnPlot)(nil)
	_ Figure           = (*PairsPlot)(nil)
	_ Figure           = (*TracePlot)(nil)
	_ Figure           = (*MembershipPlot)(nil)
)

func labels(ts []plot.Tick) []string {
	var out []string
	for _, t := range ts {
		if t.Label != "" {
			out = append(out, t.Label)
		}
	}
	return out
}

// TestNiceTicks checks tick labels at round numbers (1, 2, 2.5 or 5 × 10^k;
// common practice, no source).
func TestNiceTicks(t *testing.T) {
	for _, c := range []struct {
		lo, hi float64
		n      int
		want   []string
	}{
		{0, 10, 5, []string{"0", "2", "4", "6", "8", "10"}},
		{-12, 12, 5, []string{"−10", "−5", "0", "5", "10"}},
		{7.6, 8.6, 4, []string{"7.75", "8.00", "8.25", "8.50"}},
		{0.001, 0.0042, 4, []string{"0.001", "0.002", "0.003", "0.004"}},
	} {
		got := labels(niceTicks{n: c.n}.Ticks(c.lo, c.hi))
		if len(got) != len(c.want) {
			t.Errorf("[%g, %g]: labels %q, want %q", c.lo, c.hi, got, c.want)
			continue
		}
		for i := range got {
			if got[i] != c.want[i] {
				t.Errorf("[%g, %g]: labels %q, want %q", c.lo, c.hi, got, c.want)
				break
			}
		}
	}
	// A fixed step, and no labels.
	if got := labels((niceTicks{step: 4}).Ticks(-9, 9)); len(got) != 5 || got[0] != "−8" {
		t.Errorf("step 4 on ±9: %q", got)
	}
	if got := labels((niceTicks{n: 4, noLabels: true}).Ticks(0, 1)); len(got) != 0 {
		t.Errorf("noLabels gave %q", got)
	}
	// At least two labels even where rounding the step up leaves one.
	if got := labels((niceTicks{n: 3, margin: 0.05}).Ticks(7.62, 8.58)); len(got) < 2 {
		t.Errorf("[7.62, 8.58]: only %q", got)
	}
	if got := (niceTicks{n: 3}).Ticks(1, 1); got != nil {
		t.Errorf("empty range gave %v", got)
	}
}

func TestMostProbable(t *testing.T) {
	for _, c := range []struct {
		prob  []float64
		tied  int
		k     int
		p     float64
		label string
	}{
		{[]float64{0.1, 0.7, 0.2}, 0, 1, 0.7, "plain"},
		{[]float64{0.1, 0.7, 0.2}, 2, 2, 1, "tied"},
		{[]float64{math.NaN(), 0.3, math.NaN()}, 0, 1, 0.3, "NaN"},
		{nil, 0, 0, 0, "nil"},
		{[]float64{0.6, 0.4}, 0, 0, 0.6, "field"},
	} {
		k, p := MostProbable(c.prob, c.tied)
		if k != c.k || p != c.p {
			t.Errorf("%s: (%d, %g), want (%d, %g)", c.label, k, p, c.k, c.p)
		}
	}
}

func TestColors(t *testing.T) {
	seen := map[color.RGBA]bool{}
	for i := range 7 {
		r, g, b, a := ArmColor(i).RGBA()
		c := color.RGBA{R: uint8(r >> 8), G: uint8(g >> 8), B: uint8(b >> 8), A: uint8(a >> 8)}
		if seen[c] {
			t.Errorf("arm %d repeats a colour", i)
		}
		seen[c] = true
	}
	// The first colour is Okabe & Ito's blue, #0072B2.
	if r, g, b, _ := ArmColor(0).RGBA(); r>>8 != 0x00 || g>>8 != 0x72 || b>>8 != 0xB2 {
		t.Errorf("first arm colour %x %x %x, want 00 72 b2", r>>8, g>>8, b>>8)
	}
	if ArmColor(-1) != FieldColor {
		t.Error("negative index is not the field colour")
	}
	// Premultiplied alpha: half-opaque white is (127.5, …, 127.5).
	if c := withAlpha(color.White, 0.5); c.R != 128 || c.A != 128 {
		t.Errorf("withAlpha(white, 0.5) = %v", c)
	}
}

func TestSaveErrors(t *testing.T) {
	dir := t.TempDir()
	p := plot.New()
	for name, c := range map[string]struct {
		path string
		w, h vg.Length
	}{
		"extension": {filepath.Join(dir, "fig.bmp"), 100, 100},
		"zero size": {filepath.Join(dir, "fig.png"), 0, 100},
		"NaN size":  {filepath.Join(dir, "fig.png"), vg.Length(math.NaN()), 100},
		"huge":      {filepath.Join(dir, "fig.png"), 1e6, 100},
		"no folder": {filepath.Join(dir, "missing", "fig.png"), 100, 100},
	} {
		if err := Save(p, c.path, c.w, c.h); err == nil {
			t.Errorf("%s: no error", name)
		}
	}
	if err := Save(nil, filepath.Join(dir, "x.png"), 100, 100); err == nil {
		t.Error("nil figure: no error")
	}
	// Nothing is left behind by the failed saves.
	left, _ := os.ReadDir(dir)
	if len(left) != 0 {
		t.Errorf("files left after failed saves: %v", left)
	}
	// PDF works too.
	if err := Save(p, filepath.Join(dir, "fig.pdf"), 100, 100); err != nil {
		t.Errorf("PDF: %v", err)
	}
}

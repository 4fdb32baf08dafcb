package plots

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/plot/vg"
)

var pairNames = []string{"R0", "Theta0", "Corvid_pitch", "Lantern_width"}

// correlated returns n draws of a 4-parameter invented posterior with
// correlated pairs.
func correlated(n int, seed uint64) [][]float64 {
	rng := rand.New(rand.NewPCG(seed, 5))
	out := make([][]float64, n)
	for i := range out {
		f := rng.NormFloat64()
		out[i] = []float64{
			8.2 + 0.1*(0.6*f+0.8*rng.NormFloat64()),
			226 + 5*(-0.7*f+0.71*rng.NormFloat64()),
			12 + rng.NormFloat64(),
			0.3 + 0.05*rng.NormFloat64(),
		}
	}
	return out
}

func TestPairsRenders(t *testing.T) {
	c, err := NewPairsPlot(PairsData{Title: "Invented posterior", Names: pairNames, Samples: correlated(5000, 1),
		Truths: []float64{8.2, 226, math.NaN(), 0.3}})
	if err != nil {
		t.Fatal(err)
	}
	saveBoth(t, c, 6*vg.Inch, 6*vg.Inch)
}

func TestPairsEdgeCases(t *testing.T) {
	// One draw.
	c, err := NewPairsPlot(PairsData{Names: pairNames, Samples: correlated(1, 2)})
	if err != nil {
		t.Fatal(err)
	}
	saveBoth(t, c, 4*vg.Inch, 4*vg.Inch)

	// A constant parameter, NaN and infinite values, an all-NaN parameter.
	s := correlated(500, 3)
	for i := range s {
		s[i][1] = 230
		if i%7 == 0 {
			s[i][0] = math.NaN()
		}
		if i%11 == 0 {
			s[i][2] = math.Inf(1)
		}
		s[i][3] = math.NaN()
	}
	c, err = NewPairsPlot(PairsData{Names: pairNames, Samples: s})
	if err != nil {
		t.Fatal(err)
	}
	if m := c.margs[1]; !(m.lo < 230 && m.hi > 230) {
		t.Errorf("constant parameter's range %g..%g does not hold 230", m.lo, m.hi)
	}
	if n := c.margs[0].n; n != 500-(500+6)/7 {
		t.Errorf("R0 kept %d finite draws, want %d", n, 500-(500+6)/7)
	}
	saveBoth(t, c, 4*vg.Inch, 4*vg.Inch)

	// One parameter.
	c, err = NewPairsPlot(PairsData{Names: []string{"R0"}, Samples: [][]float64{{8}, {8.3}, {8.1}}})
	if err != nil {
		t.Fatal(err)
	}
	saveBoth(t, c, 3*vg.Inch, 3*vg.Inch)
}

func TestPairsErrors(t *testing.T) {
	good := correlated(10, 4)
	for name, d := range map[string]PairsData{
		"no names":   {Samples: good},
		"no draws":   {Names: pairNames},
		"short draw": {Names: pairNames, Samples: [][]float64{{1, 2, 3, 4}, {1, 2}}},
		"truths":     {Names: pairNames, Samples: good, Truths: []float64{1}},
		"level 1":    {Names: pairNames, Samples: good, Levels: []float64{0.5, 1}},
		"level NaN":  {Names: pairNames, Samples: good, Levels: []float64{math.NaN()}},
	} {
		if _, err := NewPairsPlot(d); err == nil {
			t.Errorf("%s: no error", name)
		}
	}
}

// TestQuantileSorted checks the interpolated quantile against definition 7
// of Hyndman & Fan (1996, Am. Stat. 50, 361), the default of R and NumPy:
// Q(p) = x[⌊h⌋] + (h − ⌊h⌋)(x[⌊h⌋+1] − x[⌊h⌋]), h = (n − 1)p (0-based),
// worked by hand.
func TestQuantileSorted(t *testing.T) {
	x := []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}
	for _, c := range []struct{ p, want float64 }{
		{0, 1}, {1, 10}, {0.5, 5.5}, {0.16, 2.44}, {0.84, 8.56},
	} {
		if got := quantileSorted(x, c.p); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("Q(%g) = %g, want %g", c.p, got, c.want)
		}
	}
	if got := quantileSorted([]float64{3}, 0.3); got != 3 {
		t.Errorf("one value: Q = %g, want 3", got)
	}
}

// TestDensityThresholds checks the 2-D credible regions on a standard
// bivariate normal, whose highest-density region holding probability p is
// the disc of radius r with r² = −2 ln(1 − p) (the χ² distribution with two
// degrees of freedom; its Δχ² = 2.30 for 68.3% is tabulated in Press et al.,
// Numerical Recipes, 3rd ed., §15.6, cited from memory).
// The area of the cells above each threshold must match π r². Tolerance:
// with 4·10⁵ draws and 0.2-wide cells, a cell near r ≈ 1.5 holds about 230
// draws, whose Poisson noise (~7%) blurs the edge by under a cell; the
// region's area is then good to ~2%, and 4% is allowed.
func TestDensityThresholds(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	const n, bins = 400000, 50
	s := make([][]float64, n)
	for i := range s {
		s[i] = []float64{rng.NormFloat64(), rng.NormFloat64()}
	}
	c, err := NewPairsPlot(PairsData{Names: []string{"a", "b"}, Samples: s, Bins: bins, Smooth: -1, Levels: []float64{0.5, 0.683, 0.954}})
	if err != nil {
		t.Fatal(err)
	}
	pn := c.pairs[1][0]
	mx, my := c.margs[0], c.margs[1]
	cell := (mx.hi - mx.lo) / bins * (my.hi - my.lo) / bins
	for k, p := range c.levels {
		var cells int
		for _, v := range pn.grid {
			if v >= pn.levels[k] {
				cells++
			}
		}
		area := float64(cells) * cell
		want := math.Pi * (-2 * math.Log(1-p))
		if math.Abs(area/want-1) > 0.04 {
			t.Errorf("p = %g: region area %.3f, want %.3f", p, area, want)
		}
	}
}

func TestGaussKernel(t *testing.T) {
	k := gaussKernel(1.5)
	var sum, m2 float64
	h := len(k) / 2
	for i, v := range k {
		sum += v
		m2 += v * float64((i-h)*(i-h))
	}
	if math.Abs(sum-1) > 1e-12 {
		t.Errorf("kernel sums to %g", sum)
	}
	// Truncation at 3σ keeps the variance within 3% of σ² (the normal's
	// tails beyond 3σ carry 0.27% of the mass but ~3% of the variance).
	if math.Abs(m2/2.25-1) > 0.03 {
		t.Errorf("kernel variance %g, want about 2.25", m2)
	}
	if gaussKernel(0) != nil {
		t.Error("σ = 0 gave a kernel")
	}
}

// BenchmarkPairs20 measures binning and drawing a triangle plot of 20
// parameters and 10⁵ draws to PNG.
func BenchmarkPairs20(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 1))
	names := make([]string, 20)
	for j := range names {
		names[j] = "p" + string(rune('a'+j))
	}
	s := make([][]float64, 100000)
	for i := range s {
		f := rng.NormFloat64()
		s[i] = make([]float64, 20)
		for j := range s[i] {
			s[i][j] = float64(j) + 0.5*f + rng.NormFloat64()
		}
	}
	dir := b.TempDir()
	b.ResetTimer()
	for range b.N {
		c, err := NewPairsPlot(PairsData{Names: names, Samples: s})
		if err != nil {
			b.Fatal(err)
		}
		if err := c.Save(dir+"/c.png", 22*vg.Inch, 22*vg.Inch); err != nil {
			b.Fatal(err)
		}
	}
}

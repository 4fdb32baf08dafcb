package plots

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/plot/vg"
)

// testChain returns an invented chain [step][walker][param] of AR(1)
// walkers started away from the centre.
func testChain(steps, walkers, params int, seed uint64) [][][]float64 {
	rng := rand.New(rand.NewPCG(seed, 3))
	cur := make([][]float64, walkers)
	for w := range cur {
		cur[w] = make([]float64, params)
		for j := range cur[w] {
			cur[w][j] = 6*rng.Float64() - 3
		}
	}
	chain := make([][][]float64, steps)
	for s := range chain {
		chain[s] = make([][]float64, walkers)
		for w := range walkers {
			row := make([]float64, params)
			for j := range row {
				row[j] = 0.95*cur[w][j] + 0.31*rng.NormFloat64() + float64(j)
				row[j] -= float64(j)
			}
			cur[w] = row
			chain[s][w] = row
		}
	}
	return chain
}

func TestTraceRenders(t *testing.T) {
	tr, err := NewTracePlot(TraceData{Title: "Walkers", Names: pairNames, Chain: testChain(400, 16, 4, 1), BurnIn: 100,
		Truths: []float64{0, 0, math.NaN(), 0}})
	if err != nil {
		t.Fatal(err)
	}
	saveBoth(t, tr, 6*vg.Inch, 6*vg.Inch)

	// Many parameters in two columns, thinned lines.
	names := make([]string, 11)
	for j := range names {
		names[j] = "Halcyon_" + string(rune('a'+j))
	}
	tr, err = NewTracePlot(TraceData{Names: names, Chain: testChain(3000, 8, 11, 2), BurnIn: 500, MaxPoints: 200})
	if err != nil {
		t.Fatal(err)
	}
	if got := len(tr.lines[0][0].X); got > 200 {
		t.Errorf("thinned line has %d points, want at most 200", got)
	}
	saveBoth(t, tr, 8*vg.Inch, 6*vg.Inch)
}

func TestTraceEdgeCases(t *testing.T) {
	// One step, one walker.
	tr, err := NewTracePlot(TraceData{Names: []string{"R0"}, Chain: [][][]float64{{{8.2}}}})
	if err != nil {
		t.Fatal(err)
	}
	saveBoth(t, tr, 4*vg.Inch, 2*vg.Inch)

	// NaN values and a constant parameter.
	ch := testChain(50, 4, 2, 3)
	for s := range ch {
		for w := range ch[s] {
			ch[s][w][1] = 7
		}
	}
	ch[10][2][0] = math.NaN()
	tr, err = NewTracePlot(TraceData{Names: []string{"a", "b"}, Chain: ch, BurnIn: 50})
	if err != nil {
		t.Fatal(err)
	}
	if r := tr.ranges[1]; !(r[0] < 7 && r[1] > 7) {
		t.Errorf("constant parameter's range %v does not hold 7", r)
	}
	saveBoth(t, tr, 4*vg.Inch, 3*vg.Inch)
}

func TestTraceErrors(t *testing.T) {
	ch := testChain(10, 3, 2, 4)
	ragged := testChain(10, 3, 2, 4)
	ragged[4] = ragged[4][:2]
	short := testChain(10, 3, 2, 4)
	short[2][1] = short[2][1][:1]
	for name, d := range map[string]TraceData{
		"no names": {Chain: ch},
		"empty":    {Names: []string{"a", "b"}},
		"ragged":   {Names: []string{"a", "b"}, Chain: ragged},
		"short":    {Names: []string{"a", "b"}, Chain: short},
		"burn-in":  {Names: []string{"a", "b"}, Chain: ch, BurnIn: 11},
		"negative": {Names: []string{"a", "b"}, Chain: ch, BurnIn: -1},
		"truths":   {Names: []string{"a", "b"}, Chain: ch, Truths: []float64{1}},
	} {
		if _, err := NewTracePlot(d); err == nil {
			t.Errorf("%s: no error", name)
		}
	}
}

// TestThinWalker checks that thinning keeps each run's extremes in step
// order, and so the chain's overall minimum and maximum.
func TestThinWalker(t *testing.T) {
	ch := testChain(1000, 2, 1, 5)
	ch[333][1][0] = 50  // a spike
	ch[334][1][0] = -50 // and a dip right after
	ch[600][1][0] = math.NaN()
	x, y := thinWalker(ch, 1, 0, 40)
	if len(x) != 80 {
		t.Fatalf("%d points, want 80", len(x))
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for s := range ch {
		if v := ch[s][1][0]; finite(v) {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	tlo, thi := math.Inf(1), math.Inf(-1)
	for i, v := range y {
		if i > 0 && x[i] < x[i-1] {
			t.Fatalf("steps out of order at %d: %g after %g", i, x[i], x[i-1])
		}
		tlo, thi = math.Min(tlo, v), math.Max(thi, v)
	}
	if tlo != lo || thi != hi {
		t.Errorf("thinned extremes %g..%g, chain's %g..%g", tlo, thi, lo, hi)
	}
	// Short chains are kept whole.
	x, _ = thinWalker(ch[:50], 0, 0, 40)
	if len(x) != 50 {
		t.Errorf("short chain thinned to %d points", len(x))
	}
}

package quad

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"slices"
	"testing"
)

// roundoff is the allowance for float64 rounding in sums of up to a few
// thousand terms and in the closed forms (common practice, no source).
const roundoff = 1e-13

// narrowMix is a broad component and five narrow Gaussians of widths
// 0.005–0.05 and heights 1e-6–1, their centres at no breakpoint and at no
// edge of the first panels.
var narrowMix = mix{
	{c: 0.83, s: 0.6, h: 1},
	{c: -1.9371, s: 0.005, h: 1},
	{c: 1.3127, s: 0.012, h: 1e-2},
	{c: 2.5713, s: 0.05, h: 0.1},
	{c: -0.4109, s: 0.02, h: 1e-4},
	{c: 0.0931, s: 0.008, h: 1e-6},
}

// TestNarrowGaussians integrates narrowMix over [ln 0.05, ln 30] and
// compares with the closed form (erf, Abramowitz & Stegun 1964, 7.1.1):
// within 1e-5 in the log, and within the layout's own bound, without
// breakpoints, with decoy breakpoints away from every peak, and with
// breakpoints near the peaks as a caller would give them.
func TestNarrowGaussians(t *testing.T) {
	want := math.Log(narrowMix.integral(fullLo, fullHi))
	for _, tc := range []struct {
		name   string
		breaks []float64
	}{
		{"none", nil},
		{"decoys", []float64{-2.5, -1.0, 0.31, 1.71, 2.2, 7, -9}},
		{"near peaks", []float64{-1.935, 1.31, 2.58, -0.41, 0.09}},
	} {
		l, st := mustBuild(t, fullLo, fullHi, tc.breaks, funcs(narrowMix), nil)
		got := logAt(l, narrowMix.logf)
		d := math.Abs(got - want)
		t.Logf("breaks %-10s nodes %3d panels %2d evaluations %4d error %.2g bound %.2g",
			tc.name, st.Nodes, st.Panels, st.Evaluations, d, st.Error[0])
		if !st.Converged {
			t.Errorf("breaks %s: not converged", tc.name)
		}
		if d > 1e-5 || d > st.Error[0]+roundoff {
			t.Errorf("breaks %s: log integral %.12g, closed form %.12g: off by %.3g, bound %.3g",
				tc.name, got, want, d, st.Error[0])
		}
	}
}

// TestRefinementFindsPeak starts from two panels, whose nodes see a
// Gaussian of width 0.03 only through its flank: that first estimate is off
// by more than 1e-2, and refinement brings it within 1e-5 of the closed form
// (erf).
func TestRefinementFindsPeak(t *testing.T) {
	m := mix{{c: -0.5, s: 1, h: 0.2}, {c: 1.1173, s: 0.03, h: 1}}
	want := math.Log(m.integral(fullLo, fullHi))
	mid := 0.5 * (fullLo + fullHi)
	l0, err := NewLayout(fullLo, fullHi, []Panel{{fullLo, mid}, {mid, fullHi}})
	if err != nil {
		t.Fatal(err)
	}
	if d := math.Abs(logAt(l0, m.logf) - want); d < 1e-2 {
		t.Fatalf("first panels alone are off by only %.3g: the peak does not test refinement", d)
	}
	l, st := mustBuild(t, fullLo, fullHi, nil, funcs(m), &Settings{MinPanels: 2, MaxWidth: 10})
	d := math.Abs(logAt(l, m.logf) - want)
	t.Logf("nodes %d panels %d error %.2g bound %.2g", st.Nodes, st.Panels, d, st.Error[0])
	if !st.Converged || d > 1e-5 || d > st.Error[0]+roundoff {
		t.Errorf("refined: converged %v, off by %.3g, bound %.3g", st.Converged, d, st.Error[0])
	}
}

// TestPeakAtOnePilot: three pilots have only a component near u = −1; the
// fourth has in addition a narrow peak at u = 2.5, where the others are
// some 68 below their maximum in the log. The peak's panels survive
// deletion and merging: every pilot is within 1e-5 of its closed form
// (erf). Built from the first three pilots alone, the layout has no node
// near the peak.
func TestPeakAtOnePilot(t *testing.T) {
	base := mix{{c: -1, s: 0.3, h: 1}}
	ms := []mix{
		base,
		{{c: -0.95, s: 0.3, h: 1}},
		{{c: -1.05, s: 0.32, h: 1}},
		{{c: -1, s: 0.3, h: 1}, {c: 2.5, s: 0.01, h: 3}},
	}
	near := func(l *Layout) int {
		n := 0
		for _, u := range l.Nodes() {
			if math.Abs(u-2.5) < 0.05 {
				n++
			}
		}
		return n
	}
	l, st := mustBuild(t, fullLo, fullHi, nil, funcs(ms...), nil)
	for p, m := range ms {
		want := math.Log(m.integral(fullLo, fullHi))
		if d := math.Abs(logAt(l, m.logf) - want); d > 1e-5 || d > st.Error[p]+roundoff {
			t.Errorf("pilot %d: off by %.3g, bound %.3g", p, d, st.Error[p])
		}
	}
	if near(l) == 0 {
		t.Errorf("no node within 0.05 of the peak at 2.5")
	}
	l3, _ := mustBuild(t, fullLo, fullHi, nil, funcs(ms[:3]...), nil)
	if n := near(l3); n != 0 {
		t.Errorf("without the fourth pilot, %d nodes lie near 2.5; the region should have been deleted", n)
	}
	t.Logf("nodes %d with the fourth pilot, %d without", st.Nodes, l3.Len())
}

// TestNegInfDeleted: the integrand is a Gaussian cut to [a, b] inside the
// range and −Inf outside. Every panel reaches into [a, b] (a panel that only
// touches a or b is kept, by the rule that judges the ends too), and the log
// integral is within 1e-5 of the closed form (erf over [a, b]), with
// breakpoints at a and b and without.
func TestNegInfDeleted(t *testing.T) {
	const a, b = -1.2, 1.9
	g := mix{{c: 0.4, s: 0.7, h: 1}}
	f := func(u float64) float64 {
		if u < a || u > b {
			return math.Inf(-1)
		}
		return g.logf(u)
	}
	want := math.Log(g.integral(a, b))
	for _, breaks := range [][]float64{{a, b}, nil} {
		l, st := mustBuild(t, fullLo, fullHi, breaks, []func(float64) float64{f}, nil)
		for _, p := range l.Panels() {
			if p.Hi < a || p.Lo > b {
				t.Errorf("breaks %v: panel [%g, %g] lies where the integrand is −Inf", breaks, p.Lo, p.Hi)
			}
		}
		d := math.Abs(logAt(l, f) - want)
		t.Logf("breaks %v: nodes %d panels %d evaluations %d error %.2g bound %.2g converged %v",
			breaks, st.Nodes, st.Panels, st.Evaluations, d, st.Error[0], st.Converged)
		if !st.Converged || d > 1e-5 || d > st.Error[0]+roundoff {
			t.Errorf("breaks %v: converged %v, off by %.3g, bound %.3g", breaks, st.Converged, d, st.Error[0])
		}
		if st.Deleted[0] != 0 {
			t.Errorf("breaks %v: deleted mass %g, want 0 (only −Inf stretches go)", breaks, st.Deleted[0])
		}
	}
}

// TestAllNegInf: an integrand that is −Inf everywhere leaves an empty
// layout whose integral is zero (log −Inf); with a second, ordinary pilot,
// that pilot decides the layout.
func TestAllNegInf(t *testing.T) {
	none := func(float64) float64 { return math.Inf(-1) }
	l, st := mustBuild(t, fullLo, fullHi, nil, []func(float64) float64{none}, nil)
	if l.Len() != 0 || !st.Converged || st.Error[0] != 0 {
		t.Errorf("−Inf integrand: %d nodes, converged %v, error %g; want 0, true, 0", l.Len(), st.Converged, st.Error[0])
	}
	if v := l.LogIntegral(nil); !math.IsInf(v, -1) {
		t.Errorf("empty layout: log integral %g, want −Inf", v)
	}
	g := mix{{c: 0.2, s: 0.4, h: 1}}
	l, _ = mustBuild(t, fullLo, fullHi, nil, []func(float64) float64{none, g.logf}, nil)
	if d := math.Abs(logAt(l, g.logf) - math.Log(g.integral(fullLo, fullHi))); d > 1e-5 {
		t.Errorf("with a −Inf pilot beside it, the ordinary pilot is off by %.3g", d)
	}
}

// randomPilots draws a broad component and one to three narrow Gaussians
// (widths log-uniform in [smin, 0.1], heights log-uniform in [1e-3, 1],
// centres uniform in the range), then three pilots that shift every centre
// by N(0, 0.05). breaks are each pilot's narrow centres, off by N(0, σ) of
// the peak: a caller's breakpoints found at the pilots are no better.
func randomPilots(r *rand.Rand, smin float64) (ms []mix, breaks []float64) {
	base := mix{{c: fullLo + (fullHi-fullLo)*r.Float64(), s: 0.2 + 0.8*r.Float64(), h: 1}}
	for range 1 + r.IntN(3) {
		base = append(base, bump{
			c: fullLo + (fullHi-fullLo)*r.Float64(),
			s: smin * math.Pow(0.1/smin, r.Float64()),
			h: math.Pow(10, -3*r.Float64()),
		})
	}
	for range 3 {
		m := append(mix(nil), base...)
		for i := range m {
			m[i].c += 0.05 * r.NormFloat64()
			if i > 0 {
				breaks = append(breaks, m[i].c+m[i].s*r.NormFloat64())
			}
		}
		ms = append(ms, m)
	}
	return ms, breaks
}

// TestErrorBoundConservative checks Stats.Error against the true error
// (closed form, erf) for 150 random integrands at three pilots each (fixed
// seed): with breakpoints near the narrow peaks for peaks down to width
// 0.005, and without breakpoints for peaks down to width 0.01 (MaxWidth/25).
// The true error does not exceed the bound, nor Tol, and Check at the pilots
// agrees with it (every tenth trial). (Over 9000 such
// pilots, MIRABILIS_LONG=1, a few in 10^4 exceed the bound, all within Tol:
// see TestErrorBoundLong.)
func TestErrorBoundConservative(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 11))
	for _, tc := range []struct {
		name   string
		smin   float64
		breaks bool
	}{{"breaks", 0.005, true}, {"no breaks", 0.01, false}} {
		worst, ratio := 0.0, 0.0
		var nodes []int
		for trial := range 150 {
			ms, breaks := randomPilots(r, tc.smin)
			if !tc.breaks {
				breaks = nil
			}
			l, st := mustBuild(t, fullLo, fullHi, breaks, funcs(ms...), nil)
			nodes = append(nodes, st.Nodes)
			if !st.Converged {
				t.Errorf("%s, trial %d: not converged", tc.name, trial)
			}
			for p, m := range ms {
				v := valuesAt(l, m.logf)
				d := math.Abs(l.LogIntegral(v) - math.Log(m.integral(fullLo, fullHi)))
				// The monitor's view at the pilots agrees with the build and
				// with the closed form, within Check's own Tol/10.
				if trial%10 == 0 {
					c, _, err := Check(l, nil, m.logf, nil)
					if err != nil {
						t.Fatal(err)
					}
					if math.Abs(c) > 1e-4 || math.Abs(math.Abs(c)-d) > 1e-5 {
						t.Errorf("%s, trial %d, pilot %d: Check %.3g, true error %.3g", tc.name, trial, p, c, d)
					}
				}
				worst = max(worst, d)
				ratio = max(ratio, d/st.Error[p])
				if d > st.Error[p]+roundoff || d > 1e-4 {
					t.Errorf("%s, trial %d, pilot %d: true error %.3g, bound %.3g (%v)", tc.name, trial, p, d, st.Error[p], m)
				}
			}
		}
		t.Logf("%s: worst true error %.2g, largest true/bound %.2g, nodes %s", tc.name, worst, ratio, quartiles(nodes))
	}
}

// TestErrorBoundLong (MIRABILIS_LONG=1) repeats TestErrorBoundConservative
// over 3000 random integrands per family at three pilots each, and a third
// family without breakpoints with peaks down to width 0.005, beyond what
// the first panels resolve. The bound is a heuristic (|K15 − G7| estimates
// the error of G7, not of K15), so the test asks that no true error exceed
// Tol, and that at most 1 in 1000 pilots exceed the bound in the first two
// families and 1 in 100 in the third (measured at this seed: 3, 5 and 60
// in 9000; the third has 3 above Tol and is not held to Tol).
func TestErrorBoundLong(t *testing.T) {
	if os.Getenv("MIRABILIS_LONG") != "1" {
		t.Skip("set MIRABILIS_LONG=1")
	}
	for _, tc := range []struct {
		name   string
		smin   float64
		breaks bool
		rate   float64
		tol    bool
	}{
		{"breaks", 0.005, true, 1e-3, true},
		{"no breaks", 0.01, false, 1e-3, true},
		{"no breaks, narrow", 0.005, false, 1e-2, false},
	} {
		r := rand.New(rand.NewPCG(99, 1))
		above, n := 0, 0
		worst := 0.0
		for range 3000 {
			ms, breaks := randomPilots(r, tc.smin)
			if !tc.breaks {
				breaks = nil
			}
			l, st := mustBuild(t, fullLo, fullHi, breaks, funcs(ms...), nil)
			for p, m := range ms {
				n++
				d := math.Abs(logAt(l, m.logf) - math.Log(m.integral(fullLo, fullHi)))
				worst = max(worst, d)
				if d > st.Error[p]+roundoff {
					above++
				}
				if tc.tol && d > 1e-4 {
					t.Errorf("%s: true error %.3g above Tol (%v)", tc.name, d, m)
				}
			}
		}
		t.Logf("%s: %d of %d pilots above the bound, worst true error %.3g", tc.name, above, n, worst)
		if float64(above) > tc.rate*float64(n) {
			t.Errorf("%s: %d of %d pilots above the bound, want at most %g of them", tc.name, above, n, tc.rate)
		}
	}
}

// TestMergeBudget builds random layouts with and without merging: merging
// moves no pilot's log integral by more than MergeShare × Tol (the budget
// of package model, Quadrature: Tol/10 by default, 1e-5; and 5e-5 with MergeShare 0.5),
// nor by more than Stats.Merged says, and it removes nodes.
func TestMergeBudget(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 5))
	for _, share := range []float64{0, 0.5} {
		set := &Settings{MergeShare: share}
		budget := 0.1 * 1e-4
		if share != 0 {
			budget = share * 1e-4
		}
		before, after, used := 0, 0, 0.0
		for trial := range 60 {
			ms, breaks := randomPilots(r, 0.005)
			lm, st := mustBuild(t, fullLo, fullHi, breaks, funcs(ms...), set)
			ln, stn := mustBuild(t, fullLo, fullHi, breaks, funcs(ms...), &Settings{MergeShare: share, NoMerge: true})
			before += stn.Nodes
			after += st.Nodes
			for p, m := range ms {
				d := math.Abs(logAt(lm, m.logf) - logAt(ln, m.logf))
				used = max(used, st.Merged[p])
				// Merged is relative to the integral before deletion,
				// within a relative 1e-6 of the one compared here, and a
				// relative change x moves the log by up to −ln(1 − x).
				if st.Merged[p] > budget || d > logBound(budget)+roundoff || d > logBound(st.Merged[p]*(1+1e-6))+roundoff {
					t.Errorf("share %g, trial %d, pilot %d: merging moved the log by %.3g, spent %.3g, budget %.3g",
						share, trial, p, d, st.Merged[p], budget)
				}
			}
		}
		t.Logf("MergeShare %g: nodes %d before merging, %d after; largest spending %.2g of %.2g", share, before, after, used, budget)
		if after >= before {
			t.Errorf("MergeShare %g: merging did not remove nodes (%d → %d)", share, before, after)
		}
	}
}

// TestDeletionNegligible compares random layouts built with deletion
// (Depth 20) and without (Depth +Inf): the log integrals differ by no more
// than Stats.Deleted and by less than 1e-7, since a panel goes only if the
// integrand stays e^20 ≈ 5e8 times below its peak.
func TestDeletionNegligible(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 8))
	kept, all := 0, 0
	for trial := range 60 {
		ms, breaks := randomPilots(r, 0.005)
		ld, st := mustBuild(t, fullLo, fullHi, breaks, funcs(ms...), &Settings{NoMerge: true})
		lk, stk := mustBuild(t, fullLo, fullHi, breaks, funcs(ms...), &Settings{NoMerge: true, Depth: math.Inf(1)})
		kept += st.Nodes
		all += stk.Nodes
		for p, m := range ms {
			d := math.Abs(logAt(ld, m.logf) - logAt(lk, m.logf))
			if d > logBound(st.Deleted[p])+roundoff || d > 1e-7 {
				t.Errorf("trial %d, pilot %d: deletion moved the log by %.3g, recorded %.3g", trial, p, d, st.Deleted[p])
			}
		}
	}
	t.Logf("nodes %d without deletion, %d with", all, kept)
	if kept >= all {
		t.Errorf("deletion removed no node (%d → %d)", all, kept)
	}
}

// TestMonitorAndRefine: a layout built at one parameter set is within Tol
// there by Check; at a second set whose narrow peak moved, Check finds the
// true error (closed form, erf) within Tol/10 and above Tol; Refine brings
// it back within 1e-5 of the closed form, and keeps the first set within Tol,
// by bisecting old panels and merging the pieces only within them (each old
// panel is a union of new ones). A peak that moved into a deleted gap,
// which the layout's own |K15 − G7| cannot see, is found by Check and by
// Refine's probes of the gaps.
func TestMonitorAndRefine(t *testing.T) {
	a := mix{{c: 0.3, s: 0.5, h: 1}, {c: 1.0, s: 0.01, h: 2}}
	b := mix{{c: 0.3, s: 0.5, h: 1}, {c: 1.17, s: 0.01, h: 2}}
	l, _ := mustBuild(t, fullLo, fullHi, []float64{1.0}, funcs(a), nil)
	if c, _, err := Check(l, nil, a.logf, nil); err != nil || math.Abs(c) > 1e-4 {
		t.Errorf("at the pilot: Check %.3g (Tol 1e-4), %v", c, err)
	}
	trueB := logAt(l, b.logf) - math.Log(b.integral(fullLo, fullHi))
	c, _, err := Check(l, nil, b.logf, nil)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("moved peak: Check %.3g, true error %.3g", c, trueB)
	if math.Abs(trueB) <= 1e-4 || math.Abs(c-trueB) > 1e-5 {
		t.Errorf("moved peak: Check %.3g, true error %.3g: want the true error, above Tol", c, trueB)
	}
	r, st, err := Refine(l, nil, funcs(b), nil)
	if err != nil {
		t.Fatal(err)
	}
	d := math.Abs(logAt(r, b.logf) - math.Log(b.integral(fullLo, fullHi)))
	da := math.Abs(logAt(r, a.logf) - math.Log(a.integral(fullLo, fullHi)))
	t.Logf("refined: %d → %d nodes, true error %.2g (%.2g at the first set); merging spent %.2g", l.Len(), r.Len(), d, da, st.Merged[0])
	if !st.Converged || d > 1e-5 || da > 1e-4 {
		t.Errorf("refined: converged %v, true error %.3g, at the first set %.3g", st.Converged, d, da)
	}
	covered(t, l.Panels(), r.Panels(), false)

	// A peak far from everything the layout kept.
	cm := mix{{c: -1, s: 0.3, h: 1}}
	lc, _ := mustBuild(t, fullLo, fullHi, nil, funcs(cm), nil)
	moved := mix{{c: -1, s: 0.3, h: 1}, {c: 2.6, s: 0.02, h: 0.5}}
	// The nodes cannot see it: it lies in a gap.
	if d := logAt(lc, moved.logf) - logAt(lc, cm.logf); d > 1e-12 {
		t.Errorf("the nodes see a peak in a gap (%.3g): the gap test is void", d)
	}
	trueGap := logAt(lc, moved.logf) - math.Log(moved.integral(fullLo, fullHi))
	if c, _, err := Check(lc, nil, moved.logf, nil); err != nil || math.Abs(c-trueGap) > 1e-5 || math.Abs(c) <= 1e-4 {
		t.Errorf("peak in a gap: Check %.3g (%v), true error %.3g", c, err, trueGap)
	}
	rc, st, err := Refine(lc, nil, funcs(moved), nil)
	if err != nil {
		t.Fatal(err)
	}
	d = math.Abs(logAt(rc, moved.logf) - math.Log(moved.integral(fullLo, fullHi)))
	t.Logf("gap: %d → %d nodes, true error %.2g", lc.Len(), rc.Len(), d)
	if !st.Converged || d > 1e-5 || d > st.Error[0]+roundoff {
		t.Errorf("peak in a gap: converged %v, true error %.3g, bound %.3g", st.Converged, d, st.Error[0])
	}
	covered(t, lc.Panels(), rc.Panels(), true)
}

// covered checks that every old panel is the union of consecutive new
// panels; with extra, new panels may also lie outside the old ones.
func covered(t *testing.T, old, nu []Panel, extra bool) {
	t.Helper()
	j := 0
	for _, p := range old {
		for j < len(nu) && nu[j].Hi <= p.Lo {
			if !extra {
				t.Errorf("new panel [%g, %g] outside the old ones", nu[j].Lo, nu[j].Hi)
			}
			j++
		}
		if j == len(nu) || nu[j].Lo != p.Lo {
			t.Fatalf("old panel [%g, %g] does not start a new panel", p.Lo, p.Hi)
		}
		for j < len(nu) && nu[j].Hi < p.Hi {
			if j+1 < len(nu) && nu[j+1].Lo != nu[j].Hi {
				t.Fatalf("old panel [%g, %g] is not covered", p.Lo, p.Hi)
			}
			j++
		}
		if j == len(nu) || nu[j].Hi != p.Hi {
			t.Fatalf("old panel [%g, %g] does not end a new panel", p.Lo, p.Hi)
		}
		j++
	}
	if !extra && j != len(nu) {
		t.Errorf("%d new panels after the old ones", len(nu)-j)
	}
}

// TestFallback: a step of 3 in the log-integrand at u = 0.123456. With the
// defaults refinement resolves it. With 4 bisections it cannot resolve the
// step's edge as a peak (that takes 9) but after 2 more its estimate meets
// Tol: the layout is the fallback, converged and merged, and within Tol of
// the closed form. With MinWidth 0.01 not even the estimate can meet Tol: the
// fallback does not converge and is not merged.
func TestFallback(t *testing.T) {
	const at = 0.123456
	f := func(u float64) float64 {
		if u < at {
			return 0
		}
		return 3
	}
	want := math.Log((at - fullLo) + (fullHi-at)*math.Exp(3))
	check := func(name string, s *Settings, converged, fallback bool) Stats {
		l, st := mustBuild(t, fullLo, fullHi, nil, []func(float64) float64{f}, s)
		d := math.Abs(logAt(l, f) - want)
		t.Logf("%s: %d panels, converged %v, fallback %v, true error %.2g, bound %.2g", name, st.Panels, st.Converged, st.Fallback, d, st.Error[0])
		if st.Converged != converged || st.Fallback != fallback {
			t.Errorf("%s: converged %v, fallback %v; want %v, %v", name, st.Converged, st.Fallback, converged, fallback)
		}
		if converged && (d > 1e-4 || d > st.Error[0]+roundoff) {
			t.Errorf("%s: off by %.3g, bound %.3g, want both within Tol 1e-4", name, d, st.Error[0])
		}
		return st
	}
	check("defaults", nil, true, false)
	st := check("4 bisections", &Settings{MaxSplits: 4}, true, true)
	unmerged := check("4 bisections, no merging", &Settings{MaxSplits: 4, NoMerge: true}, true, true)
	if st.Panels >= unmerged.Panels {
		t.Errorf("fallback not merged: %d panels, %d without merging", st.Panels, unmerged.Panels)
	}
	st = check("MinWidth 0.01", &Settings{MinWidth: 0.01}, false, true)
	if st.Merged[0] != 0 {
		t.Errorf("unconverged layout merged (spent %g)", st.Merged[0])
	}
}

// TestBuildErrors: bad input is an error, never a panic.
func TestBuildErrors(t *testing.T) {
	ok := []func(float64) float64{func(u float64) float64 { return -u * u }}
	for _, tc := range []struct {
		name   string
		lo, hi float64
		f      []func(float64) float64
		s      *Settings
	}{
		{"empty range", 1, 1, ok, nil},
		{"reversed range", 2, 1, ok, nil},
		{"infinite range", math.Inf(-1), 1, ok, nil},
		{"NaN range", math.NaN(), 1, ok, nil},
		{"no pilots", 0, 1, nil, nil},
		{"nil pilot", 0, 1, []func(float64) float64{nil}, nil},
		{"NaN value", 0, 1, []func(float64) float64{func(float64) float64 { return math.NaN() }}, nil},
		{"+Inf value", 0, 1, []func(float64) float64{func(float64) float64 { return math.Inf(1) }}, nil},
		{"negative Tol", 0, 1, ok, &Settings{Tol: -1}},
		{"NaN Tol", 0, 1, ok, &Settings{Tol: math.NaN()}},
		{"negative MinPanels", 0, 1, ok, &Settings{MinPanels: -1}},
		{"negative MaxWidth", 0, 1, ok, &Settings{MaxWidth: -1}},
		{"negative MaxSplits", 0, 1, ok, &Settings{MaxSplits: -3}},
		{"negative MinWidth", 0, 1, ok, &Settings{MinWidth: -1}},
		{"negative Depth", 0, 1, ok, &Settings{Depth: -1}},
		{"MergeShare above 1", 0, 1, ok, &Settings{MergeShare: 2}},
	} {
		if _, _, err := Build(tc.lo, tc.hi, nil, tc.f, tc.s); err == nil {
			t.Errorf("%s: no error", tc.name)
		}
	}
	if _, _, err := Refine(nil, nil, ok, nil); err == nil {
		t.Errorf("Refine of nil layout: no error")
	}
}

// logBound returns −ln(1 − x), the most a relative change x moves a log.
func logBound(x float64) float64 { return -math.Log1p(-x) }

func quartiles(x []int) string {
	if len(x) == 0 {
		return "none"
	}
	s := slices.Clone(x)
	slices.Sort(s)
	return fmt.Sprintf("min %d, median %d, max %d", s[0], s[len(s)/2], s[len(s)-1])
}

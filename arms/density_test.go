package arms

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"
)

const testR0 = 8.15

// testArms are invented arms covering pitch angles 8°–25° (and a leading −10°), widths
// 0.1–0.6 kpc, azimuth ranges from 0.1 rad to 9 rad (more than a turn), and kinks with β_ref on
// either side of the kink.
func testArms() []Arm {
	return []Arm{
		{Name: "Corvid", RRef: 9, BetaRef: 0, Pitch: 8 * deg, BetaStart: -1.5, BetaEnd: 7.5, Width: 0.1},
		{Name: "Lantern", RRef: 7, BetaRef: 0.5, Pitch: 12 * deg, BetaStart: -2, BetaEnd: 2.5, Width: 0.3},
		{Name: "Tamarisk", RRef: 10, BetaRef: 0, Pitch: 25 * deg, BetaStart: -0.5, BetaEnd: 2, Width: 0.6},
		{Name: "Halcyon", RRef: 6, BetaRef: 2, Pitch: 14 * deg, Kinked: true, Pitch2: 6 * deg, BetaKink: 1,
			BetaStart: -1, BetaEnd: 5, Width: 0.2},
		{Name: "Vireo", RRef: 8, BetaRef: 0.3, Pitch: 12 * deg, BetaStart: 0.3, BetaEnd: 0.4, Width: 0.4},
		{Name: "Marten", RRef: 5, BetaRef: 1, Pitch: -10 * deg, Kinked: true, Pitch2: 20 * deg, BetaKink: 3.5,
			BetaStart: 1, BetaEnd: 6.5, Width: 0.15},
	}
}

// refLnRadius is ln R(β) of the centre line written afresh from package model (Arms) with
// the antiderivative G of tan ψ: ln R(β) = ln R_ref − (G(β) − G(β_ref)).
func refLnRadius(a Arm, beta float64) float64 {
	G := func(b float64) float64 {
		t1 := math.Tan(a.Pitch)
		if !a.Kinked {
			return t1 * b
		}
		return t1*math.Min(b, a.BetaKink) + math.Tan(a.Pitch2)*(math.Max(b, a.BetaKink)-a.BetaKink)
	}
	return math.Log(a.RRef) - (G(beta) - G(a.BetaRef))
}

func refPitch(a Arm, beta float64) float64 {
	if a.Kinked && beta >= a.BetaKink {
		return a.Pitch2
	}
	return a.Pitch
}

func refWidth(a Arm, R, R0, g float64) float64 { return math.Max(a.Width+g*(R-R0), 0.01) }

type span struct{ a, b, panel float64 }

// armPlaneIntegral returns ∫_{−π}^{π} dβ ∫_0^{Rmax} R dR exp(logRho(R, β)) for one arm, by
// composite Gauss–Legendre (gonum's nodes) in β and, at each β, in R on fine panels over
// ±25 w/cos ψ around every winding of the centre line within 40τ of the arm's range, and on
// coarse panels elsewhere. The centre line and width come from the reference formulas above.
func armPlaneIntegral(a Arm, R0, g, tau float64, logRho func(R, beta float64) float64) float64 {
	const (
		rMax   = 100.0
		nBeta  = 8
		nFine  = 10
		nCoars = 6
	)
	xb, wb := legendre(nBeta)
	xf, wf := legendre(nFine)
	xc, wc := legendre(nCoars)
	var spans []span
	innerR := func(beta float64) float64 {
		spans = spans[:0]
		for n := -8; n <= 8; n++ {
			bn := beta + 2*math.Pi*float64(n)
			if bn < a.BetaStart-40*tau || bn > a.BetaEnd+40*tau {
				continue
			}
			Rc := math.Exp(refLnRadius(a, bn))
			sR := refWidth(a, Rc, R0, g) / math.Cos(refPitch(a, bn))
			lo, hi := math.Max(0, Rc-25*sR), math.Min(rMax, Rc+25*sR)
			if lo < hi {
				spans = append(spans, span{lo, hi, 3.5 * sR})
			}
		}
		slices.SortFunc(spans, func(x, y span) int { return cmpF(x.a, y.a) })
		// Merge overlapping spans, keeping the finer panel length.
		merged := spans[:0]
		for _, s := range spans {
			if k := len(merged) - 1; k >= 0 && s.a <= merged[k].b {
				merged[k].b = math.Max(merged[k].b, s.b)
				merged[k].panel = math.Min(merged[k].panel, s.panel)
				continue
			}
			merged = append(merged, s)
		}
		var sum float64
		integrate := func(lo, hi, panel float64, x, w []float64) {
			m := int(math.Ceil((hi - lo) / panel))
			h := (hi - lo) / float64(m)
			for p := range m {
				a0 := lo + float64(p)*h
				for i := range x {
					R := a0 + 0.5*h*(x[i]+1)
					sum += 0.5 * h * w[i] * R * math.Exp(logRho(R, beta))
				}
			}
		}
		prev := 0.0
		for _, s := range merged {
			if s.a > prev {
				integrate(prev, s.a, 1, xc, wc)
			}
			integrate(s.a, s.b, s.panel, xf, wf)
			prev = s.b
		}
		if prev < rMax {
			integrate(prev, rMax, 1, xc, wc)
		}
		return sum
	}
	const dBeta = 0.04
	m := int(math.Ceil(2 * math.Pi / dBeta))
	h := 2 * math.Pi / float64(m)
	var total float64
	for p := range m {
		b0 := -math.Pi + float64(p)*h
		for i := range xb {
			total += 0.5 * h * wb[i] * innerR(b0+0.5*h*(xb[i]+1))
		}
	}
	return total
}

func cmpF(x, y float64) int {
	switch {
	case x < y:
		return -1
	case x > y:
		return 1
	}
	return 0
}

func legendre(n int) (x, w []float64) {
	x, w = make([]float64, n), make([]float64, n)
	quad.Legendre{}.FixedLocations(x, w, -1, 1)
	return x, w
}

// Each arm density integrates to one over the plane when the width is constant (package model, Arms
// asks for 1e-3; the construction is exact up to the ends' tails beyond 30τ, below 1e-13,
// so 1e-6 is required here).
func TestArmNormalisation(t *testing.T) {
	l := Layout{Arms: testArms(), R0: testR0}
	d, err := NewDensity(l)
	if err != nil {
		t.Fatal(err)
	}
	for k, a := range l.Arms {
		got := armPlaneIntegral(a, l.R0, 0, DefaultEdgeSoftening, func(R, beta float64) float64 { return d.LogArm(k, R, beta) })
		t.Logf("%s: ∫ρ − 1 = %.3g", a.Name, got-1)
		if math.Abs(got-1) > 1e-6 {
			t.Errorf("%s (ψ = %g°, w = %g, Δβ = %g): ∫ρ = %.9f, want 1", a.Name, a.Pitch/deg, a.Width, a.BetaEnd-a.BetaStart, got)
		}
	}
}

// widthGrowthFactor is ∫ N(x c; 0, a + g x) c dx for ε = g/c, after u = x c/a:
// ∫ φ(u/(1+εu)) / (1+εu) du, by composite Gauss–Legendre. Expanding in ε gives 1 + ε² + O(ε⁴)
// (moments of the standard normal: E[u² − (5/2)u⁴ + (1/2)u⁶] = 1), which is the
// 1.0004 at g = 0.02 of package model, Arms.
func widthGrowthFactor(eps float64) float64 {
	f := func(u float64) float64 {
		s := 1 + eps*u
		if s <= 0 {
			return 0
		}
		v := u / s
		return math.Exp(-0.5*v*v) / (math.Sqrt(2*math.Pi) * s)
	}
	return glPanels(f, -40, 40, 400, 10)
}

// With the width growing as w_k + g (R − R0), g = 0.02, each arm density integrates to
// 1 + (g/cos ψ)² + O((g/cos ψ)⁴) ≈ 1.0004 (package model, Arms): within 1e-3 of one as package model (Arms)
// requires, and within 1e-6 of the one-dimensional factor widthGrowthFactor(g/cos ψ)
// (bounded by the factors of ψ_1 and ψ_2 for a kinked arm).
func TestArmNormalisationSlope(t *testing.T) {
	arms := testArms()
	for k := range arms {
		arms[k].Width = math.Max(arms[k].Width, 0.2) // keeps w(R) off its 0.01 kpc floor
	}
	const g = 0.02
	l := Layout{Arms: arms, R0: testR0, WidthSlope: g}
	d, err := NewDensity(l)
	if err != nil {
		t.Fatal(err)
	}
	for k, a := range l.Arms {
		got := armPlaneIntegral(a, l.R0, g, DefaultEdgeSoftening, func(R, beta float64) float64 { return d.LogArm(k, R, beta) })
		t.Logf("%s: ∫ρ − 1 = %.6g", a.Name, got-1)
		if math.Abs(got-1) > 1e-3 {
			t.Errorf("%s: ∫ρ = %.9f, want 1 within 1e-3", a.Name, got)
		}
		f1 := widthGrowthFactor(g / math.Cos(a.Pitch))
		lo, hi := f1, f1
		if a.Kinked {
			f2 := widthGrowthFactor(g / math.Cos(a.Pitch2))
			lo, hi = math.Min(f1, f2), math.Max(f1, f2)
		}
		if got < lo-1e-6 || got > hi+1e-6 {
			t.Errorf("%s: ∫ρ = %.9f, want in [%.9f, %.9f]", a.Name, got, lo, hi)
		}
	}
	if f := widthGrowthFactor(0.02); math.Abs(f-1.0004) > 1e-5 {
		t.Errorf("width growth factor at g/cos ψ = 0.02: %.7f, package model (Arms) says 1.0004", f)
	}
}

// The field disk ρ_0(R) = exp(−R/h)/(2π h²) integrates to one over the plane (package model, Arms),
// by composite Gauss–Legendre over 0 < R < 60h (the tail beyond holds 61 e^{−60} of the mass).
func TestFieldNormalisation(t *testing.T) {
	for _, h := range []float64{0, 2, 3.5} {
		d, err := NewDensity(Layout{R0: testR0, DiskScale: h})
		if err != nil {
			t.Fatal(err)
		}
		hh := h
		if hh == 0 {
			hh = DefaultDiskScale
		}
		got := glPanels(func(R float64) float64 { return 2 * math.Pi * R * math.Exp(d.LogField(R)) }, 0, 60*hh, 120, 10)
		if math.Abs(got-1) > 1e-12 {
			t.Errorf("h = %g: ∫ρ_0 = %.15f, want 1", h, got)
		}
	}
}

// refLogArm is ln ρ_k written directly from package model (Arms) in plain (linear)
// arithmetic, with its own enumeration of the windings.
func refLogArm(a Arm, R0, g, tau, R, beta float64) float64 {
	lo, hi := a.BetaStart-30*tau, a.BetaEnd+30*tau
	var ns []int
	for n := -30; n <= 30; n++ {
		if bn := beta + 2*math.Pi*float64(n); bn >= lo && bn <= hi {
			ns = append(ns, n)
		}
	}
	if len(ns) == 0 {
		best, dist := 0, math.Inf(1)
		for n := -30; n <= 30; n++ {
			bn := beta + 2*math.Pi*float64(n)
			if dd := math.Max(lo-bn, bn-hi); dd < dist {
				best, dist = n, dd
			}
		}
		ns = []int{best}
	}
	span := a.BetaEnd - a.BetaStart
	Z := span / (1 - math.Exp(-span/tau))
	w := refWidth(a, R, R0, g)
	var rho float64
	for _, n := range ns {
		bn := beta + 2*math.Pi*float64(n)
		c := math.Cos(refPitch(a, bn))
		delta := (R - math.Exp(refLnRadius(a, bn))) * c
		E := logistic((bn-a.BetaStart)/tau) * logistic((a.BetaEnd-bn)/tau)
		N := math.Exp(-0.5*delta*delta/(w*w)) / (w * math.Sqrt(2*math.Pi))
		rho += E * N * c / (Z * R)
	}
	return math.Log(rho)
}

// LogDensities agrees with the density of package model (Arms) summed directly in linear
// space, at points near and between the arms (fixed seed), for g = 0 and g = 0.02 and two softenings.
func TestLogDensitiesDirect(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, c := range []struct{ g, tau, h float64 }{{0, 0, 0}, {0.02, 5 * deg, 2.5}, {-0.01, 1 * deg, 0}} {
		l := Layout{Arms: testArms(), R0: testR0, WidthSlope: c.g, EdgeSoftening: c.tau, DiskScale: c.h}
		d, err := NewDensity(l)
		if err != nil {
			t.Fatal(err)
		}
		tau, h := l.soft(), l.scale()
		dst := make([]float64, d.NumArms()+1)
		checked := 0
		for range 3000 {
			beta := math.Pi * (2*rng.Float64() - 1)
			a := l.Arms[rng.IntN(len(l.Arms))]
			bn := beta + 2*math.Pi*float64(rng.IntN(3)-1)
			R := math.Exp(refLnRadius(a, bn)) + 0.6*rng.NormFloat64()
			if R <= 0 {
				continue
			}
			d.LogDensities(dst, R, beta)
			if want := -R/h - math.Log(2*math.Pi*h*h); math.Abs(dst[0]-want) > 1e-13 {
				t.Fatalf("field at R = %g: %.15g, want %.15g", R, dst[0], want)
			}
			for k, ak := range l.Arms {
				want := refLogArm(ak, l.R0, c.g, tau, R, beta)
				if math.IsInf(want, -1) || want < -600 {
					continue // underflows in linear space
				}
				checked++
				if math.Abs(dst[k+1]-want) > 1e-10*math.Max(1, math.Abs(want)) {
					t.Fatalf("%+v, %s at R = %g, β = %g: ln ρ = %.15g, direct sum %.15g", c, ak.Name, R, beta, dst[k+1], want)
				}
				if got := d.LogArm(k, R, beta); got != dst[k+1] {
					t.Fatalf("LogArm(%d) = %g differs from LogDensities %g", k, got, dst[k+1])
				}
			}
		}
		if checked < 3000 {
			t.Errorf("%+v: only %d comparisons made", c, checked)
		}
	}
}

// Far from every arm, and at the centre itself, the log-density is finite and very negative,
// never −Inf or NaN (package model, Arms).
func TestFarFromArms(t *testing.T) {
	arms := testArms()
	arms = append(arms, Arm{Name: "Thread", RRef: 8, Pitch: 89.9 * deg, BetaStart: 0, BetaEnd: 0.5, Width: 0.01})
	l := Layout{Arms: arms, R0: testR0, WidthSlope: -0.05}
	d, err := NewDensity(l)
	if err != nil {
		t.Fatal(err)
	}
	dst := make([]float64, d.NumArms()+1)
	for _, R := range []float64{0, 1e-12, 0.05, 25, 60, 300, 1e4} {
		for _, beta := range []float64{-math.Pi, -2, 0, 1.5, math.Pi, 40} {
			d.LogDensities(dst, R, beta)
			for k, v := range dst {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					t.Errorf("R = %g, β = %g: density %d is %g", R, beta, k, v)
				}
			}
			if R >= 60 { // the radial Thread (ψ = 89.9°) is left out: R − R_k is not across it
				for k, v := range dst[1:len(arms)] {
					if v > -100 {
						t.Errorf("R = %g, β = %g: arm %s has ln ρ = %g, want very negative", R, beta, arms[k].Name, v)
					}
				}
			}
		}
	}
}

// LogDensities and Reset (for the same number of arms) do not allocate
// (testing.AllocsPerRun).
func TestNoAllocations(t *testing.T) {
	l := Layout{Arms: testArms(), R0: testR0, WidthSlope: 0.02}
	d, err := NewDensity(l)
	if err != nil {
		t.Fatal(err)
	}
	dst := make([]float64, d.NumArms()+1)
	if n := testing.AllocsPerRun(100, func() { d.LogDensities(dst, 6.3, 0.7) }); n != 0 {
		t.Errorf("LogDensities allocates %g times per call", n)
	}
	if n := testing.AllocsPerRun(100, func() {
		l.Arms[1].Pitch += 1e-6
		if err := d.Reset(l); err != nil {
			t.Fatal(err)
		}
	}); n != 0 {
		t.Errorf("Reset allocates %g times per call", n)
	}
}

// A rejected layout leaves the Density as it was, and layout settings are validated.
func TestResetErrors(t *testing.T) {
	l := Layout{Arms: testArms(), R0: testR0}
	d, err := NewDensity(l)
	if err != nil {
		t.Fatal(err)
	}
	before := make([]float64, d.NumArms()+1)
	d.LogDensities(before, 7, 0.4)
	bad := []struct {
		field string
		edit  func(*Layout)
	}{
		{"R0", func(l *Layout) { l.R0 = 0 }},
		{"WidthSlope", func(l *Layout) { l.WidthSlope = math.NaN() }},
		{"EdgeSoftening", func(l *Layout) { l.EdgeSoftening = -1 }},
		{"DiskScale", func(l *Layout) { l.DiskScale = math.Inf(1) }},
		{"Pitch", func(l *Layout) { l.Arms[2].Pitch = 1.6 }},
		{"Name", func(l *Layout) { l.Arms[3].Name = l.Arms[0].Name }},
	}
	for _, c := range bad {
		lb := Layout{Arms: testArms(), R0: testR0}
		c.edit(&lb)
		err := d.Reset(lb)
		var pe *ParamError
		if !errors.As(err, &pe) || pe.Field != c.field {
			t.Errorf("bad %s: error %v, want a *ParamError for %s", c.field, err, c.field)
		}
		if _, err := NewDensity(lb); err == nil {
			t.Errorf("bad %s: NewDensity accepted it", c.field)
		}
	}
	after := make([]float64, d.NumArms()+1)
	d.LogDensities(after, 7, 0.4)
	if !slices.Equal(before, after) {
		t.Errorf("failed Reset changed the density: %v, then %v", before, after)
	}
}

// benchLayout is a five-arm model galaxy with one kinked arm and one arm of more than a turn.
func benchLayout() Layout {
	return Layout{
		R0:         testR0,
		WidthSlope: 0.02,
		Arms: []Arm{
			{Name: "Corvid", RRef: 9, Pitch: 8 * deg, BetaStart: -1.5, BetaEnd: 7.5, Width: 0.2},
			{Name: "Lantern", RRef: 7, BetaRef: 0.5, Pitch: 12 * deg, BetaStart: -2, BetaEnd: 2.5, Width: 0.3},
			{Name: "Tamarisk", RRef: 10, Pitch: 13 * deg, BetaStart: -0.5, BetaEnd: 3, Width: 0.25},
			{Name: "Halcyon", RRef: 6, BetaRef: 2, Pitch: 14 * deg, Kinked: true, Pitch2: 6 * deg, BetaKink: 1,
				BetaStart: -1, BetaEnd: 5, Width: 0.2},
			{Name: "Vireo", RRef: 11, Pitch: 10 * deg, BetaStart: -1.2, BetaEnd: 2, Width: 0.35},
		},
	}
}

// BenchmarkLogDensities measures one call of the field and five-arm log-density at points
// spread along lines of sight.
func BenchmarkLogDensities(b *testing.B) {
	d, err := NewDensity(benchLayout())
	if err != nil {
		b.Fatal(err)
	}
	const np = 1024
	Rs, betas := make([]float64, np), make([]float64, np)
	rng := rand.New(rand.NewPCG(3, 4))
	for i := range np {
		l := 2 * math.Pi * rng.Float64()
		dist := 0.1 + 15*rng.Float64()
		Rs[i], betas[i] = Galactocentric(testR0, dist*math.Cos(l), dist*math.Sin(l))
	}
	dst := make([]float64, d.NumArms()+1)
	b.ReportAllocs()
	i := 0
	for b.Loop() {
		d.LogDensities(dst, Rs[i], betas[i])
		i = (i + 1) & (np - 1)
	}
}

// BenchmarkReset measures refilling the per-arm constants for a new parameter set.
func BenchmarkReset(b *testing.B) {
	l := benchLayout()
	d, err := NewDensity(l)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		if err := d.Reset(l); err != nil {
			b.Fatal(err)
		}
	}
}

// With a sharp end (τ = 0.001 rad) a point far beyond it has an end factor E far below the
// smallest float64; its log-density must still follow package model (Arms), here written in logarithms
// with ln σ(x) = x − ln(1 + eˣ) for x < 0 (identity of the logistic function).
func TestSharpEndFarAway(t *testing.T) {
	const tau = 0.001
	a := Arm{Name: "Vireo", RRef: 7, BetaRef: 0.2, Pitch: 11 * deg, BetaStart: 0, BetaEnd: 0.5, Width: 0.3}
	d, err := NewDensity(Layout{Arms: []Arm{a}, R0: testR0, EdgeSoftening: tau})
	if err != nil {
		t.Fatal(err)
	}
	logSig := func(x float64) float64 {
		if x < 0 {
			return x - math.Log1p(math.Exp(x))
		}
		return -math.Log1p(math.Exp(-x))
	}
	for _, c := range []struct{ R, beta float64 }{{7.3, -2.5}, {5, -1.2}, {9, 2.9}, {0.5, -3}} {
		first, last := a.Windings(c.beta, tau)
		if first != last {
			t.Fatalf("β = %g: windings %d…%d, want one", c.beta, first, last)
		}
		bn := c.beta + 2*math.Pi*float64(first)
		cs := math.Cos(a.Pitch)
		w := a.Width
		x := (c.R - math.Exp(refLnRadius(a, bn))) * cs / w
		span := a.BetaEnd - a.BetaStart
		lnZ := math.Log(span / (1 - math.Exp(-span/tau)))
		lnE := logSig((bn-a.BetaStart)/tau) + logSig((a.BetaEnd-bn)/tau)
		if lnE > -746 {
			t.Fatalf("case %+v does not underflow E (ln E = %g)", c, lnE)
		}
		want := lnE + math.Log(cs) - 0.5*x*x - math.Log(w) - 0.5*math.Log(2*math.Pi) - lnZ - math.Log(c.R)
		if got := d.LogArm(0, c.R, c.beta); math.Abs(got-want) > 1e-12*math.Abs(want) {
			t.Errorf("R = %g, β = %g: ln ρ = %.15g, want %.15g", c.R, c.beta, got, want)
		}
	}
}

// TestDensitiesMatchLog checks the linear densities against the exponential of the
// log-densities (the same formula of package model (Arms) evaluated two ways) at points near and far
// from the arms.
func TestDensitiesMatchLog(t *testing.T) {
	l := Layout{
		R0: 8.2, WidthSlope: 0.02,
		Arms: []Arm{
			{Name: "Corvid", RRef: 5, Pitch: 13 * math.Pi / 180, BetaStart: -0.5, BetaEnd: 2.6, Width: 0.25},
			{Name: "Lantern", RRef: 6.6, Pitch: 11 * math.Pi / 180, Kinked: true, Pitch2: 16 * math.Pi / 180, BetaKink: 0.7,
				BetaStart: -1, BetaEnd: 7.5, Width: 0.3},
		},
	}
	d, err := NewDensity(l)
	if err != nil {
		t.Fatal(err)
	}
	lin := make([]float64, 3)
	lg := make([]float64, 3)
	for i := range 2000 {
		R := 0.05 + 16*float64(i%97)/97
		beta := -4 + 12*float64(i)/2000
		d.Densities(lin, R, beta)
		d.LogDensities(lg, R, beta)
		for k := range lin {
			// Densities leaves out windings whose Gaussian factor is below e^−70, which
			// changes a density by less than 1e-30 kpc⁻² (its documented accuracy).
			want := math.Exp(lg[k])
			if math.Abs(lin[k]-want) > 1e-12*want+1e-30 {
				t.Errorf("R=%g β=%g component %d: linear %.15g, exp(log) %.15g", R, beta, k, lin[k], want)
			}
		}
	}
}

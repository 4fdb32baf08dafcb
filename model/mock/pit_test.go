package mock

import (
	"fmt"
	"math"
	"runtime"
	"slices"
	"sync"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/fit"
)

// pitGalaxy and pitParams add to the two-armed test galaxy (whose layer is 30 pc thick)
// what the agreement test needs to see: the Sun 15 pc above the layer's mid-plane, arms whose
// widths grow steeply with radius (so that the width at the source's own radius matters)
// and whose ends fade over τ = 10° (so that the softening of the ends matters), and a survey
// limited in declination and longitude with a completeness falling with distance.
const pitGalaxy = `
[membership]
arm_end_softening = 10

[selection]
declination = [-70, 80]
exclude_longitude = [[350, 10]]
completeness = { half_distance = 10.0, softness = 1.5 }
`

const pitParams = `
z_sun = "fixed(0.015)"
width_slope = "fixed(0.05)"
`

const pitSurvey = `
[survey]
sources = %d
seed = 20261202
fractions = { field = 0.2, Corvid = 0.45 }
labelled = 0
`

// pitModel reads the agreement test's galaxy with n sources.
func pitModel(t *testing.T, n int) *Model {
	t.Helper()
	data := testGalaxy(t, "")
	// The parameters go into [params], the first table of two-arms.toml.
	data = []byte(insertAfter(string(data), "[params]\n", pitParams) + pitGalaxy + fmt.Sprintf(pitSurvey, n))
	m, err := Parse(data, "galaxy.toml", t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// insertAfter returns s with add inserted after the first occurrence of mark.
func insertAfter(s, mark, add string) string {
	i := len(mark)
	for j := 0; j+len(mark) <= len(s); j++ {
		if s[j:j+len(mark)] == mark {
			return s[:j+i] + add[1:] + s[j+i:]
		}
	}
	panic("no " + mark)
}

// TestTrueDistancesFollowThePrior checks that the mock draws from exactly the spatial density
// the likelihood uses (MODEL.md §9): given its direction (l, b), each source's true distance
// must be a draw from the likelihood's distance prior along that sightline, the model's own
// Source.LogSpatialPrior integrated over u = ln d on [d_min, d_max]. So the probability
// integral transform (PIT) of the true distance under that prior is uniform on [0, 1]
// (Rosenblatt 1952, Ann. Math. Stat. 23, 470), over all sources and in every subset chosen
// by direction alone: bins of |b| (where the layer, the Sun's height and the arms' ends play
// differently) and the four quadrants of l.
//
// Each set is tested by Kolmogorov–Smirnov against the uniform distribution; the nine tests
// share a family-wise level of 1% (Bonferroni: 0.01/9 each), at the critical value of
// Kolmogorov's limiting distribution with Stephens' finite-sample correction (see ksQ).
// The seed is fixed. The test sees a mock that is wrong in any one of these ways (each
// checked with the draw so broken, on 20,000 sources): the arms ending sharply at their
// azimuth ranges, with widths taken at the centre line (smallest p 1e-6, over all sources);
// the widths alone taken at the centre line rather than at the source's radius (p 4e-4, for
// 0.1° ≤ |b| < 0.5°); no layer (p < 1e-100).
func TestTrueDistancesFollowThePrior(t *testing.T) {
	n := 20000
	if testing.Short() {
		n = 5000
	}
	m := pitModel(t, n)
	spec, err := fit.SpecFromConfig(m.Config)
	if err != nil {
		t.Fatal(err)
	}
	src, truth, err := m.Draw(spec, nil)
	if err != nil {
		t.Fatal(err)
	}
	p, err := spec.NewParams(m.Truth)
	if err != nil {
		t.Fatal(err)
	}
	prepared, err := model.NewSources(&catalog.Catalog{Sources: src}, spec)
	if err != nil {
		t.Fatal(err)
	}
	pit := pits(spec, p, prepared, truth)

	type set struct {
		name string
		in   func(l, b float64) bool // deg
	}
	sets := []set{{"all sources", func(l, b float64) bool { return true }}}
	for _, r := range [][2]float64{{0, 0.1}, {0.1, 0.5}, {0.5, 2}, {2, 90}} {
		sets = append(sets, set{fmt.Sprintf("%g° ≤ |b| < %g°", r[0], r[1]), func(l, b float64) bool { return math.Abs(b) >= r[0] && math.Abs(b) < r[1] }})
	}
	for q := range 4 {
		lo := 90 * float64(q)
		sets = append(sets, set{fmt.Sprintf("%g° ≤ l < %g°", lo, lo+90), func(l, b float64) bool { return l >= lo && l < lo+90 }})
	}
	alpha := 0.01 / float64(len(sets))
	lambda := ksCritical(alpha)
	for _, st := range sets {
		var u []float64
		for i := range prepared {
			if st.in(prepared[i].Sight.LDeg(), prepared[i].Sight.BDeg()) {
				u = append(u, pit[i])
			}
		}
		if len(u) < 40 {
			t.Errorf("%s: only %d sources; the test needs more", st.name, len(u))
			continue
		}
		D := ksUniform(u)
		nn := math.Sqrt(float64(len(u)))
		crit := lambda / (nn + 0.12 + 0.11/nn)
		t.Logf("%-18s %6d sources  KS D = %.4f  critical %.4f (level %.2g)  p = %.3g", st.name, len(u), D, crit, alpha, ksQ((nn+0.12+0.11/nn)*D))
		if D > crit {
			t.Errorf("%s: PIT of the true distances not uniform: KS D = %.4f over %d sources, critical value %.4f at level %.2g",
				st.name, D, len(u), crit, alpha)
		}
	}
}

// pits returns the PIT of each source's true distance under its distance prior, in
// parallel over sources.
func pits(spec *model.Spec, p *model.Params, src []model.Source, truth []Truth) []float64 {
	out := make([]float64, len(src))
	var wg sync.WaitGroup
	next := make(chan int, len(src))
	for i := range src {
		next <- i
	}
	close(next)
	for range runtime.GOMAXPROCS(0) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				f := func(u float64) float64 { return src[i].LogSpatialPrior(spec, p, math.Exp(u)) }
				out[i] = pitOf(f, math.Log(spec.DMin), math.Log(spec.DMax), math.Log(truth[i].Distance))
			}
		}()
	}
	wg.Wait()
	return out
}

// pitOf returns ∫ from a to x of exp f over ∫ from a to b of exp f, each part integrated by
// adaptive Gauss–Kronrod (7/15) quadrature to 1e-7 of the whole. The log-integrand is
// first scanned on a grid to scale it and to estimate the whole, and the quadrature starts
// from panels narrow enough that no peak of the integrand fits between the nodes of one
// panel unseen.
func pitOf(f func(float64) float64, a, b, x float64) float64 {
	const start, scan = 32, 128
	var v [scan]float64
	shift := f(x)
	for j := range v {
		v[j] = f(a + (b-a)*(float64(j)+0.5)/scan)
		shift = math.Max(shift, v[j])
	}
	g := func(u float64) float64 { return math.Exp(f(u) - shift) }
	// The scan's midpoint sum underestimates the whole only where it misses a narrow peak,
	// which makes the tolerance stricter.
	var rough float64
	for _, w := range v {
		rough += math.Exp(w-shift) * (b - a) / scan
	}
	tol := 1e-7 * rough
	part := func(lo, hi float64) float64 {
		if hi <= lo {
			return 0
		}
		k := max(1, int(math.Ceil(start*(hi-lo)/(b-a))))
		var s float64
		for j := range k {
			s += adapt(g, lo+(hi-lo)*float64(j)/float64(k), lo+(hi-lo)*float64(j+1)/float64(k), tol*(hi-lo)/(b-a)/float64(k), 0)
		}
		return s
	}
	below, above := part(a, x), part(x, b)
	return below / (below + above)
}

// adapt integrates g over [a, b] by bisection until the Gauss–Kronrod error estimate of
// each panel is below its share of tol.
func adapt(g func(float64) float64, a, b, tol float64, depth int) float64 {
	v, e := gk15(g, a, b)
	if e <= tol || depth > 40 {
		return v
	}
	c := 0.5 * (a + b)
	return adapt(g, a, c, tol/2, depth+1) + adapt(g, c, b, tol/2, depth+1)
}

// Gauss–Kronrod 7/15 nodes and weights on [−1, 1] (Piessens et al. 1983, QUADPACK, qk15).
var (
	gkX = [8]float64{0.991455371120812639206854697526329, 0.949107912342758524526189684047851,
		0.864864423359769072789712788640926, 0.741531185599394439863864773280788,
		0.586087235467691130294144845693013, 0.405845151377397166906606412076961,
		0.207784955007898467600689403773245, 0}
	gkK = [8]float64{0.022935322010529224963732008058970, 0.063092092629978553290700663189204,
		0.104790010322250183839876322541518, 0.140653259715525918745189590510238,
		0.169004726639267902826583426598550, 0.190350578064785409913256402421014,
		0.204432940075298892414161999234649, 0.209482141084727828012999174891714}
	gkG = [4]float64{0.129484966168869693270611432679082, 0.279705391489276667901467771423780,
		0.381830050505118944950369775488975, 0.417959183673469387755102040816327}
)

// gk15 returns the 15-point Kronrod estimate of ∫ g over [a, b] and |K15 − G7|.
func gk15(g func(float64) float64, a, b float64) (float64, float64) {
	c, h := 0.5*(a+b), 0.5*(b-a)
	fc := g(c)
	k, gs := gkK[7]*fc, gkG[3]*fc
	for j := range 7 {
		f := g(c-h*gkX[j]) + g(c+h*gkX[j])
		k += gkK[j] * f
		if j%2 == 1 {
			gs += gkG[j/2] * f
		}
	}
	return k * h, math.Abs(k-gs) * h
}

// ksUniform returns the Kolmogorov–Smirnov statistic D = sup |F_n(u) − u| of the sample u
// against the uniform distribution on [0, 1]. It sorts u.
func ksUniform(u []float64) float64 {
	slices.Sort(u)
	n := float64(len(u))
	var d float64
	for i, v := range u {
		d = math.Max(d, math.Max(float64(i+1)/n-v, v-float64(i)/n))
	}
	return d
}

// ksQ returns Q(λ) = 2 Σ_{j≥1} (−1)^{j−1} exp(−2 j² λ²), the probability that Kolmogorov's
// limiting statistic exceeds λ (Kolmogorov 1933, Giorn. Ist. Ital. Attuari 4, 83); with
// λ = (√n + 0.12 + 0.11/√n) D it is the significance of a one-sample KS statistic D of n
// values, accurate for n ≥ 4 (Stephens 1970, J. R. Stat. Soc. B 32, 115; Press et al.,
// Numerical Recipes, §14.3).
func ksQ(lambda float64) float64 {
	if lambda < 0.2 {
		return 1
	}
	var s, sign = 0.0, 1.0
	for j := 1; j <= 100; j++ {
		term := sign * math.Exp(-2*float64(j*j)*lambda*lambda)
		s += term
		if math.Abs(term) < 1e-16 {
			break
		}
		sign = -sign
	}
	return 2 * s
}

// ksCritical returns the λ at which ksQ(λ) = alpha, by bisection.
func ksCritical(alpha float64) float64 {
	lo, hi := 0.2, 5.0
	for range 100 {
		mid := 0.5 * (lo + hi)
		if ksQ(mid) > alpha {
			lo = mid
		} else {
			hi = mid
		}
	}
	return 0.5 * (lo + hi)
}

// The critical values of Kolmogorov's limiting distribution that tables give (e.g. Smirnov
// 1948, Ann. Math. Stat. 19, 279: 1.358 at 5%, 1.628 at 1%; values recalled from memory)
// are those of ksCritical.
func TestKolmogorovCriticalValues(t *testing.T) {
	for _, c := range []struct{ alpha, want float64 }{{0.05, 1.358}, {0.01, 1.628}, {0.001, 1.949}} {
		if got := ksCritical(c.alpha); math.Abs(got-c.want) > 1e-3 {
			t.Errorf("critical value at %g: %.4f, want %.3f", c.alpha, got, c.want)
		}
	}
}

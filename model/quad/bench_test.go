package quad

import (
	"math"
	"math/rand/v2"
	"testing"
)

// twoPeakPilots returns 12 pilots of a typical two-peak integrand: a
// parallax peak of width 0.1 in u = ln d near d = 4 kpc and a kinematic
// peak of width 0.02 near d = 6.5 kpc, ten times higher, both moved by
// N(0, 0.02) and the kinematic width by 10% from pilot to pilot; breaks
// holds each pilot's two centres.
func twoPeakPilots() (pilots []func(float64) float64, breaks []float64) {
	r := rand.New(rand.NewPCG(12, 12))
	for range 12 {
		m := mix{
			{c: math.Log(4) + 0.02*r.NormFloat64(), s: 0.1, h: 1},
			{c: math.Log(6.5) + 0.02*r.NormFloat64(), s: 0.02 * (1 + 0.1*r.NormFloat64()), h: 10},
		}
		pilots = append(pilots, m.logf)
		breaks = append(breaks, m[0].c, m[1].c)
	}
	return pilots, breaks
}

// BenchmarkBuild lays out the two-peak integrand at 12 pilots, over the
// whole default range [ln 0.05, ln 30] and over a parallax window
// [ln 2.5, ln 10].
func BenchmarkBuild(b *testing.B) {
	pilots, breaks := twoPeakPilots()
	for _, rg := range []struct {
		name   string
		lo, hi float64
	}{{"full", fullLo, fullHi}, {"window", math.Log(2.5), math.Log(10)}} {
		b.Run(rg.name, func(b *testing.B) {
			var st Stats
			for b.Loop() {
				_, st, _ = Build(rg.lo, rg.hi, breaks, pilots, nil)
			}
			b.ReportMetric(float64(st.Nodes), "nodes")
			b.ReportMetric(float64(st.Evaluations), "evals/pilot")
		})
	}
}

// BenchmarkLogIntegral evaluates the log integral from the values at the
// nodes of the two-peak layout, for one block and for a mixture of four.
func BenchmarkLogIntegral(b *testing.B) {
	pilots, breaks := twoPeakPilots()
	l, _, err := Build(fullLo, fullHi, breaks, pilots, nil)
	if err != nil {
		b.Fatal(err)
	}
	v := valuesAt(l, pilots[0])
	for _, nb := range []int{1, 4} {
		vals := make([]float64, 0, nb*len(v))
		for k := range nb {
			for _, x := range v {
				vals = append(vals, x-float64(k))
			}
		}
		b.Run(map[int]string{1: "one", 4: "four"}[nb], func(b *testing.B) {
			var s float64
			for b.Loop() {
				s += l.LogIntegral(vals)
			}
			b.ReportMetric(float64(l.Len()), "nodes")
		})
	}
}

// BenchmarkEvaluateIntegrand measures one call of the benchmarks'
// integrand, to put evals/pilot of BenchmarkBuild in proportion.
func BenchmarkEvaluateIntegrand(b *testing.B) {
	pilots, _ := twoPeakPilots()
	var s float64
	u := 1.5
	for b.Loop() {
		s += pilots[0](u)
		u += 1e-9
	}
}

package fastexp

import (
	"math"
	"math/rand/v2"
	"testing"
)

// ulps returns the distance between a and b in units in the last place of b.
func ulps(a, b float64) float64 {
	return math.Abs(a-b) / (math.Nextafter(b, math.Inf(1)) - b)
}

// TestExpAgreesWithMath compares Exp with math.Exp (the reference: Go's port of FreeBSD's
// correctly rounded-to-within-1-ulp e_exp.c) on a dense sweep of (−708, 709) and on random
// arguments where the likelihood uses it (−80 … 5): within two units in the last place.
func TestExpAgreesWithMath(t *testing.T) {
	worst, at := 0.0, 0.0
	check := func(x float64) {
		if u := ulps(Exp(x), math.Exp(x)); u > worst {
			worst, at = u, x
		}
	}
	const n = 1_000_000
	for i := range n {
		check(-707.9 + 1416.8*float64(i)/n)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for range n {
		check(-80 + 85*rng.Float64())
		check(1e-3 * rng.NormFloat64())
	}
	if worst > 2 {
		t.Errorf("Exp(%v) is %.2f units in the last place from math.Exp, want ≤ 2", at, worst)
	}
	t.Logf("largest difference: %.2f ulp at x = %v", worst, at)
}

// TestExpEdges checks the arguments passed to math.Exp and the exact values e^0 = 1 and
// e^1 = e (IEEE 754: the correctly rounded double of e is math.E).
func TestExpEdges(t *testing.T) {
	for _, x := range []float64{-708, -708.5, -745.2, -800, 709, 709.7, 710, math.Inf(1), math.Inf(-1)} {
		if got, want := Exp(x), math.Exp(x); got != want {
			t.Errorf("Exp(%v) = %v, want %v", x, got, want)
		}
	}
	if got := Exp(math.NaN()); !math.IsNaN(got) {
		t.Errorf("Exp(NaN) = %v, want NaN", got)
	}
	if got := Exp(0); got != 1 {
		t.Errorf("Exp(0) = %v, want 1", got)
	}
	if got := Exp(1); ulps(got, math.E) > 1 {
		t.Errorf("Exp(1) = %v, want e = %v", got, math.E)
	}
}

var sink float64

// BenchmarkExp and BenchmarkMathExp time independent exponentials of arguments spread over
// the likelihood's range.
func BenchmarkExp(b *testing.B)     { bench(b, Exp) }
func BenchmarkMathExp(b *testing.B) { bench(b, math.Exp) }

func bench(b *testing.B, f func(float64) float64) {
	xs := make([]float64, 1024)
	for i := range xs {
		xs[i] = -70 * float64(i) / float64(len(xs))
	}
	var s float64
	for b.Loop() {
		for _, x := range xs {
			s += f(x)
		}
	}
	sink = s
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(len(xs)), "ns/exp")
}

// BenchmarkExpChain times exponentials each of whose argument depends on the one before,
// as in the arms' Gaussian of a radius that is itself an exponential: their latency.
func BenchmarkExpChain(b *testing.B) {
	s := 0.5
	for b.Loop() {
		for range 1024 {
			s = Exp(-s - 0.1)
		}
	}
	sink = s
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/1024, "ns/exp")
}

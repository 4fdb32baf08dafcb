package quad

import (
	"math"
	"testing"
)

// bump is a Gaussian h·exp(−(u−c)²/(2s²)) in the integration variable.
type bump struct{ c, s, h float64 }

// mix is a sum of bumps, with log and closed-form integral.
type mix []bump

func (m mix) logf(u float64) float64 {
	top := math.Inf(-1)
	for _, b := range m {
		top = max(top, math.Log(b.h)-0.5*sq((u-b.c)/b.s))
	}
	if math.IsInf(top, -1) {
		return top
	}
	var s float64
	for _, b := range m {
		s += math.Exp(math.Log(b.h) - 0.5*sq((u-b.c)/b.s) - top)
	}
	return top + math.Log(s)
}

func sq(x float64) float64 { return x * x }

// erfDiff returns erf(b) − erf(a), a ≤ b, without cancellation in the
// tails.
func erfDiff(a, b float64) float64 {
	switch {
	case a >= 0:
		return math.Erfc(a) - math.Erfc(b)
	case b <= 0:
		return math.Erfc(-b) - math.Erfc(-a)
	}
	return math.Erf(b) - math.Erf(a)
}

// integral returns ∫_lo^hi of the mix in closed form: each bump gives
// h s √(π/2) [erf((hi−c)/(s√2)) − erf((lo−c)/(s√2))] (Abramowitz & Stegun
// 1964, 7.1.1).
func (m mix) integral(lo, hi float64) float64 {
	var s float64
	for _, b := range m {
		s += b.h * b.s * math.Sqrt(math.Pi/2) * erfDiff((lo-b.c)/(b.s*math.Sqrt2), (hi-b.c)/(b.s*math.Sqrt2))
	}
	return s
}

// logAt returns the layout's log integral of the log-integrand f.
func logAt(l *Layout, f func(float64) float64) float64 {
	u := l.Nodes()
	v := make([]float64, len(u))
	for i, x := range u {
		v[i] = f(x)
	}
	return l.LogIntegral(v)
}

// valuesAt returns f at the layout's nodes.
func valuesAt(l *Layout, f func(float64) float64) []float64 {
	u := l.Nodes()
	v := make([]float64, len(u))
	for i, x := range u {
		v[i] = f(x)
	}
	return v
}

func funcs(ms ...mix) []func(float64) float64 {
	out := make([]func(float64) float64, len(ms))
	for i, m := range ms {
		out[i] = m.logf
	}
	return out
}

// fullLo and fullHi are ln 0.05 and ln 30: the default distance range of the
// model, in u = ln(d / kpc).
var fullLo, fullHi = math.Log(0.05), math.Log(30)

func mustBuild(t testing.TB, lo, hi float64, breaks []float64, f []func(float64) float64, s *Settings) (*Layout, Stats) {
	t.Helper()
	l, st, err := Build(lo, hi, breaks, f, s)
	if err != nil {
		t.Fatal(err)
	}
	return l, st
}

// Package roots finds roots and extrema of functions of one variable by bisection and
// golden-section search, the one copy the spiral arms' crossings and the kinematic distances
// share.
package roots

import "math"

// Tol is the relative width to which both searches narrow their brackets: an interval
// about x is narrow enough once it is at most Tol·max(1, |x|) wide.
const Tol = 1e-12

// maxIter bounds the steps of either search; Tol is reached long before for any bracket
// of ordinary size.
const maxIter = 200

// Bisect returns a root of f in [a, b], where fa = f(a) and f(b) have opposite signs: it
// halves the bracket, keeping the sign change, until it is at most Tol·max(1, |x|) wide or
// f vanishes at a midpoint, and returns that midpoint.
func Bisect(f func(float64) float64, a, b, fa float64) float64 {
	for range maxIter {
		m := 0.5 * (a + b)
		if m <= a || m >= b || b-a <= Tol*math.Max(1, math.Abs(m)) {
			return m
		}
		fm := f(m)
		if fm == 0 {
			return m
		}
		if (fm < 0) == (fa < 0) {
			a, fa = m, fm
		} else {
			b = m
		}
	}
	return 0.5 * (a + b)
}

// golden is (√5 − 1)/2, the ratio by which golden-section search shrinks its bracket.
const golden = 0.6180339887498949

// GoldenMin searches [a, b] for a local minimum of f by golden-section search (Kiefer
// 1953, Proc. Amer. Math. Soc. 4, 502) until the bracket is at most Tol·max(1, |lo|) wide,
// lo its lower end, or until stop, when not nil, reports true for a value of f at one of the
// two inner points. It returns the better of the two inner points and the value of f there.
func GoldenMin(f func(float64) float64, a, b float64, stop func(fx float64) bool) (x, fx float64) {
	x1, x2 := b-golden*(b-a), a+golden*(b-a)
	g1, g2 := f(x1), f(x2)
	lo, hi := a, b
	for range maxIter {
		if hi-lo <= Tol*math.Max(1, math.Abs(lo)) {
			break
		}
		if g1 < g2 {
			hi, x2, g2 = x2, x1, g1
			x1 = hi - golden*(hi-lo)
			g1 = f(x1)
		} else {
			lo, x1, g1 = x1, x2, g2
			x2 = lo + golden*(hi-lo)
			g2 = f(x2)
		}
		if stop != nil && (stop(g1) || stop(g2)) {
			break
		}
	}
	if g2 < g1 {
		return x2, g2
	}
	return x1, g1
}

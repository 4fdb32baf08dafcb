package roots

import (
	"math"
	"testing"
)

// TestBisect checks roots against closed forms: √2 of x² − 2, π of sin x on [3, 4], and
// ln 20 of eˣ − 20, where the tolerance is relative (Tol·|x|).
func TestBisect(t *testing.T) {
	for _, c := range []struct {
		name string
		f    func(float64) float64
		a, b float64
		want float64
	}{
		{"x²−2", func(x float64) float64 { return x*x - 2 }, 0, 2, math.Sqrt2},
		{"sin", math.Sin, 3, 4, math.Pi},
		{"exp", func(x float64) float64 { return math.Exp(x) - 20 }, 0, 10, math.Log(20)},
		{"far", func(x float64) float64 { return x - 123.456 }, 0, 1000, 123.456},
	} {
		got := Bisect(c.f, c.a, c.b, c.f(c.a))
		if math.Abs(got-c.want) > 2*Tol*math.Max(1, c.want) {
			t.Errorf("%s: root %.17g, want %.17g", c.name, got, c.want)
		}
	}
	// A root at a midpoint is returned exactly.
	if got := Bisect(func(x float64) float64 { return x - 1 }, 0, 2, -1); got != 1 {
		t.Errorf("root at the midpoint: %g, want 1", got)
	}
}

// TestGoldenMin checks minima against closed forms: π for cos on [2, 4] and 1/√2 for
// x⁴ − x² on [0, 2], and an early stop once the function goes negative.
func TestGoldenMin(t *testing.T) {
	x, fx := GoldenMin(math.Cos, 2, 4, nil)
	// Near a minimum f is flat: x is known to about √(ε) of the function's precision,
	// but the bracket's width bounds the error here.
	if math.Abs(x-math.Pi) > 1e-7 || math.Abs(fx+1) > 1e-14 {
		t.Errorf("cos on [2, 4]: minimum at %.12g (%.15g), want π (−1)", x, fx)
	}
	x, _ = GoldenMin(func(x float64) float64 { return x*x*x*x - x*x }, 0, 2, nil)
	if math.Abs(x-1/math.Sqrt2) > 1e-7 {
		t.Errorf("x⁴ − x²: minimum at %.12g, want 1/√2", x)
	}
	calls := 0
	f := func(x float64) float64 { calls++; return (x-3)*(x-3) - 0.25 }
	x, fx = GoldenMin(f, 0, 10, func(v float64) bool { return v < 0 })
	if !(fx < 0) || math.Abs(x-3) >= 0.5 || calls > 20 {
		t.Errorf("stop at a negative value: x = %g, f = %g after %d calls", x, fx, calls)
	}
}

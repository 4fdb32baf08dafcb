package model

import (
	"math"
	"math/rand/v2"
	"testing"
)

func TestMonotoneCubicAgainstSciPy(t *testing.T) {
	// SciPy 1.10.1's PchipInterpolator (gen_frames.py, "pchip" cases): the same monotone
	// cubic (Fritsch & Butland 1984 slopes within the Fritsch & Carlson 1980 conditions).
	ref := loadFramesReference(t)
	if ref.ScipyVersion != "1.10.1" {
		t.Errorf("reference made with SciPy %s, test names 1.10.1", ref.ScipyVersion)
	}
	if len(ref.Pchip) == 0 {
		t.Fatal("no PCHIP cases in the reference")
	}
	for _, pc := range ref.Pchip {
		// Core radius below every node, so the interpolant is seen unchanged.
		c, err := NewNodesCurve(pc.X, pc.Y, MonotoneCubic, 1)
		if err != nil {
			t.Fatal(err)
		}
		last := pc.X[len(pc.X)-1]
		var maxV, maxS float64
		for i, r := range pc.At {
			maxV = math.Max(maxV, math.Abs(c.Theta(r)-pc.Value[i]))
			if r < last { // beyond the last node the curve is flat by design
				maxS = math.Max(maxS, math.Abs(c.Slope(r)-pc.Slope[i]))
			}
		}
		t.Logf("%s: max |ΔΘ| %.3g km/s, max |ΔdΘ/dR| %.3g", pc.Name, maxV, maxS)
		if maxV > 1e-10 || maxS > 1e-10 {
			t.Errorf("%s: differs from SciPy's PCHIP by %g (value), %g (slope)", pc.Name, maxV, maxS)
		}
	}
}

func TestMonotoneCubicProperties(t *testing.T) {
	// Fritsch & Carlson 1980: the interpolant passes through the nodes and is monotone on
	// every interval where the data are; here checked on random monotone data, rising and
	// falling, with uneven spacing.
	rng := rand.New(rand.NewPCG(21, 22))
	for trial := 0; trial < 200; trial++ {
		n := 2 + rng.IntN(9)
		x := make([]float64, n)
		y := make([]float64, n)
		x[0], y[0] = 2.5+rng.Float64(), 150+100*rng.Float64()
		dir := 1.0
		if trial%2 == 1 {
			dir = -1
		}
		for j := 1; j < n; j++ {
			x[j] = x[j-1] + 0.05 + 4*rng.Float64()*rng.Float64()
			step := 40 * rng.Float64() * rng.Float64()
			if rng.IntN(4) == 0 {
				step = 0 // plateaus
			}
			y[j] = y[j-1] + dir*step
		}
		c, err := NewNodesCurve(x, y, MonotoneCubic, 2)
		if err != nil {
			t.Fatal(err)
		}
		for j := range x {
			if got := c.Theta(x[j]); math.Abs(got-y[j]) > 1e-12*math.Abs(y[j]) {
				t.Fatalf("trial %d: Θ(R_%d) = %v, node %v", trial, j+1, got, y[j])
			}
		}
		prev := c.Theta(x[0])
		for k := 1; k <= 2000; k++ {
			r := x[0] + (x[n-1]-x[0])*float64(k)/2000
			v := c.Theta(r)
			if dir*(v-prev) < -1e-10 {
				t.Fatalf("trial %d: not monotone at R = %v (%v after %v)\nx=%v\ny=%v", trial, r, v, prev, x, y)
			}
			prev = v
		}
	}
}

func TestNodesCurveShape(t *testing.T) {
	radii := []float64{4, 6, 9, 13}
	speeds := []float64{210, 236, 231, 240}
	for _, interp := range []Interpolation{MonotoneCubic, LinearInterp} {
		c, err := NewNodesCurve(radii, speeds, interp, 2.5)
		if err != nil {
			t.Fatal(err)
		}
		// Flat beyond both ends (package model, Kinematics), down to the core.
		if c.Theta(3) != 210 || c.Theta(2.5) != 210 || c.Theta(20) != 240 || c.Slope(3) != 0 || c.Slope(20) != 0 {
			t.Errorf("%v: not flat beyond the ends", interp)
		}
		// Solid body inside the core: Θ(R) = Θ(R_core) R/R_core, zero at the centre.
		if got := c.Theta(1); math.Abs(got-210*1/2.5) > 1e-12 || c.Theta(0) != 0 {
			t.Errorf("%v: core Θ(1) = %v", interp, got)
		}
		for j := range radii {
			if c.Theta(radii[j]) != speeds[j] {
				t.Errorf("%v: Θ(%v) = %v, want %v", interp, radii[j], c.Theta(radii[j]), speeds[j])
			}
		}
	}
	// Linear interpolation: the midpoint of an interval is the mean of its nodes
	// (definition).
	c, _ := NewNodesCurve(radii, speeds, LinearInterp, 2)
	if got := c.Theta(7.5); math.Abs(got-(236+231)/2.0) > 1e-12 {
		t.Errorf("linear midpoint %v", got)
	}
	if got := c.Slope(7.5); math.Abs(got-(231-236)/3.0) > 1e-12 {
		t.Errorf("linear slope %v", got)
	}
	// One node: flat.
	one, err := NewNodesCurve([]float64{8}, []float64{230}, MonotoneCubic, 2)
	if err != nil || one.Theta(5) != 230 || one.Theta(12) != 230 || one.Slope(8) != 0 {
		t.Errorf("one node: %v %v", one, err)
	}
}

func TestCurveFormulas(t *testing.T) {
	// package model, Kinematics: linear Θ0 + (dΘ/dR)(R − R0), power Θ0 (R/R0)^α, solid body inside R_core.
	lin, _ := NewLinearCurve(8, 230, -2, 2)
	if lin.Theta(8) != 230 || math.Abs(lin.Theta(12)-222) > 1e-12 || math.Abs(lin.Theta(1)-(230-2*(2-8))/2.0) > 1e-12 {
		t.Errorf("linear: %v %v %v", lin.Theta(8), lin.Theta(12), lin.Theta(1))
	}
	pow, _ := NewPowerCurve(8, 230, 0.1, 2)
	if math.Abs(pow.Theta(8)-230) > 1e-12 || math.Abs(pow.Theta(16)-230*math.Pow(2, 0.1)) > 1e-12 {
		t.Errorf("power: %v %v", pow.Theta(8), pow.Theta(16))
	}
	if math.Abs(pow.Theta(1)-230*math.Pow(0.25, 0.1)/2) > 1e-12 {
		t.Errorf("power core: %v", pow.Theta(1))
	}
}

func TestCurveSlopesNumerically(t *testing.T) {
	// Slope must be dΘ/dR: compare with central differences away from kinks.
	rng := rand.New(rand.NewPCG(4, 9))
	for _, c := range kinTestCurves(t, 8.3) {
		for i := 0; i < 300; i++ {
			r := 0.1 + 20*rng.Float64()
			const h = 1e-6
			if math.Abs(r-2) < 2*h {
				continue
			}
			num := (c.Theta(r+h) - c.Theta(r-h)) / (2 * h)
			if got := c.Slope(r); math.Abs(got-num) > 1e-5 {
				t.Errorf("%T: Slope(%v) = %v, central difference %v", c, r, got, num)
			}
		}
	}
}

func TestCurveErrors(t *testing.T) {
	bad := []struct {
		name string
		err  error
	}{
		{"linear R0 inside core", func() error { _, e := NewLinearCurve(1, 230, 0, 2); return e }()},
		{"linear zero core", func() error { _, e := NewLinearCurve(8, 230, 0, 0); return e }()},
		{"power NaN alpha", func() error { _, e := NewPowerCurve(8, 230, math.NaN(), 2); return e }()},
		{"nodes empty", func() error { _, e := NewNodesCurve(nil, nil, MonotoneCubic, 2); return e }()},
		{"nodes lengths", func() error { _, e := NewNodesCurve([]float64{1, 2}, []float64{1}, MonotoneCubic, 2); return e }()},
		{"nodes order", func() error {
			_, e := NewNodesCurve([]float64{5, 5}, []float64{1, 2}, MonotoneCubic, 2)
			return e
		}()},
		{"nodes interp", func() error { _, e := NewNodesCurve([]float64{5}, []float64{1}, Interpolation("spline"), 2); return e }()},
		{"nodes Inf", func() error {
			_, e := NewNodesCurve([]float64{5, 6}, []float64{1, math.Inf(1)}, MonotoneCubic, 2)
			return e
		}()},
	}
	for _, b := range bad {
		if b.err == nil {
			t.Errorf("%s: accepted", b.name)
		}
	}
}

package arms

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"
)

// The Sun is at (R0, β = 0); a point toward l = 90° has R = √(R0² + d²) and β = atan(d/R0) > 0
// (Galactic rotation runs toward l = 90° at the Sun); the centre is at R = 0; and
// Heliocentric inverts Galactocentric (the geometry of package model, Frames, worked by hand).
func TestGalactocentric(t *testing.T) {
	const R0 = 8.2
	if R, b := Galactocentric(R0, 0, 0); R != R0 || b != 0 {
		t.Errorf("Sun: R = %g, β = %g; want %g, 0", R, b, R0)
	}
	R, b := Galactocentric(R0, 0, 3)
	if math.Abs(R-math.Sqrt(R0*R0+9)) > 1e-14 || math.Abs(b-math.Atan(3/R0)) > 1e-15 {
		t.Errorf("l = 90°, d = 3: R = %g, β = %g", R, b)
	}
	if R, _ := Galactocentric(R0, R0, 0); R != 0 {
		t.Errorf("centre: R = %g", R)
	}
	if _, b := Galactocentric(R0, 12, 1e-9); math.Abs(b-math.Pi) > 1e-9 {
		t.Errorf("beyond the centre: β = %g, want π", b)
	}
	rng := rand.New(rand.NewPCG(5, 6))
	for range 100 {
		x, y := 30*rng.Float64()-15, 30*rng.Float64()-15
		R, b := Galactocentric(R0, x, y)
		x2, y2 := Heliocentric(R0, R, b)
		if math.Abs(x2-x) > 1e-12 || math.Abs(y2-y) > 1e-12 {
			t.Fatalf("(%g, %g) → (R %g, β %g) → (%g, %g)", x, y, R, b, x2, y2)
		}
	}
}

type crossingRef struct {
	R0    float64
	DMax  float64
	Arms  []Arm
	Lines []struct {
		Arm       string
		L         float64
		Crossings [][3]float64 // D, β_n, R
	}
}

// Crossings agree with testdata/arms/crossings.json, computed by crossings.py with its own
// centre-line formula, a 40001-point grid and scipy.optimize.brentq (SciPy 1.10).
func TestCrossingsReference(t *testing.T) {
	raw, err := os.ReadFile(filepath.Join("..", "testdata", "arms", "crossings.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref crossingRef
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatal(err)
	}
	arms := map[string]Arm{}
	for _, a := range ref.Arms {
		arms[a.Name] = a
	}
	total := 0
	var got []Crossing
	for _, line := range ref.Lines {
		a, ok := arms[line.Arm]
		if !ok {
			t.Fatalf("reference names unknown arm %q", line.Arm)
		}
		got, err = a.Crossings(got[:0], ref.R0, line.L, ref.DMax, 0)
		if err != nil {
			t.Fatal(err)
		}
		if len(got) != len(line.Crossings) {
			t.Errorf("%s, l = %.1f°: %d crossings %v, reference has %d %v", a.Name, line.L/deg, len(got), got, len(line.Crossings), line.Crossings)
			continue
		}
		for i, want := range line.Crossings {
			c := got[i]
			if math.Abs(c.D-want[0]) > 1e-9 || math.Abs(c.Beta-want[1]) > 1e-9 || math.Abs(c.R-want[2]) > 1e-9 {
				t.Errorf("%s, l = %.1f°, crossing %d: %+v, reference (D %.12g, β %.12g, R %.12g)", a.Name, line.L/deg, i, c, want[0], want[1], want[2])
			}
		}
		total += len(line.Crossings)
	}
	if total < 40 {
		t.Errorf("reference holds only %d crossings", total)
	}
}

// A point placed on an arm's centre line (at a chosen winding azimuth, fixed seed) is found
// on its line of sight at its own distance and azimuth (construction; common practice, no
// source).
func TestCrossingsPlacedPoint(t *testing.T) {
	const R0 = 8.15
	rng := rand.New(rand.NewPCG(7, 8))
	var got []Crossing
	for _, a := range testArms() {
		for range 60 {
			bn := a.BetaStart + (a.BetaEnd-a.BetaStart)*rng.Float64()
			Rk := math.Exp(refLnRadius(a, bn))
			x, y := R0-Rk*math.Cos(bn), Rk*math.Sin(bn)
			d, l := math.Hypot(x, y), math.Atan2(y, x)
			var err error
			got, err = a.Crossings(got[:0], R0, l, d+0.5+rng.Float64()*10, 0)
			if err != nil {
				t.Fatal(err)
			}
			found := false
			for _, c := range got {
				if math.Abs(c.D-d) < 1e-9 {
					found = true
					if math.Abs(c.Beta-bn) > 1e-9 || math.Abs(c.R-Rk) > 1e-9 {
						t.Errorf("%s: point at d = %g, β_n = %g, R = %g found as %+v", a.Name, d, bn, Rk, c)
					}
				}
			}
			if !found {
				t.Errorf("%s: point at d = %g, l = %g°, β_n = %g not found in %+v", a.Name, d, l/deg, bn, got)
			}
		}
	}
}

// A ring (ψ = 0) of radius a is met along longitude l at d = R0 cos l ± √(a² − R0² sin² l)
// (circle–line intersection, analytic). Lines of sight that graze the ring, with the two
// crossings far closer together than the bracketing grid, must still yield both.
func TestCrossingsRing(t *testing.T) {
	const R0, a = 8.0, 5.0
	// Once round, with β = π (behind the centre) inside the range.
	ring := Arm{Name: "Halcyon", RRef: a, BetaStart: -3, BetaEnd: 3.2, Width: 0.2}
	lt := math.Asin(a / R0) // tangent longitude
	for _, l := range []float64{0, 0.3, lt - 0.05, lt - 1e-4, lt - 1e-6, lt - 1e-8, -(lt - 1e-7), lt + 1e-6, 2} {
		got, err := ring.Crossings(nil, R0, l, 20, 0)
		if err != nil {
			t.Fatal(err)
		}
		disc := a*a - R0*R0*math.Sin(l)*math.Sin(l)
		if disc <= 0 {
			if len(got) != 0 {
				t.Errorf("l = %.8g: %d crossings %+v, want none", l, len(got), got)
			}
			continue
		}
		want := []float64{R0*math.Cos(l) - math.Sqrt(disc), R0*math.Cos(l) + math.Sqrt(disc)}
		if len(got) != 2 {
			t.Errorf("l = %.8g: %d crossings %+v, want %v", l, len(got), got, want)
			continue
		}
		for i := range want {
			// Near tangency the root in d is ill-conditioned: ΔD ≈ (residual error)/slope.
			tol := 1e-9 + 1e-12/math.Sqrt(disc)
			if math.Abs(got[i].D-want[i]) > tol || math.Abs(got[i].R-a) > 1e-9 {
				t.Errorf("l = %.8g, crossing %d: %+v, want D = %.12g", l, i, got[i], want[i])
			}
		}
	}
}

// Crossings respect dmax, the azimuth margin, and reject bad arguments.
func TestCrossingsLimits(t *testing.T) {
	const R0 = 8.0
	ring := Arm{Name: "Vireo", RRef: 5, BetaStart: 0.1, BetaEnd: 0.4, Width: 0.2}
	// Toward l = 20° the ring is met at β ≈ 0.3 (near) and β ≈ 2.5 (far).
	got, err := ring.Crossings(nil, R0, 20*deg, 20, 0)
	if err != nil || len(got) != 1 || got[0].Beta < 0.1 || got[0].Beta > 0.4 {
		t.Fatalf("range [0.1, 0.4]: %+v, %v; want the near crossing only", got, err)
	}
	got, err = ring.Crossings(nil, R0, 20*deg, 20, 2.3)
	if err != nil || len(got) != 2 {
		t.Errorf("with margin 2.3 rad: %+v, %v; want both crossings", got, err)
	}
	got, err = ring.Crossings(nil, R0, 20*deg, 0.9*got[0].D, 0)
	if err != nil || len(got) != 0 {
		t.Errorf("dmax short of the crossing: %+v, %v; want none", got, err)
	}
	for _, c := range []struct{ R0, l, dmax, margin float64 }{
		{0, 0, 10, 0}, {8, math.NaN(), 10, 0}, {8, 0, -1, 0}, {8, 0, 10, -0.1},
	} {
		if _, err := ring.Crossings(nil, c.R0, c.l, c.dmax, c.margin); err == nil {
			t.Errorf("%+v accepted", c)
		}
	}
	bad := ring
	bad.Width = 0
	if _, err := bad.Crossings(nil, R0, 0, 10, 0); err == nil {
		t.Error("invalid arm accepted")
	}
}

// An arm through (R_ref, β_ref = 0) crosses the Sun–centre line at R_ref, and one turn on at
// R_ref exp(∓2π tan ψ) (log-spiral per-turn property, common practice, no source); only turns
// inside [β_start, β_end] count, nearest the Sun first.
func TestSunLine(t *testing.T) {
	const R0 = 8.15
	psi := 11 * deg
	a := Arm{Name: "Corvid", RRef: 6.8, Pitch: psi, BetaStart: -7, BetaEnd: 7, Width: 0.3}
	f := math.Exp(2 * math.Pi * math.Tan(psi))
	want := []float64{6.8, 6.8 * f, 6.8 / f} // |R − R0|: 1.35, 5.29, 5.15 → order 6.8, 6.8/f, 6.8f
	got, err := a.SunLine(nil, R0)
	if err != nil {
		t.Fatal(err)
	}
	order := []float64{want[0], want[2], want[1]}
	if len(got) != 3 {
		t.Fatalf("got %+v, want radii %v", got, order)
	}
	for i, R := range order {
		if math.Abs(got[i].R-R) > 1e-12*R || math.Abs(got[i].D-math.Abs(R-R0)) > 1e-12*R {
			t.Errorf("crossing %d: %+v, want R = %.12g", i, got[i], R)
		}
	}
	a.BetaStart, a.BetaEnd = 0.5, 6
	if got, _ := a.SunLine(nil, R0); len(got) != 0 {
		t.Errorf("range without β = 2πn: %+v, want none", got)
	}
	a.BetaStart, a.BetaEnd = 0.5, 7
	if got, _ := a.SunLine(nil, R0); len(got) != 1 || math.Abs(got[0].Beta-2*math.Pi) > 1e-15 {
		t.Errorf("range [0.5, 7]: %+v, want the winding β = 2π", got)
	}
	if _, err := a.SunLine(nil, -1); err == nil {
		t.Error("negative R0 accepted")
	}
}

// BenchmarkCrossings measures the crossings of one arm of more than a turn with one line of
// sight out to 25 kpc.
func BenchmarkCrossings(b *testing.B) {
	a := testArms()[0]
	var got []Crossing
	var err error
	i := 0
	for b.Loop() {
		got, err = a.Crossings(got[:0], testR0, float64(i%36)*10*deg, 25, 0)
		if err != nil {
			b.Fatal(err)
		}
		i++
	}
}

package mock

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model/fit"
)

// TestKeptSharesAreTheNormalisation checks the mock's selection against the likelihood's
// normalisation (MODEL.md §9): of the sources the mock draws from component m of the whole
// Galaxy, the share it keeps (inside the distance range, and with the selection's
// probability S) estimates Z_m = ∫ ρ_m S dV, which package model computes by quadrature.
// Each share must agree within four binomial standard errors; the seed is fixed.
func TestKeptSharesAreTheNormalisation(t *testing.T) {
	n := 200000
	if testing.Short() {
		n = 50000
	}
	m := pitModel(t, 1)
	spec, err := fit.SpecFromConfig(m.Config)
	if err != nil {
		t.Fatal(err)
	}
	p, err := spec.NewParams(m.Truth)
	if err != nil {
		t.Fatal(err)
	}
	pl, err := newPlacer(spec, p, m.Survey.fractionsOrdered)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(3, 14))
	drawn := make([]int, spec.NumComponents())
	kept := make([]int, spec.NumComponents())
	for range n {
		pc, ok, err := pl.draw(rng)
		if err != nil {
			t.Fatal(err)
		}
		drawn[pc.comp]++
		if ok {
			kept[pc.comp]++
		}
	}
	z := spec.Normalisation(p, nil)
	for c := range z {
		share := float64(kept[c]) / float64(drawn[c])
		se := math.Sqrt(z[c] * (1 - z[c]) / float64(drawn[c]))
		t.Logf("%-8s kept %7d of %7d: %.4f; Z = %.4f ± %.4f", spec.ComponentName(c), kept[c], drawn[c], share, z[c], se)
		if math.Abs(share-z[c]) > 4*se {
			t.Errorf("%s: the mock keeps %.4f of its sources, the normalisation Z = %.4f (4 SE %.4f)", spec.ComponentName(c), share, z[c], 4*se)
		}
	}
}

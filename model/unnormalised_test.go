package model

import (
	"math"
	"testing"
)

// TestUnnormalisedParams checks NewParamsUnnormalised against NewParams: the selection's
// normalisation is a constant factor of every node of a source's integrand, so the
// membership probabilities and the node masses, which are ratios of sums over the nodes,
// and the derived quantities, which never see it, come out bit for bit the same (closed
// form: a common factor cancels in a ratio). ln L_i, which needs the normalisation, is NaN
// with a selection; without one the two sets are the same.
func TestUnnormalisedParams(t *testing.T) {
	for _, c := range indexedCases {
		t.Run(c.name, func(t *testing.T) {
			spec := indexedSpec(t, c)
			L, full := indexedBuild(t, c, spec, indexedSources(20, 7))
			bare, err := spec.NewParamsUnnormalised(pointValues(c))
			if err != nil {
				t.Fatal(err)
			}
			selected := spec.Selection.Active() && spec.Galaxy
			switch {
			case selected && !math.IsNaN(bare.LogNorm):
				t.Errorf("LogNorm = %g, want NaN", bare.LogNorm)
			case selected && (full.LogNorm == 0 || math.IsNaN(full.LogNorm)):
				t.Errorf("NewParams: LogNorm = %g with a selection", full.LogNorm)
			case !selected && (bare.LogNorm != 0 || full.LogNorm != 0):
				t.Errorf("LogNorm = %g and %g without a selection, want 0", bare.LogNorm, full.LogNorm)
			}
			nc := spec.NumComponents()
			m1, m2 := make([]float64, nc), make([]float64, nc)
			for i := range L.Sources {
				l1 := L.SourceDetail(i, full, m1)
				l2 := L.SourceDetail(i, bare, m2)
				for m := range m1 {
					if m1[m] != m2[m] {
						t.Errorf("source %d: membership %d = %.17g, with the normalisation %.17g", i, m, m2[m], m1[m])
					}
				}
				if selected != math.IsNaN(l2) || (!selected && l1 != l2) {
					t.Errorf("source %d: ln L_i = %g unnormalised, %g normalised", i, l2, l1)
				}
				a, b := L.NodeMasses(i, full, nil), L.NodeMasses(i, bare, nil)
				for j := range a {
					if a[j] != b[j] {
						t.Errorf("source %d: node %d mass %.17g, with the normalisation %.17g", i, j, b[j], a[j])
					}
				}
			}
			d1, d2 := Derived(full, spec), Derived(bare, spec)
			for name, v := range d1 {
				if w := d2[name]; v != w && !(math.IsNaN(v) && math.IsNaN(w)) {
					t.Errorf("%s = %.17g, with the normalisation %.17g", name, w, v)
				}
			}
		})
	}
}

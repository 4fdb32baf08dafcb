package model

import (
	"math"
	"slices"
	"testing"
)

// TestQuadratureErrorsAgainstReference: the monitor's measure of the quadrature error is
// the error itself. Panels laid out at the truth alone (pilot_00) are checked at the ten
// test sets of testdata/likelihood, one pilot spread away, where they are off by up to
// ~1e-2: for every tenth source, QuadratureErrors agrees with the difference between ln L_i
// on the panels and SciPy's adaptive quad (see reference_test.go) to within 1e-5, the
// tenth of the tolerance to which it refines; the sources it puts above the tolerance are
// those truly above it (but for a band of ±1e-5); and the sums over the sources agree.
func TestQuadratureErrorsAgainstReference(t *testing.T) {
	if testing.Short() {
		t.Skip("lays out 300 sources and checks 300 source-evaluations")
	}
	ref := readReference(t)
	L, spec, _ := refLikelihood(t, "galaxy_gaussian", []string{"pilot_00"})
	var sets []string
	for set := range ref["galaxy_gaussian"] {
		if len(set) > 5 && set[:5] == "test_" {
			sets = append(sets, set)
		}
	}
	slices.Sort(sets)
	var sample []int
	for i := 0; i < len(L.Sources); i += 10 {
		sample = append(sample, i)
	}
	const tol = 1e-4
	var n, over, worstTrue, worstGap float64
	for _, set := range sets {
		p := refParams(t, spec, set)
		got, err := L.QuadratureErrors(p, sample)
		if err != nil {
			t.Fatal(err)
		}
		flagged := L.Monitor(p, sample)
		var sumGot, sumTrue float64
		for k, i := range sample {
			truth := L.SourceLogL(i, p) - ref["galaxy_gaussian"][set][L.Sources[i].Name]
			sumGot += got[k]
			sumTrue += truth
			n++
			worstTrue = max(worstTrue, math.Abs(truth))
			worstGap = max(worstGap, math.Abs(got[k]-truth))
			if math.Abs(got[k]-truth) > 1e-5 {
				t.Errorf("%s, %s: measured error %.3g, true error %.3g", set, L.Sources[i].Name, got[k], truth)
			}
			_, isFlagged := flagged[i]
			if math.Abs(truth) > tol {
				over++
			}
			if (math.Abs(truth) > tol+1e-5 && !isFlagged) || (math.Abs(truth) < tol-1e-5 && isFlagged) {
				t.Errorf("%s, %s: true error %.3g, flagged %v", set, L.Sources[i].Name, truth, isFlagged)
			}
		}
		if math.Abs(sumGot-sumTrue) > 1e-5*float64(len(sample)) {
			t.Errorf("%s: summed measured error %.3g, summed true error %.3g", set, sumGot, sumTrue)
		}
	}
	t.Logf("%g source-evaluations, %g truly above %g (largest %.2g); measured − true at most %.2g",
		n, over, tol, worstTrue, worstGap)
	if over == 0 {
		t.Error("no source-evaluation above the tolerance: the flagging is not tested")
	}
}

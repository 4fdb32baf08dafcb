package fit

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/mat"
)

// TestCentralHessianMatchesGonum checks centralHessian against gonum's fd.Hessian with the
// same formula and step, evaluated serially: every entry must agree exactly, for one
// thread and for several, since the same points are summed in the same order.
func TestCentralHessianMatchesGonum(t *testing.T) {
	const n = 5
	// A smooth function with cross terms of different sizes (no source: any such function
	// serves; the reference is gonum's own result).
	f := func(y []float64) float64 {
		var s float64
		for i, v := range y {
			s += float64(i+1) * v * v
			if i > 0 {
				s += math.Sin(0.3*v*y[i-1]) + 0.1*v*y[0]*y[0]
			}
		}
		return -s + math.Exp(0.2*y[n-1])
	}
	var want mat.SymDense
	fd.Hessian(&want, f, make([]float64, n), &fd.Settings{Formula: fd.Central, Step: 1})
	for _, threads := range []int{1, 3} {
		got := centralHessian(f, n, threads)
		for i := range n {
			for j := range n {
				if g, w := got.At(i, j), want.At(i, j); g != w {
					t.Errorf("threads %d: H[%d][%d] = %.17g, gonum's fd.Hessian %.17g", threads, i, j, g, w)
				}
			}
		}
	}
}

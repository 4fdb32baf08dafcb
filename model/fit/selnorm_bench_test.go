package fit

import (
	"math"
	"runtime"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model"
)

// BenchmarkNormalisation times the selection's normalisation (Spec.Normalisation: Z_m of the
// field and the four arms) of the scaling benchmarks' galaxy at its truth, under a survey
// that sees declinations above −30°, leaves out the 20° about l = 0 and whose completeness
// halves at 12 kpc, next to one log-posterior evaluation of a 150-source mock of the same
// galaxy without a selection, on one thread; cpu-ns/op is the thread's CPU time, which a
// loaded machine inflates far less than wall time. BenchmarkNormalisationCases (package
// model) counts the points of each case.
func BenchmarkNormalisation(b *testing.B) {
	const degree = math.Pi / 180
	bm := mockJob(b, 150)
	p, err := bm.job.Post.Params(bm.x)
	if err != nil {
		b.Fatal(err)
	}
	spec := *bm.job.Spec
	spec.Selection = model.Selection{DecMin: -30 * degree, DecMax: 90 * degree,
		ExcludeL: [][2]float64{{350 * degree, 10 * degree}}, HalfDistance: 12, Softness: 1.5}
	run := func(b *testing.B, f func()) {
		runtime.LockOSThread()
		defer runtime.UnlockOSThread()
		b.ReportAllocs()
		b.ResetTimer()
		cpu0, cpuOK := threadCPU()
		for range b.N {
			f()
		}
		cpu1, _ := threadCPU()
		b.StopTimer()
		if cpuOK {
			b.ReportMetric(float64((cpu1-cpu0).Nanoseconds())/float64(b.N), "cpu-ns/op")
		}
	}
	b.Run("likelihood-150", func(b *testing.B) {
		run(b, func() { bm.job.Post.LogDensity(bm.x) })
		b.ReportMetric(float64(bm.nodes), "nodes")
	})
	for _, vertical := range []bool{true, false} {
		name := "normalisation-layer"
		if !vertical {
			name = "normalisation-plane"
		}
		b.Run(name, func(b *testing.B) {
			s := spec
			s.Vertical = vertical
			z := make([]float64, s.NumComponents())
			run(b, func() { z = s.Normalisation(p, z) })
		})
	}
}

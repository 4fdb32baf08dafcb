package mcmc

import (
	"context"
	"fmt"
	"path/filepath"
	"testing"
)

// Sampler overhead per walker-step with a trivial target (a standard normal,
// a few nanoseconds per call), so that the time is the sampler's own:
// proposal, acceptance, bookkeeping, the chain in memory and, in the "file"
// case, the CSV chain file (without checkpoints, whose fsync calls measure
// the disk rather than the sampler). The one-off work before the first step
// (the start) and after the last (the final τ estimate and the stuck-walker
// check, see BenchmarkAutocorrTime) is left out. One benchmark operation is one step of the whole
// ensemble; ns/walker-step divides by the walker count. The chain keeps
// every 10th step so that memory stays small at large b.N, except in the
// "keep-all" case.
func BenchmarkStep(b *testing.B) {
	cases := []struct {
		name                  string
		dim, walkers, threads int
		thin                  int
		file                  bool
		moves                 []WeightedMove
	}{
		{name: "stretch", dim: 10, walkers: 32, threads: 1, thin: 10},
		{name: "stretch", dim: 10, walkers: 32, threads: 2, thin: 10},
		{name: "stretch", dim: 10, walkers: 128, threads: 2, thin: 10},
		{name: "differential", dim: 10, walkers: 32, threads: 1, thin: 10, moves: []WeightedMove{{Move: DifferentialMove{}}}},
		{name: "walk", dim: 10, walkers: 32, threads: 1, thin: 10, moves: []WeightedMove{{Move: WalkMove{}}}},
		{name: "stretch-keep-all", dim: 2, walkers: 32, threads: 1, thin: 1},
		{name: "stretch-file", dim: 10, walkers: 32, threads: 1, thin: 1, file: true},
	}
	for _, c := range cases {
		b.Run(fmt.Sprintf("%s/dim=%d/walkers=%d/threads=%d", c.name, c.dim, c.walkers, c.threads), func(b *testing.B) {
			target := func(x []float64) float64 {
				var s float64
				for _, v := range x {
					s += v * v
				}
				return -s / 2
			}
			set := &Settings{Seed: 1, Walkers: c.walkers, Threads: c.threads, Steps: b.N, Thin: c.thin, Moves: c.moves}
			if c.file {
				set.ChainPath = filepath.Join(b.TempDir(), "chain.csv")
			}
			filledSet, err := set.filled(c.dim)
			if err != nil {
				b.Fatal(err)
			}
			s := newSampler(Problem{target, c.dim}, filledSet)
			defer s.close()
			if err := s.begin(Start{Center: make([]float64, c.dim), Scale: filled(c.dim, 1)}); err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			b.ResetTimer()
			if err := s.loop(context.Background()); err != nil {
				b.Fatal(err)
			}
			b.StopTimer()
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*c.walkers), "ns/walker-step")
		})
	}
}

// The cost of one autocorrelation-time estimate, which the automatic
// stopping rule pays every TauEvery steps: 32 walkers, 10 000 kept rows.
func BenchmarkAutocorrTime(b *testing.B) {
	series := ar1(32, 10000, 0.9, 1)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		AutocorrTime(series, 0)
	}
}

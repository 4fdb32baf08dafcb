package mcmc

import (
	"context"
	"fmt"
	"path/filepath"
	"runtime"
	"testing"
)

// Sampler overhead per walker-step with a trivial target (a standard normal,
// a few nanoseconds per call), so that the time is the sampler's own:
// proposal, acceptance, bookkeeping, the chain in memory and, in the "file"
// case, the .npy chain file (without checkpoints, whose fsync calls measure
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
				set.ChainPath = filepath.Join(b.TempDir(), "chain.npy")
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

// BenchmarkChainMemory reports the heap a run's result holds per kept row (32 walkers,
// 10 parameters), with the chain streamed to a file and without a file.
func BenchmarkChainMemory(b *testing.B) {
	for _, file := range []bool{true, false} {
		b.Run(fmt.Sprintf("file=%v", file), func(b *testing.B) {
			const steps, walkers, dim = 2000, 32, 10
			target := func(x []float64) float64 { return -x[0] * x[0] / 2 }
			for range b.N {
				set := &Settings{Seed: 1, Walkers: walkers, Threads: 1, Steps: steps, CheckpointEvery: 500}
				if file {
					dir := b.TempDir()
					set.ChainPath = filepath.Join(dir, "chain.npy")
					set.CheckpointPath = filepath.Join(dir, "state.ckpt")
				}
				var before, after runtime.MemStats
				runtime.GC()
				runtime.ReadMemStats(&before)
				res, err := Run(context.Background(), Problem{target, dim}, Start{Center: make([]float64, dim), Scale: filled(dim, 1)}, set)
				if err != nil {
					b.Fatal(err)
				}
				runtime.GC()
				runtime.ReadMemStats(&after)
				b.ReportMetric(float64(int64(after.HeapAlloc)-int64(before.HeapAlloc))/steps, "heap-B/row")
				runtime.KeepAlive(res)
			}
		})
	}
}

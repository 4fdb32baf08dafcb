package mcmc

import "github.com/mirabilis-astro/mirabilis/internal/workpool"

// pool runs the walkers of a half-step on up to threads goroutines of the process's one
// worker pool (package internal/workpool); the calling goroutine works as worker 0.
type pool struct {
	threads int
}

func newPool(threads int) *pool { return &pool{threads: max(1, threads)} }

// run calls fn(worker, k) for k = 0…n−1, spread over the pool, and waits; worker is below
// the thread count.
func (p *pool) run(n int, fn func(worker, k int)) { workpool.Run(p.threads, n, fn) }

// stop releases nothing: the pool's goroutines serve the whole process.
func (p *pool) stop() {}

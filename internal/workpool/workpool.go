// Package workpool shares out the indices of a job among long-lived goroutines: one pool
// for the whole process, used by the sampler (walkers) and the likelihood (sources), so
// that a job started inside another job's work finds the helpers that are idle and never
// waits for a busy one.
//
// The caller of Run always works on its own job, as worker 0, and helpers join only when
// they are idle at that moment: a nested Run on a fully busy pool runs on its caller alone,
// so nesting cannot deadlock. Which goroutine handles which index varies from run to run;
// callers that write results to per-index slots and combine them in index order get the
// same result whatever the number of threads.
package workpool

import (
	"runtime"
	"sync"
	"sync/atomic"
)

// job is one Run: the indices 0…n−1 still to hand out and the helpers still at work.
type job struct {
	n       int
	fn      func(worker, k int)
	next    atomic.Int64
	workers atomic.Int32
	wg      sync.WaitGroup
}

func (j *job) work(w int) {
	for {
		k := int(j.next.Add(1)) - 1
		if k >= j.n {
			return
		}
		j.fn(w, k)
	}
}

// pool is the process's set of helper goroutines. Helpers wait on an unbuffered channel, so
// a send that does not block found an idle helper.
type pool struct {
	jobs    chan *job
	mu      sync.Mutex
	helpers int
}

var shared = pool{jobs: make(chan *job)}

var jobs = sync.Pool{New: func() any { return new(job) }}

// grow starts helpers until there are at least n.
func (p *pool) grow(n int) {
	p.mu.Lock()
	defer p.mu.Unlock()
	for ; p.helpers < n; p.helpers++ {
		go func() {
			for j := range p.jobs {
				j.work(int(j.workers.Add(1)) - 1)
				j.wg.Done()
			}
		}()
	}
}

// Run calls fn(worker, k) for every k in [0, n) and returns when all calls have returned.
// At most threads goroutines take part (GOMAXPROCS when threads ≤ 0): the caller, as
// worker 0, and helpers of the shared pool that are idle, numbered 1, 2, … below threads, so
// that a caller may keep one scratch buffer per worker. Calls with the same worker number
// never overlap. fn must not panic.
func Run(threads, n int, fn func(worker, k int)) {
	if threads <= 0 {
		threads = runtime.GOMAXPROCS(0)
	}
	t := min(threads, n)
	if t <= 1 {
		for k := range n {
			fn(0, k)
		}
		return
	}
	shared.grow(t - 1)
	j := jobs.Get().(*job)
	j.n, j.fn = n, fn
	j.next.Store(0)
	j.workers.Store(1)
	for range t - 1 {
		j.wg.Add(1)
		sent := false
		select {
		case shared.jobs <- j:
			sent = true
		default:
		}
		if !sent {
			j.wg.Done()
			break
		}
	}
	j.work(0)
	j.wg.Wait()
	j.fn = nil
	jobs.Put(j)
}

package workpool

import (
	"sync/atomic"
	"testing"
)

// TestRunCoversEveryIndexOnce checks that every index is handed out exactly once, with
// worker numbers below the thread count, for several thread counts and job sizes.
func TestRunCoversEveryIndexOnce(t *testing.T) {
	for _, threads := range []int{1, 2, 3, 8} {
		for _, n := range []int{0, 1, 5, 1000} {
			hits := make([]atomic.Int32, n)
			var bad atomic.Int32
			Run(threads, n, func(w, k int) {
				if w < 0 || w >= threads {
					bad.Add(1)
				}
				hits[k].Add(1)
			})
			for k := range hits {
				if h := hits[k].Load(); h != 1 {
					t.Fatalf("threads %d, n %d: index %d run %d times", threads, n, k, h)
				}
			}
			if bad.Load() > 0 {
				t.Fatalf("threads %d: worker number out of range", threads)
			}
		}
	}
}

// TestNestedRunsFinish runs jobs inside jobs, more deeply than there are helpers, with
// per-worker scratch that would be corrupted if two calls with one worker number overlapped.
func TestNestedRunsFinish(t *testing.T) {
	const threads = 4
	var total atomic.Int64
	busy := make([]atomic.Int32, threads)
	Run(threads, 8, func(w, i int) {
		if busy[w].Add(1) != 1 {
			t.Errorf("worker %d of the outer job runs twice at once", w)
		}
		defer busy[w].Add(-1)
		inner := make([]atomic.Int32, threads)
		Run(threads, 50, func(v, k int) {
			if inner[v].Add(1) != 1 {
				t.Errorf("worker %d of an inner job runs twice at once", v)
			}
			Run(threads, 3, func(_, _ int) { total.Add(1) })
			inner[v].Add(-1)
		})
	})
	if got := total.Load(); got != 8*50*3 {
		t.Errorf("nested jobs ran %d innermost calls, want %d", got, 8*50*3)
	}
}

// TestRunNoAllocations checks that a Run of a prepared function allocates nothing once the
// pool is warm.
func TestRunNoAllocations(t *testing.T) {
	if raceEnabled {
		t.Skip("the race detector makes sync.Pool drop items")
	}
	var sink atomic.Int64
	fn := func(_, k int) { sink.Add(int64(k)) }
	Run(2, 100, fn)
	if n := testing.AllocsPerRun(50, func() { Run(2, 100, fn) }); n != 0 {
		t.Errorf("Run allocates %v times, want 0", n)
	}
}

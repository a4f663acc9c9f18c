package spectra

import (
	"context"
	"sync"
	"sync/atomic"
)

// parallelEach calls body(k) once for every k in [0, n), handing the
// indices out in increasing order to workers goroutines. Each goroutine
// first calls worker(w), w its number in [0, workers), to build its own
// state and body. After each index, progress (if not nil) is called with the
// number of indices finished so far and n, never by two goroutines at once.
// No new index is started once ctx is cancelled; parallelEach waits for the
// goroutines and returns ctx.Err().
func parallelEach(ctx context.Context, workers, n int, progress func(done, total int), worker func(w int) func(k int)) error {
	var next, done atomic.Int64
	var mu sync.Mutex
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func(w int) {
			defer wg.Done()
			body := worker(w)
			for {
				k := int(next.Add(1) - 1)
				if k >= n || ctx.Err() != nil {
					return
				}
				body(k)
				d := int(done.Add(1))
				if progress != nil {
					mu.Lock()
					progress(d, n)
					mu.Unlock()
				}
			}
		}(w)
	}
	wg.Wait()
	return ctx.Err()
}

// xorshiftFill sets every v[i] to a pseudo-random value in [−1/2, 1/2)
// from Marsaglia's xorshift64 generator (J. Stat. Softw. 2003, shifts
// 13, 7, 17) started at seed, and returns the generator's state after the
// last value so that a caller may continue the sequence.
func xorshiftFill(v []float64, seed uint64) uint64 {
	for i := range v {
		seed ^= seed << 13
		seed ^= seed >> 7
		seed ^= seed << 17
		v[i] = float64(seed>>11)/float64(1<<53) - 0.5
	}
	return seed
}

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

// Package abandon runs library calls that cannot be interrupted (gonum's
// Eigen, EigenSym, SVD, Dhseqr; a dense exponential between its matrix
// products) so that an interrupt is answered at once.
//
// Run runs the call in a goroutine of its own, and the caller returns
// ctx.Err() as soon as ctx is done. The abandoned goroutine finishes in the
// background and its result is dropped. Until it finishes, its memory (the
// bytes it declared) counts against the memory guard's limit for every
// later Run, so repeated interrupts cannot pile up more dense work than the
// guard allows; it also keeps a core busy until it ends (or until it next
// checks ctx, for a call that does).
package abandon

import (
	"context"
	"fmt"
	"sync/atomic"

	"semiflow/numerics/memguard"
)

var (
	heldBytes atomic.Int64 // memory held by abandoned calls still running
	heldCount atomic.Int64 // abandoned calls still running
)

// Held returns the number of abandoned calls still running in the
// background and the bytes they were declared to hold.
func Held() (count int, bytes int64) {
	return int(heldCount.Load()), heldBytes.Load()
}

// Run runs f in a goroutine and returns its result, or ctx.Err() as soon as
// ctx is done, leaving f to finish in the background (its result is then
// dropped). bytes is the memory f holds while it runs; it is checked with
// the memory guard together with the memory of calls abandoned earlier and
// still running, and a refusal names both. A panic in f is re-raised in the
// caller if the caller is still waiting, and dropped otherwise. what names
// the computation in a refusal.
func Run[T any](ctx context.Context, bytes int64, what string, f func() (T, error)) (T, error) {
	var zero T
	if err := ctx.Err(); err != nil {
		return zero, err
	}
	if held := heldBytes.Load(); held > 0 {
		if err := memguard.CheckBytes(bytes+held, fmt.Sprintf("%s while %d interrupted computation(s) still finish in the background (holding %.0f MiB)", what, heldCount.Load(), float64(held)/(1<<20))); err != nil {
			return zero, err
		}
	}
	type result struct {
		v     T
		err   error
		panic any
	}
	done := make(chan result, 1)
	var abandoned atomic.Bool
	go func() {
		var r result
		defer func() {
			if p := recover(); p != nil {
				r.panic = p
			}
			if abandoned.CompareAndSwap(true, false) {
				heldBytes.Add(-bytes)
				heldCount.Add(-1)
			}
			done <- r
		}()
		r.v, r.err = f()
	}()
	select {
	case r := <-done:
		if r.panic != nil {
			panic(r.panic)
		}
		return r.v, r.err
	case <-ctx.Done():
		// Count f as abandoned unless it finished at the same moment.
		heldBytes.Add(bytes)
		heldCount.Add(1)
		abandoned.Store(true)
		select {
		case r := <-done:
			// It finished at the same moment: whichever of the two clears
			// the flag undoes the count, and its result is returned.
			if abandoned.CompareAndSwap(true, false) {
				heldBytes.Add(-bytes)
				heldCount.Add(-1)
			}
			if r.panic != nil {
				panic(r.panic)
			}
			return r.v, r.err
		default:
		}
		return zero, ctx.Err()
	}
}

// DenseBytes is the memory of k real n×n matrices, formed in floating
// point and capped at the largest int64.
func DenseBytes(n, k int) int64 {
	b := float64(k) * float64(n) * float64(n) * 8
	if b >= 1<<63 {
		return 1<<63 - 1
	}
	return int64(b)
}

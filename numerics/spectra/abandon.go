package spectra

import (
	"context"
	"fmt"
	"sync/atomic"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/expo"
	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// Library calls that cannot be interrupted (gonum's Eigen, EigenSym, SVD,
// Dhseqr, and our dense exponential) run through abandonable: the call
// runs in a goroutine of its own, and the caller returns ctx.Err() as soon
// as ctx is done. The abandoned goroutine finishes in the background and its
// result is dropped. Until it finishes, its memory (the bytes it declared)
// counts against the memory guard's limit for every later abandonable call,
// so repeated interrupts cannot pile up more dense work than the guard
// allows; it also keeps one core busy until it ends.

// abandonedBytes is the memory held by abandoned computations still running.
var abandonedBytes atomic.Int64

// abandonedCount is the number of abandoned computations still running.
var abandonedCount atomic.Int64

// Abandoned returns the number of abandoned computations still running in
// the background and the bytes they were declared to hold.
func Abandoned() (count int, bytes int64) {
	return int(abandonedCount.Load()), abandonedBytes.Load()
}

// abandonable runs f in a goroutine and returns its result, or ctx.Err() as
// soon as ctx is done, leaving f to finish in the background (its result is
// then dropped). bytes is the memory f holds while it runs; it is checked
// with the memory guard together with the memory of computations abandoned
// earlier and still running, and a refusal names both. A panic in f is
// re-raised in the caller if the caller is still waiting, and dropped
// otherwise. what names the computation in a refusal.
func abandonable[T any](ctx context.Context, bytes int64, what string, f func() (T, error)) (T, error) {
	var zero T
	if err := ctx.Err(); err != nil {
		return zero, err
	}
	if held := abandonedBytes.Load(); held > 0 {
		if err := memguard.CheckBytes(bytes+held, fmt.Sprintf("%s while %d interrupted computation(s) still finish in the background (holding %.0f MiB)", what, abandonedCount.Load(), float64(held)/(1<<20))); err != nil {
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
				abandonedBytes.Add(-bytes)
				abandonedCount.Add(-1)
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
		abandonedBytes.Add(bytes)
		abandonedCount.Add(1)
		abandoned.Store(true)
		select {
		case r := <-done:
			// It finished at the same moment: whichever of the two clears
			// the flag undoes the count, and its result is returned.
			if abandoned.CompareAndSwap(true, false) {
				abandonedBytes.Add(-bytes)
				abandonedCount.Add(-1)
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

// denseBytes is the memory of k real n×n matrices.
func denseBytes(n, k int) int64 { return int64(k) * int64(n) * int64(n) * 8 }

// DenseSpectrumContext is DenseSpectrum returning ctx.Err() at once when ctx
// is cancelled: the QR algorithm (gonum's Eigen) cannot be interrupted, so
// it runs in the background and its result is dropped (see abandonable).
func DenseSpectrumContext(ctx context.Context, a linop.Operator) (*Spectrum, error) {
	r, _ := a.Dims()
	// A, Hessenberg and Schur workspace, complex left and right vectors.
	return abandonable(ctx, denseBytes(r, 8), fmt.Sprintf("dense eigenvalues of order %d", r), func() (*Spectrum, error) {
		return DenseSpectrum(a)
	})
}

// NewSchurContext is NewSchur returning ctx.Err() at once when ctx is
// cancelled (Dhseqr cannot be interrupted; see abandonable).
func NewSchurContext(ctx context.Context, a linop.Operator) (*Schur, error) {
	r, _ := a.Dims()
	return abandonable(ctx, denseBytes(r, 8), fmt.Sprintf("Schur form of order %d", r), func() (*Schur, error) {
		return NewSchur(a)
	})
}

// schurOfContext is schurOf under abandonable.
func schurOfContext(ctx context.Context, m *mat.Dense) (*Schur, error) {
	n, _ := m.Dims()
	return abandonable(ctx, denseBytes(n, 8), fmt.Sprintf("Schur form of order %d", n), func() (*Schur, error) {
		return schurOf(m)
	})
}

// ExpContext sets dst = e^A for a dense square A, as expo.ExpContext, but
// returns ctx.Err() at once when ctx is cancelled: expo checks the context
// between its matrix products, each of which takes up to a second at order
// 1500 on a busy machine, so the exponential runs under abandonable (its
// copy of A, the Padé terms and powers: about ten n×n matrices) and an
// abandoned one stops at its next product. dst is set only on success.
func ExpContext(ctx context.Context, dst *mat.Dense, a *mat.Dense) (expo.ExpInfo, error) {
	n, _ := a.Dims()
	e, err := abandonable(ctx, denseBytes(n, 10), fmt.Sprintf("dense exponential of order %d", n), func() (*expInResult, error) {
		var r expInResult
		r.info, r.err = expo.ExpContext(ctx, &r.e, a)
		return &r, nil
	})
	if err != nil {
		return expo.ExpInfo{}, err
	}
	if e.err != nil {
		return e.info, e.err
	}
	dst.CloneFrom(&e.e)
	return e.info, nil
}

type expInResult struct {
	e    mat.Dense
	info expo.ExpInfo
	err  error
}

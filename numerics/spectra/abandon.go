package spectra

import (
	"context"
	"fmt"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/abandon"
	"semiflow/numerics/expo"
	"semiflow/numerics/linop"
)

// Library calls that cannot be interrupted (gonum's Eigen, EigenSym, SVD,
// Dhseqr, and our dense exponential) run through abandonable, which is
// abandon.Run: the caller returns ctx.Err() at once and the call finishes
// in the background, its declared memory counted against the guard until
// it ends (see package abandon).

// Abandoned returns the number of abandoned computations still running in
// the background and the bytes they were declared to hold.
func Abandoned() (count int, bytes int64) { return abandon.Held() }

// abandonable is abandon.Run.
func abandonable[T any](ctx context.Context, bytes int64, what string, f func() (T, error)) (T, error) {
	return abandon.Run(ctx, bytes, what, f)
}

// denseBytes is the memory of k real n×n matrices.
func denseBytes(n, k int) int64 { return abandon.DenseBytes(n, k) }

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

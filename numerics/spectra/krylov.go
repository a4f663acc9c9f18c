package spectra

import (
	"context"
	"fmt"
	"math/cmplx"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// PseudoKrylov approximates the pseudospectra of a large operator A from
// an m-step Arnoldi factorisation A V_m = V_{m+1} H̃_m, H̃_m the
// (m+1)×m upper Hessenberg matrix: at each grid point it computes
// σ_min(zĨ − H̃_m), Ĩ = [I_m; 0], by m Givens rotations (QR of a Hessenberg
// matrix) and inverse Lanczos on the m×m triangular factor.
//
// Caveat: σ_min(zI − A) ≤ σ_min(zĨ − H̃_m) (Toh & Trefethen, SIAM J. Sci.
// Comput. 1996), so the computed ε-pseudospectra lie INSIDE the true ones:
// an approximation from inside that is accurate only near the part of the
// spectrum the Krylov space has captured (typically the outer eigenvalues).
// It panics with ErrShape if A is not square and with ErrOption if m < 2 or
// the region is invalid.
func PseudoKrylov(ctx context.Context, a linop.Operator, r Region, m int, opt *GridOptions) (*Pseudospectra, error) {
	n, c := a.Dims()
	if n != c {
		panic(ErrShape)
	}
	if m < 2 {
		panic(ErrOption)
	}
	r.check()
	o := opt.defaults()
	m = min(m, n)
	// The Arnoldi basis (m+1) and the product, through the memory guard.
	if err := memguard.Vectors(m+2+linop.Scratch(a), n, memguard.RealBytes, "Arnoldi work vectors for the pseudospectra"); err != nil {
		return nil, err
	}
	ks := &krylovSchur{n: n, m: m, apply: a.Apply}
	if err := ks.arnoldi(ctx); err != nil {
		return nil, err
	}
	hm := m + 1
	// Ritz values for display.
	h := mat.NewDense(m, m, nil)
	for i := 0; i < m; i++ {
		for j := 0; j < m; j++ {
			h.Set(i, j, ks.h[i*m+j])
		}
	}
	var e mat.Eigen
	var ritz []complex128
	if e.Factorize(h, mat.EigenNone) {
		ritz = e.Values(nil)
	}
	re, im := r.Points()
	p := &Pseudospectra{Re: re, Im: im, Sigma: make([]float64, len(re)*len(im)), Eigenvalues: ritz}
	err := p.fill(ctx, &o, func() func(complex128, bool) sigmaResult {
		mz := make([]complex128, hm*m) // zĨ − H̃, row-major (m+1)×m
		t := make([]complex128, m*m)   // −R, so that 0·I − t = R
		ts := newTriSigma(t, m, o.Tol, o.MaxIter)
		ts.done = ctx.Done()
		return func(z complex128, warm bool) sigmaResult {
			for k := range mz {
				mz[k] = complex(-ks.h[k], 0)
			}
			for d := 0; d < m; d++ {
				mz[d*m+d] += z
			}
			hessenbergR(mz, m)
			for k := 0; k < m*m; k++ {
				t[k] = -mz[k]
			}
			ts.st.load(t)
			return ts.eval(0, warm, false)
		}
	})
	if err != nil {
		return nil, err
	}
	p.Method = fmt.Sprintf("projection onto an Arnoldi space of dimension %d: σ_min(zĨ − H̃) of the (m+1)×m Hessenberg matrix (Toh & Trefethen 1996), Givens QR and inverse Lanczos per point", m)
	p.Accuracy = fmt.Sprintf("APPROXIMATION FROM INSIDE: σ_min(zĨ−H̃) ≥ σ_min(zI−A), so these sets are subsets of the true pseudospectra, reliable only near the eigenvalues the Krylov space captures; per-point relative error ≲ %.0e (%d unconverged)", o.Tol/2, p.Unconverged)
	return p, nil
}

// arnoldi runs m steps of Arnoldi from a fixed pseudo-random start.
func (ks *krylovSchur) arnoldi(ctx context.Context) error {
	n, m := ks.n, ks.m
	ks.start(88172645463325252)
	w := make([]float64, n)
	for j := 0; j < m; j++ {
		if err := ctx.Err(); err != nil {
			return err
		}
		ks.apply(w, ks.v[j])
		beta := ks.orthogonalise(w, j+1, j)
		if beta == 0 {
			break // invariant subspace: H̃'s last row is zero from here on
		}
		for i := range w {
			w[i] /= beta
		}
		ks.h[(j+1)*m+j] = beta
		copy(ks.v[j+1], w)
	}
	return nil
}

// hessenbergR reduces the (m+1)×m upper Hessenberg matrix a (row-major,
// stride m) to upper-triangular form in its first m rows by Givens
// rotations from the left; singular values are unchanged.
func hessenbergR(a []complex128, m int) {
	for j := 0; j < m; j++ {
		x, y := a[j*m+j], a[(j+1)*m+j]
		if y == 0 {
			continue
		}
		r := complex(hypotC(x, y), 0)
		c, s := x/r, y/r // G = [c̄ s̄; −s c] maps (x, y) to (r, 0)
		for k := j; k < m; k++ {
			u, v := a[j*m+k], a[(j+1)*m+k]
			a[j*m+k] = cmplx.Conj(c)*u + cmplx.Conj(s)*v
			a[(j+1)*m+k] = -s*u + c*v
		}
		a[(j+1)*m+j] = 0
	}
}

func hypotC(x, y complex128) float64 {
	return cnorm([]complex128{x, y})
}

package spectra

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"sort"

	"gonum.org/v1/gonum/lapack"
	"gonum.org/v1/gonum/lapack/gonum"
	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
	"semiflow/numerics/solve"
)

// EigsOptions controls Rightmost. The zero value asks for the 6 rightmost
// eigenvalues by Arnoldi on A itself.
type EigsOptions struct {
	// Count is the number k of eigenvalues wanted; 0 means 6.
	Count int
	// Krylov is the largest basis size m > k; 0 means max(2k+12, 32).
	Krylov int
	// ShiftInvert selects Arnoldi on (σI − A)⁻¹ for the real shift Shift:
	// its dominant eigenvalues μ give the eigenvalues λ = σ − 1/μ of A
	// nearest σ, which are the rightmost ones when σ lies to the right of
	// the spectrum and not too far from it. Each step is one solve with a
	// factorisation from solve.NewShifted.
	ShiftInvert bool
	Shift       float64
	// Tol is the convergence tolerance on the Schur-vector residuals,
	// relative to |θ|; 0 means 1e-10.
	Tol float64
	// MaxRestarts bounds the Krylov–Schur restarts; 0 means 500.
	MaxRestarts int
	// Progress, if not nil, is called after each restart with the number
	// of converged eigenvalues and Count.
	Progress func(done, total int)
}

// Rightmost computes a few eigenvalues of a large (typically sparse)
// operator A by the Krylov–Schur method (Stewart, SIAM J. Matrix Anal.
// Appl. 2001) in real arithmetic: an Arnoldi factorisation
// A V_m = V_m H_m + β v_{m+1}e_mᵀ with full reorthogonalisation, the real
// Schur form of H_m reordered (LAPACK Dtrexc) so that the wanted Ritz
// values lead, and truncation to the leading half. Without ShiftInvert the
// wanted values are those with largest real part; with it, those of
// (σI − A)⁻¹ of largest modulus. Residuals ‖Ax − λx‖/‖x‖ of the returned
// Ritz pairs are computed with A itself.
//
// It panics with ErrShape if A is not square and with ErrOption for
// invalid counts. It returns the context's error on cancellation and an
// error if the iteration has not converged after MaxRestarts (the
// partial result is returned with it).
func Rightmost(ctx context.Context, a linop.Operator, opt *EigsOptions) (*Spectrum, error) {
	n, c := a.Dims()
	if n != c {
		panic(ErrShape)
	}
	var o EigsOptions
	if opt != nil {
		o = *opt
	}
	if o.Count < 0 || o.Krylov < 0 || o.Tol < 0 || o.MaxRestarts < 0 {
		panic(ErrOption)
	}
	if o.Count == 0 {
		o.Count = 6
	}
	if o.Krylov == 0 {
		o.Krylov = max(2*o.Count+12, 32)
	}
	if o.Tol == 0 {
		o.Tol = 1e-10
	}
	if o.MaxRestarts == 0 {
		o.MaxRestarts = 500
	}
	m := min(o.Krylov, n)
	nev := min(o.Count, n)
	if nev >= m && m < n {
		panic(ErrOption)
	}
	// Work vectors of order n, through the memory guard before any is
	// made: the basis (m+1), the product, the restart's copy (≤ m), four
	// for the residuals and the Ritz vectors (complex, ≤ nev+1) as found
	// and as returned; four more for the complex solves of shift-invert.
	work := 2*m + 6 + 4*(nev+1)
	if o.ShiftInvert {
		work += 4
	}
	work += linop.Scratch(a) // the temporaries of A's products
	if err := memguard.Vectors(work, n, memguard.RealBytes, "Krylov–Schur work vectors"); err != nil {
		return nil, err
	}
	apply := a.Apply
	better := func(x, y complex128) bool { return real(x) > real(y) }
	method := "Krylov–Schur Arnoldi on A (wanted: largest real part)"
	var solveErr error
	if o.ShiftInvert {
		f, err := solve.NewShiftedContext(ctx, a, complex(o.Shift, 0), solve.Options{})
		if err != nil {
			return nil, err
		}
		zb := make([]complex128, n)
		zx := make([]complex128, n)
		apply = func(dst, x []float64) {
			for i, v := range x {
				zb[i] = complex(v, 0)
			}
			if err := f.Solve(zx, zb); err != nil && solveErr == nil {
				solveErr = err
			}
			for i, v := range zx {
				dst[i] = real(v)
			}
		}
		better = func(x, y complex128) bool { return cmplx.Abs(x) > cmplx.Abs(y) }
		method = fmt.Sprintf("Krylov–Schur Arnoldi on (σI−A)⁻¹, σ = %g (shift-and-invert; one LU factorisation of σI − A, banded, sparse or dense by its structure), λ = σ − 1/μ", o.Shift)
	}
	ks := &krylovSchur{n: n, m: m, apply: apply}
	thetas, vecs, restarts, conv, err := ks.run(ctx, nev, o.Tol, o.MaxRestarts, better, o.Progress)
	if solveErr != nil {
		return nil, solveErr
	}
	if err != nil && thetas == nil {
		return nil, err
	}
	sp := &Spectrum{Method: method + fmt.Sprintf(", basis %d, %d restarts", m, restarts)}
	xr, xi := make([]float64, n), make([]float64, n)
	ar, ai := make([]float64, n), make([]float64, n)
	type pair struct {
		l   complex128
		res float64
		x   []complex128
	}
	var ps []pair
	for k, th := range thetas {
		l := th
		if o.ShiftInvert {
			l = complex(o.Shift, 0) - 1/th
		}
		x := vecs[k]
		for i, v := range x {
			xr[i], xi[i] = real(v), imag(v)
		}
		a.Apply(ar, xr)
		a.Apply(ai, xi)
		var r2 float64
		for i := range x {
			d := complex(ar[i], ai[i]) - l*x[i]
			r2 += real(d)*real(d) + imag(d)*imag(d)
		}
		nx := cnorm(x)
		ps = append(ps, pair{l, math.Sqrt(r2) / nx, x})
	}
	sort.SliceStable(ps, func(i, j int) bool { return rightOf(ps[i].l, ps[j].l) })
	sp.Abscissa = math.Inf(-1)
	maxRes := 0.0
	if len(ps) > 0 {
		sp.Right = mat.NewCDense(n, len(ps), nil)
	}
	for k, p := range ps {
		nx := cnorm(p.x)
		for i, v := range p.x {
			sp.Right.Set(i, k, v/complex(nx, 0))
		}
		sp.Values = append(sp.Values, p.l)
		sp.Residual = append(sp.Residual, p.res)
		sp.Abscissa = math.Max(sp.Abscissa, real(p.l))
		maxRes = math.Max(maxRes, p.res)
	}
	sp.Accuracy = fmt.Sprintf("%d of %d converged (Schur residual ≤ %.0e·|θ|); largest residual ‖Ax−λx‖/‖x‖ = %.2e; for non-normal A the eigenvalue error can exceed the residual by the condition number; Abscissa is over the computed values only", conv, nev, o.Tol, maxRes)
	if err != nil {
		return sp, err
	}
	return sp, nil
}

type krylovSchur struct {
	n, m  int
	apply func(dst, x []float64)
	v     [][]float64 // m+1 basis vectors
	h     []float64   // (m+1)×m, row-major, stride m
}

// start allocates the m+1 basis vectors and the (m+1)×m Hessenberg matrix,
// all zero, and sets v₀ to a unit pseudo-random vector from xorshiftFill
// at seed. It returns the generator's state for further random vectors.
func (ks *krylovSchur) start(seed uint64) uint64 {
	ks.v = make([][]float64, ks.m+1)
	for i := range ks.v {
		ks.v[i] = make([]float64, ks.n)
	}
	ks.h = make([]float64, (ks.m+1)*ks.m)
	seed = xorshiftFill(ks.v[0], seed)
	normalise(ks.v[0])
	return seed
}

// run returns the nev wanted Ritz values θ (a conjugate pair is kept whole,
// so there may be nev+1) with unit Ritz vectors.
func (ks *krylovSchur) run(ctx context.Context, nev int, tol float64, maxRestarts int, better func(x, y complex128) bool, progress func(int, int)) ([]complex128, [][]complex128, int, int, error) {
	n, m := ks.n, ks.m
	seed := ks.start(2463534242)
	k := 0
	w := make([]float64, n)
	var t, q []float64
	nconv := 0
	restart := 0
	for ; ; restart++ {
		for j := k; j < m; j++ {
			if err := ctx.Err(); err != nil {
				return nil, nil, restart, 0, err
			}
			ks.apply(w, ks.v[j])
			beta := ks.orthogonalise(w, j+1, j)
			if beta <= 1e-14*math.Max(ks.hnorm(j), 1e-300) && j+1 < m+1 {
				// Invariant subspace: continue with a fresh orthogonal direction.
				seed = xorshiftFill(w, seed)
				var tmp = make([]float64, m+1)
				ks.orthogonaliseInto(w, j+1, tmp)
				normalise(w)
				beta = 0
			} else {
				for i := range w {
					w[i] /= beta
				}
			}
			ks.h[(j+1)*m+j] = beta
			copy(ks.v[j+1], w)
		}
		hm := make([]float64, m*m)
		copy(hm, ks.h[:m*m])
		var err error
		t, q, err = realSchur(hm, m)
		if err != nil {
			return nil, nil, restart, 0, err
		}
		reorderSchur(t, q, m, better, nev)
		beta := ks.h[m*m+m-1]
		// Residual row b = β Q(m−1, :).
		b := make([]float64, m)
		for j := 0; j < m; j++ {
			b[j] = beta * q[(m-1)*m+j]
		}
		ev := blockEigenvalues(t, m)
		nconv = 0
		for j := 0; j < m && nconv < nev; j++ {
			scale := math.Max(cmplx.Abs(ev[j]), 1e-300)
			if math.Abs(b[j]) > tol*scale {
				break
			}
			if j+1 < m && t[(j+1)*m+j] != 0 && math.Abs(b[j+1]) > tol*scale {
				break
			}
			nconv++
		}
		if progress != nil {
			progress(min(nconv, nev), nev)
		}
		if nconv >= nev || restart >= maxRestarts || m == n {
			break
		}
		p := nev + (m-nev)/2
		if p < m && t[p*m+p-1] != 0 {
			p++
		}
		if p >= m {
			p = m - 1
			if t[p*m+p-1] != 0 {
				p--
			}
		}
		// V ← V Q(:, :p); v_p ← v_m; H ← [S_p; b_pᵀ].
		nv := make([][]float64, p)
		for c := 0; c < p; c++ {
			nv[c] = make([]float64, n)
			for j := 0; j < m; j++ {
				if qc := q[j*m+c]; qc != 0 {
					floatsAxpy(nv[c], qc, ks.v[j])
				}
			}
		}
		copy(ks.v[p], ks.v[m])
		for c := 0; c < p; c++ {
			copy(ks.v[c], nv[c])
		}
		for i := range ks.h {
			ks.h[i] = 0
		}
		for i := 0; i < p; i++ {
			for j := 0; j < p; j++ {
				ks.h[i*m+j] = t[i*m+j]
			}
		}
		for j := 0; j < p; j++ {
			ks.h[p*m+j] = b[j]
		}
		k = p
	}
	// Ritz pairs from the leading block.
	kk := nev
	if kk < m && kk > 0 && t[kk*m+kk-1] != 0 {
		kk++
	}
	kk = min(kk, m)
	s := mat.NewDense(kk, kk, nil)
	for i := 0; i < kk; i++ {
		for j := 0; j < kk; j++ {
			s.Set(i, j, t[i*m+j])
		}
	}
	var e mat.Eigen
	if !e.Factorize(s, mat.EigenRight) {
		return nil, nil, restart, nconv, numErr("eigen-decomposition of the %d×%d Schur block failed", kk, kk)
	}
	thetas := e.Values(nil)
	var y mat.CDense
	e.VectorsTo(&y)
	vecs := make([][]complex128, kk)
	for c := 0; c < kk; c++ {
		x := make([]complex128, n)
		for j := 0; j < m; j++ {
			var coef complex128
			for l := 0; l < kk; l++ {
				coef += complex(q[j*m+l], 0) * y.At(l, c)
			}
			if coef == 0 {
				continue
			}
			vj := ks.v[j]
			for i := range x {
				x[i] += coef * complex(vj[i], 0)
			}
		}
		vecs[c] = x
	}
	if nconv < nev && m < n {
		return thetas, vecs, restart, nconv, numErr("Krylov–Schur: %d of %d eigenvalues converged after %d restarts", nconv, nev, restart)
	}
	return thetas, vecs, restart, max(nconv, min(nev, kk)), nil
}

// orthogonalise makes w orthogonal to v_0..v_{k−1} by classical
// Gram–Schmidt applied twice, adds the coefficients to column col of H and
// returns ‖w‖.
func (ks *krylovSchur) orthogonalise(w []float64, k, col int) float64 {
	coef := make([]float64, k)
	ks.orthogonaliseInto(w, k, coef)
	for i := 0; i < k; i++ {
		ks.h[i*ks.m+col] += coef[i]
	}
	return math.Sqrt(floatsDot(w, w))
}

func (ks *krylovSchur) orthogonaliseInto(w []float64, k int, coef []float64) {
	c := make([]float64, k)
	for pass := 0; pass < 2; pass++ {
		for i := 0; i < k; i++ {
			c[i] = floatsDot(ks.v[i], w)
		}
		for i := 0; i < k; i++ {
			floatsAxpy(w, -c[i], ks.v[i])
			coef[i] += c[i]
		}
	}
}

func (ks *krylovSchur) hnorm(col int) float64 {
	s := 0.0
	for i := 0; i <= col; i++ {
		s += ks.h[i*ks.m+col] * ks.h[i*ks.m+col]
	}
	return math.Sqrt(s)
}

func floatsDot(x, y []float64) float64 {
	s := 0.0
	for i, v := range x {
		s += v * y[i]
	}
	return s
}

func floatsAxpy(y []float64, a float64, x []float64) {
	for i, v := range x {
		y[i] += a * v
	}
}

func normalise(x []float64) {
	s := math.Sqrt(floatsDot(x, x))
	for i := range x {
		x[i] /= s
	}
}

// realSchur returns the real Schur form H = Q T Qᵀ of the m×m row-major
// matrix h (overwritten), with standardised 2×2 blocks.
func realSchur(h []float64, m int) (t, q []float64, err error) {
	var impl gonum.Implementation
	q = make([]float64, m*m)
	if m == 1 {
		q[0] = 1
		return h, q, nil
	}
	tau := make([]float64, m-1)
	work := make([]float64, 1)
	impl.Dgehrd(m, 0, m-1, h, m, tau, work, -1)
	lw := int(work[0])
	impl.Dorghr(m, 0, m-1, h, m, tau, work, -1)
	lw = max(lw, int(work[0]))
	work = make([]float64, max(lw, 1))
	impl.Dgehrd(m, 0, m-1, h, m, tau, work, len(work))
	copy(q, h)
	impl.Dorghr(m, 0, m-1, q, m, tau, work, len(work))
	for i := 2; i < m; i++ {
		for j := 0; j < i-1; j++ {
			h[i*m+j] = 0
		}
	}
	wr, wi := make([]float64, m), make([]float64, m)
	work = work[:1]
	impl.Dhseqr(lapack.EigenvaluesAndSchur, lapack.SchurOrig, m, 0, m-1, h, m, wr, wi, q, m, work, -1)
	work = make([]float64, max(int(work[0]), 1))
	if u := impl.Dhseqr(lapack.EigenvaluesAndSchur, lapack.SchurOrig, m, 0, m-1, h, m, wr, wi, q, m, work, len(work)); u > 0 {
		return nil, nil, numErr("QR algorithm on the %d×%d Krylov matrix did not converge", m, m)
	}
	return h, q, nil
}

// blockEigenvalues returns the eigenvalues of the quasi-triangular t in
// diagonal order.
func blockEigenvalues(t []float64, m int) []complex128 {
	ev := make([]complex128, m)
	for i := 0; i < m; i++ {
		if i+1 < m && t[(i+1)*m+i] != 0 {
			a, b, c, d := t[i*m+i], t[i*m+i+1], t[(i+1)*m+i], t[(i+1)*m+i+1]
			mean := (a + d) / 2
			disc := complex(((a-d)/2)*((a-d)/2)+b*c, 0)
			r := cmplx.Sqrt(disc)
			ev[i], ev[i+1] = complex(mean, 0)+r, complex(mean, 0)-r
			if imag(ev[i]) < 0 {
				ev[i], ev[i+1] = ev[i+1], ev[i]
			}
			i++
			continue
		}
		ev[i] = complex(t[i*m+i], 0)
	}
	return ev
}

// reorderSchur moves the diagonal blocks of t whose eigenvalues are best
// (by better) to the top, until at least nsel eigenvalues lead, updating
// q. A swap that LAPACK rejects as too ill-conditioned stops the reordering.
func reorderSchur(t, q []float64, m int, better func(x, y complex128) bool, nsel int) {
	var impl gonum.Implementation
	work := make([]float64, m)
	placed := 0
	for p := 0; p < m && placed < nsel; {
		ev := blockEigenvalues(t, m)
		best := p
		for i := p; i < m; i++ {
			if better(ev[i], ev[best]) {
				best = i
			}
			if i+1 < m && t[(i+1)*m+i] != 0 {
				i++
			}
		}
		if best > p {
			if _, _, ok := impl.Dtrexc(lapack.UpdateSchur, m, t, m, q, m, best, p, work); !ok {
				return
			}
		}
		size := 1
		if p+1 < m && t[(p+1)*m+p] != 0 {
			size = 2
		}
		p += size
		placed += size
	}
}

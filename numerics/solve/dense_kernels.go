package solve

import (
	"context"
	"math"
	"math/cmplx"
	"unsafe"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"

	_ "semiflow/numerics/gemm" // registers the project's matrix product with blas64
)

func absT[T scalar](v T) float64 {
	switch x := any(v).(type) {
	case float64:
		return math.Abs(x)
	case complex128:
		return math.Abs(real(x)) + math.Abs(imag(x))
	}
	return 0
}

func fromReal[T scalar](x float64) T {
	var v T
	switch p := any(&v).(type) {
	case *float64:
		*p = x
	case *complex128:
		*p = complex(x, 0)
	}
	return v
}

func conjT[T scalar](v T) T {
	if x, ok := any(v).(complex128); ok {
		return any(cmplx.Conj(x)).(T)
	}
	return v
}

// smallGemm is the flop count (m·n·k) below which gemmSub uses plain loops.
const smallGemm = 4096

// gemmSub sets C −= A·B for row-major A (m×k, stride lda), B (k×n, ldb)
// and C (m×n, ldc). Real products go to the registered BLAS (the project's
// packed matrix product, or OpenBLAS in that build). A complex product is
// two real ones on the interleaved storage: viewing a complex row-major
// matrix as a real one with twice the columns, Re/Im pairs side by side,
// C_view −= Re(A)·B_view + Im(A)·(iB)_view, so complex fronts run at the
// speed of the real kernel.
func gemmSub[T scalar](m, n, k int, a []T, lda int, b []T, ldb int, c []T, ldc int, ws *workspace) {
	if m == 0 || n == 0 || k == 0 {
		return
	}
	if m*n*k < smallGemm {
		for i := 0; i < m; i++ {
			ci := c[i*ldc : i*ldc+n]
			for p := 0; p < k; p++ {
				l := a[i*lda+p]
				if l == 0 {
					continue
				}
				bp := b[p*ldb : p*ldb+n]
				for j, u := range bp {
					ci[j] -= l * u
				}
			}
		}
		return
	}
	switch av := any(a).(type) {
	case []float64:
		blas64.Implementation().Dgemm(blas.NoTrans, blas.NoTrans, m, n, k, -1, av, lda, any(b).([]float64), ldb, 1, any(c).([]float64), ldc)
	case []complex128:
		bv, cv := any(b).([]complex128), any(c).([]complex128)
		ar, ai := ws.reals(0, m*k), ws.reals(1, m*k)
		for i := 0; i < m; i++ {
			for p, v := range av[i*lda : i*lda+k] {
				ar[i*k+p], ai[i*k+p] = real(v), imag(v)
			}
		}
		ib := ws.reals(2, 2*k*n)
		for p := 0; p < k; p++ {
			for j, v := range bv[p*ldb : p*ldb+n] {
				ib[p*2*n+2*j], ib[p*2*n+2*j+1] = -imag(v), real(v)
			}
		}
		bf := floatView(bv[:(k-1)*ldb+n])
		cf := floatView(cv[:(m-1)*ldc+n])
		impl := blas64.Implementation()
		impl.Dgemm(blas.NoTrans, blas.NoTrans, m, 2*n, k, -1, ar, k, bf, 2*ldb, 1, cf, 2*ldc)
		impl.Dgemm(blas.NoTrans, blas.NoTrans, m, 2*n, k, -1, ai, k, ib, 2*n, 1, cf, 2*ldc)
	}
}

// floatView is the real view of complex storage (real and imaginary parts
// interleaved, as Go lays out complex128).
func floatView(z []complex128) []float64 {
	if len(z) == 0 {
		return nil
	}
	return unsafe.Slice((*float64)(unsafe.Pointer(&z[0])), 2*len(z))
}

// workspace holds scratch arrays reused across fronts by one goroutine.
type workspace struct {
	f   [3][]float64
	ctx context.Context // checked by long kernels when not nil
}

func (w *workspace) reals(i, n int) []float64 {
	if cap(w.f[i]) < n {
		w.f[i] = make([]float64, n)
	}
	return w.f[i][:n]
}

// trsmLowerUnit sets B ← L⁻¹ B for the unit lower triangle L of the k×k
// row-major a (stride lda) and the k×n row-major b (stride ldb): blocks of
// trsmBlock rows by substitution, the rows below each block updated by
// gemmSub (BLAS-3).
func trsmLowerUnit[T scalar](k, n int, a []T, lda int, b []T, ldb int, ws *workspace) {
	for i0 := 0; i0 < k; i0 += trsmBlock {
		i1 := min(i0+trsmBlock, k)
		for i := i0 + 1; i < i1; i++ {
			bi := b[i*ldb : i*ldb+n]
			for p := i0; p < i; p++ {
				l := a[i*lda+p]
				if l == 0 {
					continue
				}
				for j, u := range b[p*ldb : p*ldb+n] {
					bi[j] -= l * u
				}
			}
		}
		if i1 < k {
			gemmSub(k-i1, n, i1-i0, a[i1*lda+i0:], lda, b[i0*ldb:], ldb, b[i1*ldb:], ldb, ws)
		}
	}
}

// trsmUpper sets B ← U⁻¹ B for the upper triangle U (diagonal included) of
// the k×k row-major a, by blocks from the bottom.
func trsmUpper[T scalar](k, n int, a []T, lda int, b []T, ldb int, ws *workspace) {
	for i1 := k; i1 > 0; i1 -= trsmBlock {
		i0 := max(i1-trsmBlock, 0)
		for i := i1 - 1; i >= i0; i-- {
			bi := b[i*ldb : i*ldb+n]
			for p := i + 1; p < i1; p++ {
				u := a[i*lda+p]
				if u == 0 {
					continue
				}
				for j, v := range b[p*ldb : p*ldb+n] {
					bi[j] -= u * v
				}
			}
			inv := 1 / a[i*lda+i]
			for j := range bi {
				bi[j] *= inv
			}
		}
		if i0 > 0 {
			gemmSub(i0, n, i1-i0, a[i0:], lda, b[i0*ldb:], ldb, b, ldb, ws)
		}
	}
}

const trsmBlock = 32

// panelBlock is the width of the column blocks of the partial LU.
const panelBlock = 32

// partialLU factors the first k columns of an f×f row-major front whose
// first k rows (the supernode's own rows) are top and whose other f − k
// rows are bot, pivoting among the first k rows only:
// top[0:k, 0:k] = P L11 U11 by blocked right-looking LU with partial
// pivoting inside the block, then L21 = F21 U11⁻¹ (in bot), U12 = L11⁻¹ P F12
// (in top) and the Schur complement F22 −= L21 U12 (in bot) — all but the
// small diagonal blocks as matrix products (BLAS-3). piv[j] is the row
// swapped with row j at step j (LAPACK style, relative to the front).
// Since |L11| ≤ 1 by partial pivoting, a multiplier |L21(i, j)| > 1/weakTol
// says that the pivot of column j was below weakTol times an entry of its
// column in the front: such columns count in weak. A pivot of at most
// tinyAbs, or a multiplier above 1/tinyRel, stops the factorisation with
// errFallback; the workspace's context, if any, is checked between column
// blocks (a large front takes a while).
func partialLU[T scalar](top, bot []T, f, k int, piv []int, tinyAbs float64, ws *workspace) (weak int, err error) {
	F := top
	for j0 := 0; j0 < k; j0 += panelBlock {
		if ws.ctx != nil && j0 > 0 {
			if err := ws.ctx.Err(); err != nil {
				return weak, err
			}
		}
		j1 := min(j0+panelBlock, k)
		for j := j0; j < j1; j++ {
			best, bv := j, -1.0
			for i := j; i < k; i++ {
				if v := absT(F[i*f+j]); v > bv {
					best, bv = i, v
				}
			}
			if bv <= tinyAbs {
				return weak, errFallback
			}
			piv[j] = best
			if best != j {
				rj, rb := F[j*f:(j+1)*f], F[best*f:(best+1)*f]
				for c := range rj {
					rj[c], rb[c] = rb[c], rj[c]
				}
			}
			inv := 1 / F[j*f+j]
			urow := F[j*f+j+1 : j*f+j1]
			for i := j + 1; i < k; i++ {
				l := F[i*f+j] * inv
				F[i*f+j] = l
				if l == 0 {
					continue
				}
				row := F[i*f+j+1 : i*f+j1]
				for c, u := range urow {
					row[c] -= l * u
				}
			}
		}
		if j1 < k {
			trsmLowerUnit(j1-j0, k-j1, F[j0*f+j0:], f, F[j0*f+j1:], f, ws)
			gemmSub(k-j1, k-j1, j1-j0, F[j1*f+j0:], f, F[j0*f+j1:], f, F[j1*f+j1:], f, ws)
		}
	}
	if k == f {
		return 0, nil
	}
	r := f - k
	trsmRightUpper(r, k, top, f, bot, f, ws)
	// Multipliers: growth beyond 1/weakTol marks a weak pivot.
	var colBig [panelBlock]float64
	for j0 := 0; j0 < k; j0 += panelBlock {
		j1 := min(j0+panelBlock, k)
		big := colBig[:j1-j0]
		clear(big)
		for i := 0; i < r; i++ {
			for c, v := range bot[i*f+j0 : i*f+j1] {
				big[c] = math.Max(big[c], absT(v))
			}
		}
		for _, m := range big {
			if m > 1/tinyRel || m != m {
				return weak, errFallback
			}
			if m > 1/weakTol {
				weak++
			}
		}
	}
	trsmLowerUnit(k, r, top, f, top[k:], f, ws)
	gemmSub(r, r, k, bot, f, top[k:], f, bot[k:], f, ws)
	return weak, nil
}

// trsmRightUpper sets X ← X U⁻¹ for the m×k row-major x (stride ldx) and
// the upper triangle U (diagonal included) of the k×k row-major a: column
// blocks from the left, each first updated by a matrix product with the
// finished ones.
func trsmRightUpper[T scalar](m, k int, a []T, lda int, x []T, ldx int, ws *workspace) {
	for j0 := 0; j0 < k; j0 += trsmBlock {
		j1 := min(j0+trsmBlock, k)
		if j0 > 0 {
			gemmSub(m, j1-j0, j0, x, ldx, a[j0:], lda, x[j0:], ldx, ws)
		}
		var inv [trsmBlock]T
		for p := j0; p < j1; p++ {
			inv[p-j0] = 1 / a[p*lda+p]
		}
		for i := 0; i < m; i++ {
			xi := x[i*ldx : i*ldx+j1]
			for p := j0; p < j1; p++ {
				v := xi[p] * inv[p-j0]
				xi[p] = v
				if v == 0 {
					continue
				}
				// Row p of U is contiguous: eliminate x_p from the block.
				xr := xi[p+1 : j1]
				for c, u := range a[p*lda+p+1 : p*lda+j1] {
					xr[c] -= v * u
				}
			}
		}
	}
}

// Pivot thresholds of the supernodal factorisation (pivots are chosen
// within a supernode's diagonal block): below weakTol times an entry of
// its column in the front a pivot counts as weak, and solves are refined;
// below tinyRel the factorisation falls back to the frontal one with
// delayed pivots.
const (
	weakTol = 0.01
	tinyRel = 1e-8
)

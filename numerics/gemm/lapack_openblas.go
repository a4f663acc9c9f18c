//go:build openblas

package gemm

import (
	"fmt"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/lapack"
	lapackgo "gonum.org/v1/gonum/lapack/gonum"
	"gonum.org/v1/gonum/lapack/lapack64"

	"semiflow/numerics/gemm/lapacke"
)

// LAPACK names the LAPACK the dense factorisations run on.
const LAPACK = "system LAPACK through LAPACKE"

// lapackImpl takes the dense eigenvalue problems and the SVD from the
// system LAPACK (through our LAPACKE binding) and everything else from
// gonum. gonum's mat (Eigen, EigenSym, SVD, LU) calls it through
// lapack64. The overrides keep gonum's calling conventions: a workspace
// query (lwork = −1) answers 1, since LAPACKE allocates its own workspace,
// and vectors are row-major. LU stays gonum's (the binding has dgetrf and
// dgetrs, tested): the dense exponential's a-posteriori error estimate sits
// near 1000× its true error on one trust-corpus problem (a damped string in
// its energy norm), and LAPACK's LU rounding tipped it over that bound; LU
// waits on a sharper squaring estimate. Problems of order below lapackSmall stay with
// gonum, as small products do (see openblasImpl): the call overhead does
// not pay there, and Debian's OpenBLAS 0.3.21 kernels were measured wrong on
// 3×3 products, which LAPACK would call.
type lapackImpl struct {
	lapackgo.Implementation
}

func init() { lapack64.Use(lapackImpl{}) }

// lapackSmall is the order below which gonum's LAPACK is used.
const lapackSmall = 32

func lapackPanic(routine string, info int) {
	panic(fmt.Sprintf("gemm: LAPACKE_%s: argument %d is invalid", routine, -info))
}

func (impl lapackImpl) Dgeev(jobvl lapack.LeftEVJob, jobvr lapack.RightEVJob, n int, a []float64, lda int, wr, wi []float64, vl []float64, ldvl int, vr []float64, ldvr int, work []float64, lwork int) (first int) {
	if n < lapackSmall {
		return impl.Implementation.Dgeev(jobvl, jobvr, n, a, lda, wr, wi, vl, ldvl, vr, ldvr, work, lwork)
	}
	if lwork == -1 {
		work[0] = 1
		return 0
	}
	if n == 0 {
		return 0
	}
	info := lapacke.Dgeev(byte(jobvl), byte(jobvr), n, a, lda, wr, wi, vl, ldvl, vr, ldvr)
	if info < 0 {
		lapackPanic("dgeev", info)
	}
	return info // LAPACK's wr[info:], wi[info:] converged: gonum's first
}

func (impl lapackImpl) Dsyev(jobz lapack.EVJob, uplo blas.Uplo, n int, a []float64, lda int, w, work []float64, lwork int) (ok bool) {
	if n < lapackSmall {
		return impl.Implementation.Dsyev(jobz, uplo, n, a, lda, w, work, lwork)
	}
	if lwork == -1 {
		work[0] = 1
		return true
	}
	if n == 0 {
		return true
	}
	info := lapacke.Dsyevd(byte(jobz), byte(uplo), n, a, lda, w)
	if info < 0 {
		lapackPanic("dsyevd", info)
	}
	return info == 0
}

func (impl lapackImpl) Dgesvd(jobU, jobVT lapack.SVDJob, m, n int, a []float64, lda int, s, u []float64, ldu int, vt []float64, ldvt int, work []float64, lwork int) (ok bool) {
	if min(m, n) < lapackSmall {
		return impl.Implementation.Dgesvd(jobU, jobVT, m, n, a, lda, s, u, ldu, vt, ldvt, work, lwork)
	}
	if lwork == -1 {
		work[0] = 1
		return true
	}
	if m == 0 || n == 0 {
		return true
	}
	var info int
	routine := "dgesdd"
	if jobU == jobVT && jobU != lapack.SVDOverwrite {
		// Divide and conquer: the same vectors for both sides.
		info = lapacke.Dgesdd(byte(jobU), m, n, a, lda, s, u, ldu, vt, ldvt)
	} else {
		routine = "dgesvd"
		info = lapacke.Dgesvd(byte(jobU), byte(jobVT), m, n, a, lda, s, u, ldu, vt, ldvt)
	}
	if info < 0 {
		lapackPanic(routine, info)
	}
	return info == 0
}

// RealSchur overwrites the n×n row-major h with its real Schur form T,
// sets q to the orthogonal Z with A = Z T Zᵀ and wr + i·wi to the
// eigenvalues. It returns the number of eigenvalues that did not converge
// (0 on success).
func RealSchur(n int, h, q, wr, wi []float64) int {
	if n < lapackSmall {
		return realSchurGo(n, h, q, wr, wi)
	}
	info := lapacke.Dgees('V', n, h, n, wr, wi, q, n)
	if info < 0 {
		lapackPanic("dgees", info)
	}
	if info > n { // reordering failure cannot happen without sorting
		return n
	}
	return info
}

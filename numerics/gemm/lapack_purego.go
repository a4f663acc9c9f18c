//go:build !openblas

package gemm

import (
	"gonum.org/v1/gonum/lapack"
	lapackgo "gonum.org/v1/gonum/lapack/gonum"
	"gonum.org/v1/gonum/lapack/lapack64"
)

// LAPACK names the LAPACK the dense factorisations run on.
const LAPACK = "gonum (pure Go)"

// RealSchur overwrites the n×n row-major h with its real Schur form T
// (2×2 blocks standardised), sets q to the orthogonal Z with A = Z T Zᵀ and
// wr + i·wi to the eigenvalues. It returns the number of eigenvalues that
// did not converge (0 on success).
func RealSchur(n int, h, q, wr, wi []float64) int { return realSchurGo(n, h, q, wr, wi) }

// pureLAPACK is gonum's LAPACK with Dgeev's Hessenberg QR step replaced by
// our multishift driver (hqr.go) from order hqrMin on; gonum's mat.Eigen
// reaches it through lapack64.
type pureLAPACK struct {
	lapackgo.Implementation
}

func init() { lapack64.Use(pureLAPACK{}) }

func (impl pureLAPACK) Dgeev(jobvl lapack.LeftEVJob, jobvr lapack.RightEVJob, n int, a []float64, lda int, wr, wi []float64, vl []float64, ldvl int, vr []float64, ldvr int, work []float64, lwork int) (first int) {
	if n < hqrMin {
		return impl.Implementation.Dgeev(jobvl, jobvr, n, a, lda, wr, wi, vl, ldvl, vr, ldvr, work, lwork)
	}
	if lwork == -1 {
		work[0] = 1 // geev allocates its own workspace
		return 0
	}
	return geev(jobvl == lapack.LeftEVCompute, jobvr == lapack.RightEVCompute, n, a, lda, wr, wi, vl, ldvl, vr, ldvr)
}

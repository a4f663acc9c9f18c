//go:build !openblas

package gemm

// LAPACK names the LAPACK the dense factorisations run on.
const LAPACK = "gonum (pure Go)"

// RealSchur overwrites the n×n row-major h with its real Schur form T
// (2×2 blocks standardised), sets q to the orthogonal Z with A = Z T Zᵀ and
// wr + i·wi to the eigenvalues. It returns the number of eigenvalues that
// did not converge (0 on success).
func RealSchur(n int, h, q, wr, wi []float64) int { return realSchurGo(n, h, q, wr, wi) }

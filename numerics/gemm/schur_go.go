package gemm

import lapackgo "gonum.org/v1/gonum/lapack/gonum"

// realSchurGo overwrites the n×n row-major h with its real Schur form T
// (2×2 blocks standardised), sets q to the orthogonal Z with A = Z T Zᵀ and
// wr + i·wi to the eigenvalues. It returns the number of eigenvalues that
// did not converge (0 on success). Hessenberg reduction and the orthogonal
// factor (gonum's Dgehrd, Dorghr), then the multishift QR algorithm with
// aggressive early deflation (hessenbergSchur).
func realSchurGo(n int, h, q, wr, wi []float64) int {
	if n == 0 {
		return 0
	}
	var impl lapackgo.Implementation
	tau := make([]float64, max(1, n-1))
	work := make([]float64, 1)
	impl.Dgehrd(n, 0, n-1, h, n, tau, work, -1)
	work = make([]float64, int(work[0]))
	impl.Dgehrd(n, 0, n-1, h, n, tau, work, len(work))
	copy(q, h)
	work = work[:1]
	impl.Dorghr(n, 0, n-1, q, n, tau, work, -1)
	if int(work[0]) > cap(work) {
		work = make([]float64, int(work[0]))
	}
	work = work[:cap(work)]
	impl.Dorghr(n, 0, n-1, q, n, tau, work, len(work))
	for i := 2; i < n; i++ {
		for j := 0; j < i-1; j++ {
			h[i*n+j] = 0
		}
	}
	return hessenbergSchur(true, true, n, 0, n-1, h, n, wr, wi, q, n)
}

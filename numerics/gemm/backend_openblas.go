//go:build openblas

package gemm

import (
	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/blas/cblas128"
	"gonum.org/v1/gonum/blas/gonum"
	"gonum.org/v1/netlib/blas/netlib"

	_ "semiflow/numerics/gemm/openblas" // links -lopenblas
)

// Backend names the BLAS in use.
const Backend = "OpenBLAS"

// openblasImpl takes only the large real and complex matrix products and
// triangular solves with many right-hand sides from OpenBLAS and everything else from gonum. Debian's OpenBLAS 0.3.21 with
// its SkylakeX kernels was measured returning wrong results on 3×3
// problems (a Hille–Yosida sample of a Markov generator came out 1.04
// where the pure-Go build and OpenBLAS's generic kernels give 0.998);
// gonum is exact there, and small products gain nothing from OpenBLAS.
type openblasImpl struct {
	gonum.Implementation
}

func (openblasImpl) Dgemm(tA, tB blas.Transpose, m, n, k int, alpha float64, a []float64, lda int, b []float64, ldb int, beta float64, c []float64, ldc int) {
	if m*n*k < smallWork {
		gonum.Implementation{}.Dgemm(tA, tB, m, n, k, alpha, a, lda, b, ldb, beta, c, ldc)
		return
	}
	netlib.Implementation{}.Dgemm(tA, tB, m, n, k, alpha, a, lda, b, ldb, beta, c, ldc)
}

func (openblasImpl) Zgemm(tA, tB blas.Transpose, m, n, k int, alpha complex128, a []complex128, lda int, b []complex128, ldb int, beta complex128, c []complex128, ldc int) {
	if m*n*k < smallWork {
		gonum.Implementation{}.Zgemm(tA, tB, m, n, k, alpha, a, lda, b, ldb, beta, c, ldc)
		return
	}
	netlib.Implementation{}.Zgemm(tA, tB, m, n, k, alpha, a, lda, b, ldb, beta, c, ldc)
}

func (openblasImpl) Dtrsm(s blas.Side, ul blas.Uplo, tA blas.Transpose, d blas.Diag, m, n int, alpha float64, a []float64, lda int, b []float64, ldb int) {
	k := m
	if s == blas.Right {
		k = n
	}
	if m*n*k < smallWork {
		gonum.Implementation{}.Dtrsm(s, ul, tA, d, m, n, alpha, a, lda, b, ldb)
		return
	}
	netlib.Implementation{}.Dtrsm(s, ul, tA, d, m, n, alpha, a, lda, b, ldb)
}

func init() {
	blas64.Use(openblasImpl{})
	cblas128.Use(openblasImpl{})
}

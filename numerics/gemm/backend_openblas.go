//go:build openblas

package gemm

import (
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/blas/cblas128"
	"gonum.org/v1/netlib/blas/netlib"

	_ "semiflow/numerics/gemm/openblas" // links -lopenblas
)

// Backend names the BLAS in use.
const Backend = "OpenBLAS"

func init() {
	blas64.Use(netlib.Implementation{})
	cblas128.Use(netlib.Implementation{})
}

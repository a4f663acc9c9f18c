//go:build !openblas

package gemm

import "gonum.org/v1/gonum/blas/blas64"

// Backend names the BLAS in use.
const Backend = "pure Go"

func init() { blas64.Use(Implementation{}) }

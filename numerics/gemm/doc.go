// Package gemm chooses the BLAS that every dense computation in Semiflow
// runs on, and supplies a fast matrix product for the default pure-Go build.
//
// gonum's mat, lapack/gonum and blas64 call the implementation registered
// with blas64.Use. Importing this package registers one:
//
//   - default build (no cgo): Implementation, which is gonum's native BLAS
//     with Dgemm replaced by a blocked, packed product whose inner kernel
//     is a 6×8 register tile written in Go assembly for AVX2 with FMA
//     (amd64). Where the CPU lacks AVX2 or FMA, or on other architectures,
//     Dgemm falls back to gonum's own.
//   - build tag openblas (cgo): gonum's netlib binding over the system
//     OpenBLAS (Debian: libopenblas-dev), for both real and complex BLAS.
//
// Backend reports which one is in use; results record it.
//
// The product C = α op(A) op(B) + β C follows the usual blocking of a
// packed GEMM: op(B) is packed in kc × 8 column panels and op(A) in 6 × kc
// row panels (α folded into the packing), so the kernel streams both from
// contiguous memory while the 6×8 tile of C stays in twelve registers. The
// rows of C are shared among GOMAXPROCS goroutines when the product is large.
package gemm

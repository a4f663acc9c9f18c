//go:build !amd64

package gemm

// haveKernel is false: off amd64 Dgemm is gonum's own.
const haveKernel = false

func kernel6x8(k int, a, b, c *float64, ldc int) { panic("gemm: no kernel on this architecture") }

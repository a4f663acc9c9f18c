// Package openblas links the system OpenBLAS into builds with the openblas
// tag. It holds no Go code: gonum's netlib binding declares the BLAS
// functions and this package's cgo directive names the library. A package
// that links a C library may not hold Go assembly, so this is apart from
// package gemm, whose pure-Go kernel is assembly.
package openblas

// Package lapacke is a thin binding of our own over the system LAPACKE
// (Debian: liblapacke-dev, which calls the LAPACK that Debian's
// alternatives select — OpenBLAS's when libopenblas0 is installed), for
// the few dense routines Semiflow needs: eigenvalues and vectors (dgeev),
// real and complex Schur forms (dgees, zgees), singular values (dgesdd,
// dgesvd), symmetric eigenvalues (dsyevd) and LU (dgetrf/dgetrs,
// zgetrf/zgetrs).
//
// It is compiled only with the build tag openblas (cgo); without it the
// package is empty and the pure-Go path (gonum's LAPACK) is used.
// Every routine takes row-major data as gonum does (LAPACK_ROW_MAJOR; LAPACKE
// transposes to LAPACK's column-major layout and back, an O(n²) copy beside
// the O(n³) work) and returns LAPACK's info: 0 on success, < 0 for a bad
// argument (a programming error: callers panic), > 0 for the routine's own
// failure (no convergence, a zero pivot).
package lapacke

//go:build openblas

package lapacke

// #cgo LDFLAGS: -llapacke
// #include <lapacke.h>
import "C"

import "unsafe"

// Available reports whether the binding is compiled in.
const Available = true

func dp(s []float64) *C.double {
	if len(s) == 0 {
		return nil
	}
	return (*C.double)(unsafe.Pointer(&s[0]))
}

func zp(s []complex128) *C.lapack_complex_double {
	if len(s) == 0 {
		return nil
	}
	return (*C.lapack_complex_double)(unsafe.Pointer(&s[0]))
}

func ip(s []int32) *C.lapack_int {
	if len(s) == 0 {
		return nil
	}
	return (*C.lapack_int)(unsafe.Pointer(&s[0]))
}

const rowMajor = C.LAPACK_ROW_MAJOR

// unusedLd is the leading dimension passed for a factor that is not
// computed (job 'N'): LAPACKE 3.11's row-major checks ask for one of at
// least the matrix's order even then (it is never read).
func unusedLd(job byte, ld, n int) int {
	if job == 'N' {
		return max(ld, n, 1)
	}
	return ld
}

func ci(n int) C.lapack_int { return C.lapack_int(n) }

// Dgeev computes the eigenvalues wr + i·wi of the n×n matrix a (destroyed)
// and, for job 'V', left (vl) and right (vr) eigenvectors in LAPACK's real
// storage of complex pairs.
func Dgeev(jobvl, jobvr byte, n int, a []float64, lda int, wr, wi, vl []float64, ldvl int, vr []float64, ldvr int) int {
	return int(C.LAPACKE_dgeev(rowMajor, C.char(jobvl), C.char(jobvr), ci(n), dp(a), ci(lda),
		dp(wr), dp(wi), dp(vl), ci(ldvl), dp(vr), ci(ldvr)))
}

// Dgees computes the real Schur form a = Z T Zᵀ of the n×n matrix a: T
// overwrites a, Z goes to vs (job 'V'), the eigenvalues to wr + i·wi. No
// reordering.
func Dgees(jobvs byte, n int, a []float64, lda int, wr, wi, vs []float64, ldvs int) int {
	var sdim C.lapack_int
	return int(C.LAPACKE_dgees(rowMajor, C.char(jobvs), 'N', nil, ci(n), dp(a), ci(lda), &sdim,
		dp(wr), dp(wi), dp(vs), ci(ldvs)))
}

// Zgees computes the complex Schur form a = Z T Z* of the n×n complex
// matrix a: T overwrites a, Z goes to vs (job 'V'), the eigenvalues to w.
func Zgees(jobvs byte, n int, a []complex128, lda int, w, vs []complex128, ldvs int) int {
	var sdim C.lapack_int
	return int(C.LAPACKE_zgees(rowMajor, C.char(jobvs), 'N', nil, ci(n), zp(a), ci(lda), &sdim,
		zp(w), zp(vs), ci(ldvs)))
}

// Dgesdd computes the singular values s of the m×n matrix a (destroyed) by
// divide and conquer, with jobz 'A' (all of U and Vᵀ), 'S' (the thin ones)
// or 'N' (none).
func Dgesdd(jobz byte, m, n int, a []float64, lda int, s, u []float64, ldu int, vt []float64, ldvt int) int {
	ldu, ldvt = unusedLd(jobz, ldu, m), unusedLd(jobz, ldvt, n)
	return int(C.LAPACKE_dgesdd(rowMajor, C.char(jobz), ci(m), ci(n), dp(a), ci(lda), dp(s),
		dp(u), ci(ldu), dp(vt), ci(ldvt)))
}

// Dgesvd computes the singular values by QR iteration with separate jobs
// for U and Vᵀ ('A', 'S', 'O', 'N').
func Dgesvd(jobu, jobvt byte, m, n int, a []float64, lda int, s, u []float64, ldu int, vt []float64, ldvt int) int {
	superb := make([]float64, max(1, min(m, n)))
	ldu, ldvt = unusedLd(jobu, ldu, m), unusedLd(jobvt, ldvt, n)
	return int(C.LAPACKE_dgesvd(rowMajor, C.char(jobu), C.char(jobvt), ci(m), ci(n), dp(a), ci(lda), dp(s),
		dp(u), ci(ldu), dp(vt), ci(ldvt), dp(superb)))
}

// Dsyevd computes the eigenvalues w (ascending) of the symmetric n×n matrix
// a, whose uplo triangle is read, by divide and conquer; with jobz 'V' the
// orthonormal eigenvectors overwrite a.
func Dsyevd(jobz, uplo byte, n int, a []float64, lda int, w []float64) int {
	return int(C.LAPACKE_dsyevd(rowMajor, C.char(jobz), C.char(uplo), ci(n), dp(a), ci(lda), dp(w)))
}

// Dgetrf factors the m×n matrix a = P L U with partial pivoting; ipiv is
// 1-based as LAPACK's.
func Dgetrf(m, n int, a []float64, lda int, ipiv []int32) int {
	return int(C.LAPACKE_dgetrf(rowMajor, ci(m), ci(n), dp(a), ci(lda), ip(ipiv)))
}

// Dgetrs solves op(A) X = B with Dgetrf's factors; trans is 'N' or 'T'.
func Dgetrs(trans byte, n, nrhs int, a []float64, lda int, ipiv []int32, b []float64, ldb int) int {
	return int(C.LAPACKE_dgetrs(rowMajor, C.char(trans), ci(n), ci(nrhs), dp(a), ci(lda), ip(ipiv), dp(b), ci(ldb)))
}

// Zgetrf factors the complex m×n matrix a = P L U with partial pivoting.
func Zgetrf(m, n int, a []complex128, lda int, ipiv []int32) int {
	return int(C.LAPACKE_zgetrf(rowMajor, ci(m), ci(n), zp(a), ci(lda), ip(ipiv)))
}

// Zgetrs solves op(A) X = B with Zgetrf's factors; trans is 'N', 'T' or 'C'.
func Zgetrs(trans byte, n, nrhs int, a []complex128, lda int, ipiv []int32, b []complex128, ldb int) int {
	return int(C.LAPACKE_zgetrs(rowMajor, C.char(trans), ci(n), ci(nrhs), zp(a), ci(lda), ip(ipiv), zp(b), ci(ldb)))
}

package gemm

import (
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack"
	lapackgo "gonum.org/v1/gonum/lapack/gonum"
)

// geev is LAPACK's Dgeev (eigenvalues wr + i·wi of the n×n row-major a,
// destroyed, and optionally left and right eigenvectors in LAPACK's real
// storage of conjugate pairs, each of unit 2-norm with its largest
// component real) with the Hessenberg QR step done by hessenbergSchur.
// The steps: scaling into the safe range, balancing (permutation and
// scaling), Hessenberg reduction, the Schur form, eigenvectors of the
// triangular factor multiplied by the Schur vectors, back-transformation
// and normalisation. It returns LAPACK's info (0: all converged).
func geev(wantvl, wantvr bool, n int, a []float64, lda int, wr, wi, vl []float64, ldvl int, vr []float64, ldvr int) int {
	var impl lapackgo.Implementation
	if n == 0 {
		return 0
	}
	const (
		safmin = 0x1p-1022
		eps    = 0x1p-53
	)
	smlnum := math.Sqrt(safmin) / eps
	bignum := 1 / smlnum
	anrm := impl.Dlange(lapack.MaxAbs, n, n, a, lda, nil)
	cscale := 0.0
	switch {
	case anrm > 0 && anrm < smlnum:
		cscale = smlnum
	case anrm > bignum:
		cscale = bignum
	}
	if cscale != 0 {
		impl.Dlascl(lapack.General, 0, 0, anrm, cscale, n, n, a, lda)
	}
	scale := make([]float64, n)
	ilo, ihi := impl.Dgebal(lapack.PermuteScale, n, a, lda, scale)

	tau := make([]float64, max(1, n-1))
	work := []float64{0}
	impl.Dgehrd(n, ilo, ihi, a, lda, tau, work, -1)
	impl.Dorghr(n, ilo, ihi, a, lda, tau, work[:1:1], -1) // never larger than Dgehrd's
	work = make([]float64, max(n, int(work[0])))
	impl.Dgehrd(n, ilo, ihi, a, lda, tau, work, len(work))

	var info int
	var q []float64
	ldq := 1
	switch {
	case wantvl:
		q, ldq = vl, ldvl
	case wantvr:
		q, ldq = vr, ldvr
	}
	if q != nil {
		impl.Dlacpy(blas.Lower, n, n, a, lda, q, ldq)
		w := []float64{0}
		impl.Dorghr(n, ilo, ihi, q, ldq, tau, w, -1)
		if int(w[0]) > len(work) {
			work = make([]float64, int(w[0]))
		}
		impl.Dorghr(n, ilo, ihi, q, ldq, tau, work, len(work))
		info = hessenbergSchur(true, true, n, ilo, ihi, a, lda, wr, wi, q, ldq)
		if wantvl && wantvr {
			impl.Dlacpy(blas.All, n, n, vl, ldvl, vr, ldvr)
		}
	} else {
		info = hessenbergSchur(false, false, n, ilo, ihi, a, lda, wr, wi, nil, 1)
	}
	unscale := func() {
		if cscale == 0 {
			return
		}
		if info > 0 {
			impl.Dlascl(lapack.General, 0, 0, cscale, anrm, n-info, 1, wr[info:], 1)
			impl.Dlascl(lapack.General, 0, 0, cscale, anrm, n-info, 1, wi[info:], 1)
			impl.Dlascl(lapack.General, 0, 0, cscale, anrm, ilo, 1, wr, 1)
			impl.Dlascl(lapack.General, 0, 0, cscale, anrm, ilo, 1, wi, 1)
			return
		}
		impl.Dlascl(lapack.General, 0, 0, cscale, anrm, n, 1, wr, 1)
		impl.Dlascl(lapack.General, 0, 0, cscale, anrm, n, 1, wi, 1)
	}
	if info > 0 || q == nil {
		unscale()
		return info
	}

	side := lapack.EVRight
	switch {
	case wantvl && wantvr:
		side = lapack.EVBoth
	case wantvl:
		side = lapack.EVLeft
	}
	w := []float64{0}
	impl.Dtrevc3(side, lapack.EVAllMulQ, nil, n, a, lda, vl, ldvl, vr, ldvr, n, w, -1)
	if int(w[0]) > len(work) {
		work = make([]float64, int(w[0]))
	}
	impl.Dtrevc3(side, lapack.EVAllMulQ, nil, n, a, lda, vl, ldvl, vr, ldvr, n, work, len(work))
	if wantvl {
		impl.Dgebak(lapack.PermuteScale, lapack.EVLeft, n, ilo, ihi, scale, n, vl, ldvl)
		normalisePairs(n, wi, vl, ldvl, work[:n])
	}
	if wantvr {
		impl.Dgebak(lapack.PermuteScale, lapack.EVRight, n, ilo, ihi, scale, n, vr, ldvr)
		normalisePairs(n, wi, vr, ldvr, work[:n])
	}
	unscale()
	return 0
}

// normalisePairs scales each eigenvector (columns of v; a conjugate pair as
// the real and imaginary parts in columns i, i+1) to unit 2-norm and
// rotates a pair so that its largest component is real.
func normalisePairs(n int, wi, v []float64, ldv int, mag []float64) {
	var impl lapackgo.Implementation
	bi := blas64.Implementation()
	for i, wii := range wi {
		switch {
		case wii < 0:
			continue
		case wii == 0:
			bi.Dscal(n, 1/bi.Dnrm2(n, v[i:], ldv), v[i:], ldv)
			continue
		}
		scl := 1 / math.Hypot(bi.Dnrm2(n, v[i:], ldv), bi.Dnrm2(n, v[i+1:], ldv))
		bi.Dscal(n, scl, v[i:], ldv)
		bi.Dscal(n, scl, v[i+1:], ldv)
		for k := 0; k < n; k++ {
			re, im := v[k*ldv+i], v[k*ldv+i+1]
			mag[k] = re*re + im*im
		}
		k := bi.Idamax(n, mag, 1)
		cs, sn, _ := impl.Dlartg(v[k*ldv+i], v[k*ldv+i+1])
		bi.Drot(n, v[i:], ldv, v[i+1:], ldv, cs, sn)
		v[k*ldv+i+1] = 0
	}
}

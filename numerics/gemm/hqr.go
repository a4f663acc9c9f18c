package gemm

import (
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/lapack"
	lapackgo "gonum.org/v1/gonum/lapack/gonum"
)

// The Hessenberg QR algorithm of the pure-Go path: the small-bulge
// multishift QR algorithm with aggressive early deflation (Braman, Byers &
// Mathias, SIAM J. Matrix Anal. Appl. 23, 2002, parts I and II), driven here
// and built from gonum's exported pieces — the deflation window (Dlaqr23),
// the multishift sweep (Dlaqr5) and the double-shift algorithm for small
// blocks (Dlahqr).
//
// Why our own driver: gonum v0.17's parameter table (Iparmq) tests its
// cases from the smallest order up, so every order ≥ 30 gets 4 shifts, a
// 4-wide deflation window and sweeps whose far-from-diagonal updates are
// applied reflector by reflector. With the shift counts the algorithm's
// authors recommend (about n/log₂n up to 64, then 128, 256) and the updates
// accumulated into matrix products (our packed Dgemm), a 500×500
// eigenvalue problem with both sets of vectors takes about half the time.

// hqrMin is the order from which the multishift driver runs; below it the
// double-shift algorithm is as fast.
const hqrMin = 75

// shiftCount is the recommended number of simultaneous shifts for an
// active block of order nh (even, at least 2).
func shiftCount(nh int) int {
	ns := 2
	if nh >= 30 {
		ns = 4
	}
	if nh >= 60 {
		ns = 10
	}
	if nh >= 150 {
		ns = max(10, nh/int(math.Round(math.Log2(float64(nh)))))
	}
	if nh >= 590 {
		ns = 64
	}
	if nh >= 3000 {
		ns = 128
	}
	if nh >= 6000 {
		ns = 256
	}
	return max(2, ns&^1)
}

// hessenbergSchur computes the eigenvalues wr + i·wi of the upper
// Hessenberg n×n matrix h (row-major, leading dimension ldh) whose rows and
// columns outside ilo..ihi are already triangular; with wantt h becomes the
// real Schur form T, with wantz the orthogonal factor is multiplied into z
// (rows ilo..ihi). It returns 0, or 1 + the index of the last eigenvalue
// that did not converge (LAPACK's convention, as gonum's Dhseqr).
func hessenbergSchur(wantt, wantz bool, n, ilo, ihi int, h []float64, ldh int, wr, wi, z []float64, ldz int) int {
	var impl lapackgo.Implementation
	if n == 0 {
		return 0
	}
	if !wantz {
		z, ldz = nil, 1
	}
	if n < hqrMin {
		job, compz := lapack.EigenvaluesOnly, lapack.SchurNone
		if wantt {
			job = lapack.EigenvaluesAndSchur
		}
		if wantz {
			compz = lapack.SchurOrig
		}
		work := []float64{0}
		impl.Dhseqr(job, compz, n, ilo, ihi, h, ldh, wr, wi, z, ldz, work, -1)
		work = make([]float64, max(1, int(work[0])))
		return impl.Dhseqr(job, compz, n, ilo, ihi, h, ldh, wr, wi, z, ldz, work, len(work))
	}
	for i := 0; i < ilo; i++ {
		wr[i], wi[i] = h[i*ldh+i], 0
	}
	for i := ihi + 1; i < n; i++ {
		wr[i], wi[i] = h[i*ldh+i], 0
	}
	if ilo == ihi {
		wr[ilo], wi[ilo] = h[ilo*ldh+ilo], 0
		return 0
	}
	unconverged := multishiftQR(impl, wantt, wantz, n, ilo, ihi, h, ldh, wr[:ihi+1], wi[:ihi+1], z, ldz)
	if (wantt || unconverged > 0) && n > 2 {
		impl.Dlaset(blas.Lower, n-2, n-2, 0, 0, h[2*ldh:], ldh)
	}
	return unconverged
}

// multishiftQR is the outer loop of the algorithm on the active block
// ilo..ihi (order ≥ hqrMin): deflation windows, then sweeps of ns shifts.
func multishiftQR(impl lapackgo.Implementation, wantt, wantz bool, n, ilo, ihi int, h []float64, ldh int, wr, wi, z []float64, ldz int) (unconverged int) {
	const (
		nibble = 14      // % of a window's deflations that skip a sweep
		kexnw  = 5       // iterations without deflation before the window grows
		kexsh  = 6       // iterations without deflation before exceptional shifts
		wilk1  = 0.75    // exceptional shift parameters
		wilk2  = -0.4375 //
	)
	nh := ihi - ilo + 1
	nsr := shiftCount(nh)
	nwr := nsr // deflation window
	if nh > 500 {
		nwr = 3 * nsr / 2
	}
	nwr = min(nh, (n-1)/3, max(2, nwr))
	nsr = max(2, min(nsr, (n-3)/6, ihi-ilo)&^1)
	kacc22 := 0 // updates away from the diagonal: by products from 14 shifts on
	if nsr >= 14 {
		kacc22 = 2
	}

	query := []float64{0}
	impl.Dlaqr23(wantt, wantz, n, ilo, ihi, nwr+1, h, ldh, ilo, ihi, z, ldz,
		wr, wi, h, ldh, n, h, ldh, n, h, ldh, query, -1, 1)
	lwork := max(3*nsr/2, int(query[0]), n)
	work := make([]float64, lwork)

	nwmax := min((n-1)/3, lwork/2)
	nw := nwmax
	nsmax := min((n-3)/6, 2*lwork/3) &^ 1
	ndfl, ndec := 1, 0 // iterations since the last deflation; window decrement

	itmax := max(30, 2*kexsh) * max(10, nh)
	for it, kbot := 0, ihi; kbot >= ilo; it++ {
		if it == itmax {
			return kbot + 1
		}
		ktop := ilo
		for k := kbot; k >= ilo+1; k-- {
			if h[k*ldh+k-1] == 0 {
				ktop = k
				break
			}
		}

		// The window: the recommended size (one more when that has the
		// smaller subdiagonal entry), grown to the largest and then shrunk
		// while nothing deflates.
		nha := kbot - ktop + 1
		nwupbd := min(nha, nwmax)
		if ndfl < kexnw {
			nw = min(nwupbd, nwr)
		} else {
			nw = min(nwupbd, 2*nw)
		}
		if nw < nwmax {
			if nw >= nha-1 {
				nw = nha
			} else {
				kwtop := kbot - nw + 1
				if math.Abs(h[kwtop*ldh+kwtop-1]) > math.Abs(h[(kwtop-1)*ldh+kwtop-2]) {
					nw++
				}
			}
		}
		if ndfl < kexnw {
			ndec = -1
		} else if ndec >= 0 || nw >= nwupbd {
			ndec++
			if nw-ndec < 2 {
				ndec = 0
			}
			nw -= ndec
		}

		// Aggressive early deflation, with work arrays under the
		// subdiagonal of h: V (nw×nw) in the lower left corner, a
		// horizontal strip along the bottom and a vertical one at the left.
		kv, kt, kwv := n-nw, nw, nw+1
		nhv := n - kwv - kt
		ls, ld := impl.Dlaqr23(wantt, wantz, n, ktop, kbot, nw,
			h, ldh, ilo, ihi, z, ldz, wr[:kbot+1], wi[:kbot+1],
			h[kv*ldh:], ldh, nhv, h[kv*ldh+kt:], ldh, nhv, h[kwv*ldh:], ldh, work, lwork, 1)
		kbot -= ld
		ks := kbot - ls + 1 // the shifts the window left
		if ld > 0 && (100*ld > nw*nibble || kbot-ktop+1 <= min(hqrMin, nwmax)) {
			ndfl = 1
			continue // many deflations: skip the sweep
		}

		ns := min(nsmax, nsr, max(2, kbot-ktop)) &^ 1
		if ndfl%kexsh == 0 {
			// Exceptional shifts after kexsh iterations without progress.
			ks = kbot - ns + 1
			for i := kbot; i > max(ks, ktop+1); i -= 2 {
				ss := math.Abs(h[i*ldh+i-1]) + math.Abs(h[(i-1)*ldh+i-2])
				aa := wilk1*ss + h[i*ldh+i]
				_, _, _, _, wr[i-1], wi[i-1], wr[i], wi[i], _, _ = impl.Dlanv2(aa, ss, wilk2*ss, aa)
			}
			if ks == ktop {
				wr[ks+1], wi[ks+1] = h[(ks+1)*ldh+ks+1], 0
				wr[ks], wi[ks] = wr[ks+1], wi[ks+1]
			}
		} else {
			if kbot-ks+1 <= ns/2 {
				// Too few shifts from the window: the eigenvalues of the
				// trailing ns×ns block, computed in a scratch copy below
				// the subdiagonal.
				ks = kbot - ns + 1
				kt = n - ns
				impl.Dlacpy(blas.All, ns, ns, h[ks*ldh+ks:], ldh, h[kt*ldh:], ldh)
				if ns > hqrMin {
					ks += impl.Dlaqr04(false, false, ns, 1, ns-1, h[kt*ldh:], ldh,
						wr[ks:ks+ns], wi[ks:ks+ns], 0, 0, nil, 0, work, lwork, 0)
				} else {
					ks += impl.Dlahqr(false, false, ns, 0, ns-1, h[kt*ldh:], ldh,
						wr[ks:ks+ns], wi[ks:ks+ns], 0, 0, nil, 1)
				}
				if ks >= kbot {
					// A rare failure: the trailing 2×2 block's eigenvalues.
					aa, bb := h[(kbot-1)*ldh+kbot-1], h[(kbot-1)*ldh+kbot]
					cc, dd := h[kbot*ldh+kbot-1], h[kbot*ldh+kbot]
					_, _, _, _, wr[kbot-1], wi[kbot-1], wr[kbot], wi[kbot], _, _ = impl.Dlanv2(aa, bb, cc, dd)
					ks = kbot - 1
				}
			}
			if kbot-ks+1 > ns {
				// Largest first, so the smallest ns are used; a bubble
				// sort keeps conjugate pairs together.
				for k, sorted := kbot, false; k > ks && !sorted; k-- {
					sorted = true
					for i := ks; i < k; i++ {
						if math.Abs(wr[i])+math.Abs(wi[i]) < math.Abs(wr[i+1])+math.Abs(wi[i+1]) {
							sorted = false
							wr[i], wr[i+1] = wr[i+1], wr[i]
							wi[i], wi[i+1] = wi[i+1], wi[i]
						}
					}
				}
			}
			// Pairs of real shifts and conjugate pairs, adjacent.
			for i := kbot; i > ks+1; i -= 2 {
				if wi[i] != -wi[i-1] {
					wr[i], wr[i-1], wr[i-2] = wr[i-1], wr[i-2], wr[i]
					wi[i], wi[i-1], wi[i-2] = wi[i-1], wi[i-2], wi[i]
				}
			}
		}
		if kbot-ks+1 == 2 && wi[kbot] == 0 {
			// Two real shifts: use the one nearer h[kbot][kbot] twice.
			if math.Abs(wr[kbot]-h[kbot*ldh+kbot]) < math.Abs(wr[kbot-1]-h[kbot*ldh+kbot]) {
				wr[kbot-1] = wr[kbot]
			} else {
				wr[kbot] = wr[kbot-1]
			}
		}
		ns = min(ns, kbot-ks+1) &^ 1
		ks = kbot - ns + 1

		// The sweep, with U (2ns×2ns) in the lower left corner of h's
		// subdiagonal space and strips beside it.
		kdu := 2 * ns
		ku, kwh := n-kdu, kdu
		kwv = kdu + 3
		nhv = n - kwv - kdu
		impl.Dlaqr5(wantt, wantz, kacc22, n, ktop, kbot, ns,
			wr[ks:ks+ns], wi[ks:ks+ns], h, ldh, ilo, ihi, z, ldz,
			work, 3, h[ku*ldh:], ldh, nhv, h[kwv*ldh:], ldh, nhv, h[ku*ldh+kwh:], ldh)
		if ld > 0 {
			ndfl = 1
		} else {
			ndfl++
		}
	}
	return 0
}

package expo

import (
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"
)

// normEst1 returns an estimate (a lower bound, usually exact) of ‖B‖₁ for
// an n×n real operator B given by apply (dst = Bx) and applyT (dst = Bᵀx).
// It is the iteration of Hager (ACM TOMS 1984) as refined by Higham (ACM
// TOMS 1988, Algorithm 4.1): at most five sign-vector steps plus the
// alternating test vector b_i = (−1)^{i}(1 + i/(n−1)).
func normEst1(n int, apply, applyT func(dst, x []float64)) float64 {
	if n == 0 {
		return 0
	}
	x := make([]float64, n)
	y := make([]float64, n)
	z := make([]float64, n)
	for i := range x {
		x[i] = 1 / float64(n)
	}
	est := 0.0
	lastJ := -1
	for k := 0; k < 5; k++ {
		apply(y, x)
		e := 0.0
		for _, v := range y {
			e += math.Abs(v)
		}
		if k > 0 && e <= est {
			break
		}
		est = e
		for i, v := range y {
			if v >= 0 {
				y[i] = 1
			} else {
				y[i] = -1
			}
		}
		applyT(z, y)
		j, zmax, ztx := 0, -1.0, 0.0
		for i, v := range z {
			ztx += v * x[i]
			if math.Abs(v) > zmax {
				j, zmax = i, math.Abs(v)
			}
		}
		if k > 0 && (zmax <= ztx || j == lastJ) {
			break
		}
		lastJ = j
		for i := range x {
			x[i] = 0
		}
		x[j] = 1
	}
	if n > 1 {
		for i := range x {
			s := 1.0
			if i%2 == 1 {
				s = -1
			}
			x[i] = s * (1 + float64(i)/float64(n-1))
		}
		apply(y, x)
		alt := 0.0
		for _, v := range y {
			alt += math.Abs(v)
		}
		alt = 2 * alt / (3 * float64(n))
		est = math.Max(est, alt)
	}
	return est
}

// gemv sets y = op(A) x for a dense A.
func gemv(A *mat.Dense, trans bool, y, x []float64) {
	r := A.RawMatrix()
	t := blas.NoTrans
	if trans {
		t = blas.Trans
	}
	blas64.Gemv(t, 1, r, blas64.Vector{N: len(x), Inc: 1, Data: x}, 0, blas64.Vector{N: len(y), Inc: 1, Data: y})
}

// powerApply returns functions applying B^p and (B^p)ᵀ for a dense B.
func powerApply(B *mat.Dense, p int) (apply, applyT func(dst, x []float64)) {
	n, _ := B.Dims()
	tmp := make([]float64, n)
	run := func(trans bool) func(dst, x []float64) {
		return func(dst, x []float64) {
			copy(dst, x)
			for k := 0; k < p; k++ {
				gemv(B, trans, tmp, dst)
				copy(dst, tmp)
			}
		}
	}
	return run(false), run(true)
}

// normEst1Dense estimates ‖B^p‖₁ using 2p matrix–vector products per step.
func normEst1Dense(B *mat.Dense, p int) float64 {
	n, _ := B.Dims()
	ap, at := powerApply(B, p)
	return normEst1(n, ap, at)
}

// normEst1Prod estimates ‖B C‖₁ for dense B, C.
func normEst1Prod(B, C *mat.Dense) float64 {
	n, _ := B.Dims()
	tmp := make([]float64, n)
	ap := func(dst, x []float64) { gemv(C, false, tmp, x); gemv(B, false, dst, tmp) }
	at := func(dst, x []float64) { gemv(B, true, tmp, x); gemv(C, true, dst, tmp) }
	return normEst1(n, ap, at)
}

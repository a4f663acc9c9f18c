package expo

import (
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/mat"
)

// Phi sets dst[k−1] = φ_k(A) for k = 1…len(dst), where
//
//	φ_0(z) = e^z,  φ_k(z) = Σ_{j≥0} z^j/(j+k)!  (so φ_{k}(z) = (φ_{k−1}(z) − 1/(k−1)!)/z),
//
// through the augmented-matrix identity: for the block matrix
// W = [A, I, 0, …; 0, 0, I, …; …; 0, …, 0] of order (p+1)n, the first block
// row of e^W is [e^A, φ_1(A), …, φ_p(A)] (Saad, SIAM J. Numer. Anal. 1992,
// Prop. 2.1; Higham, Functions of Matrices, SIAM 2008, §10.7.4). No
// cancellation occurs for small or singular A.
//
// Each dst[k] must be empty or n×n. Phi panics with ErrShape if A is not
// square or a destination has the wrong size; it returns Exp's errors.
func Phi(dst []*mat.Dense, a mat.Matrix) error {
	n, c := a.Dims()
	if n != c {
		panic(ErrShape)
	}
	p := len(dst)
	for _, d := range dst {
		if !d.IsEmpty() {
			if r, c := d.Dims(); r != n || c != n {
				panic(ErrShape)
			}
		}
	}
	if p == 0 {
		return nil
	}
	N := (p + 1) * n
	W := mat.NewDense(N, N, nil)
	W.Slice(0, n, 0, n).(*mat.Dense).Copy(a)
	for k := 0; k < p; k++ {
		for i := 0; i < n; i++ {
			W.Set(k*n+i, (k+1)*n+i, 1)
		}
	}
	var E mat.Dense
	if _, err := Exp(&E, W); err != nil {
		return err
	}
	for k := 0; k < p; k++ {
		if dst[k].IsEmpty() {
			dst[k].ReuseAs(n, n)
		}
		dst[k].Copy(E.Slice(0, n, (k+1)*n, (k+2)*n))
	}
	return nil
}

// phiDirect evaluates φ_k(z) by the recurrence φ_k = (φ_{k−1} − 1/(k−1)!)/z,
// accurate for |z| ≥ 1.
func phiDirect(k int, z complex128) complex128 {
	f := cmplx.Exp(z)
	fact := 1.0
	for j := 1; j <= k; j++ {
		f = (f - complex(1/fact, 0)) / z
		fact *= float64(j)
	}
	return f
}

// phiContourPoints is the number of points M on the circle used by PhiScalar.
const phiContourPoints = 32

// PhiScalar returns φ_k(z) (see Phi). For |z| ≥ 1 it uses the recurrence;
// for |z| < 1, where the recurrence cancels, it averages the recurrence
// over M = 32 points of the circle |w − z| = 2 (Cauchy's integral formula
// by the trapezoidal rule, Kassam & Trefethen, SIAM J. Sci. Comput. 26,
// 2005): every point has |w| ≥ 1 and the rule converges geometrically.
// PhiScalar panics if k < 0.
func PhiScalar(k int, z complex128) complex128 {
	if k < 0 {
		panic("expo: PhiScalar with k < 0")
	}
	if k == 0 || cmplx.Abs(z) >= 1 {
		return phiDirect(k, z)
	}
	var s complex128
	for j := 0; j < phiContourPoints; j++ {
		th := math.Pi * (float64(j) + 0.5) * 2 / phiContourPoints
		s += phiDirect(k, z+complex(2*math.Cos(th), 2*math.Sin(th)))
	}
	return s / phiContourPoints
}

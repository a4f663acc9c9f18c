package spectra

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
)

// Spectrum lists eigenvalues λ_k of A, ordered by decreasing real part
// (then decreasing imaginary part).
type Spectrum struct {
	Values []complex128
	// Cond[k] = ‖x‖‖y‖/|yᴴx| is the condition number of λ_k, with x and y
	// the right and left eigenvectors (Ax = λx, yᴴA = λyᴴ): a perturbation
	// of size δ moves a simple λ_k by about Cond[k]·δ. Empty for the sparse
	// method.
	Cond []float64
	// Residual[k] = ‖Ax − λx‖/‖x‖ for the sparse method; empty for dense.
	Residual []float64
	// Right and Left hold unit right and left eigenvectors in the columns
	// (column k for Values[k]; A x = λ x, yᴴA = λ yᴴ), for the dense method;
	// Right also for the sparse one.
	Right, Left *mat.CDense
	// Abscissa is the spectral abscissa α(A) = max Re λ over the computed
	// eigenvalues (over all of them for the dense method).
	Abscissa float64
	Method   string
	Accuracy string
}

// DenseSpectrum computes all eigenvalues of the square operator A with
// their condition numbers, by the QR algorithm (gonum mat.Eigen with left
// and right eigenvectors). It panics with ErrShape if A is not square and
// returns an error if the QR algorithm fails.
func DenseSpectrum(a linop.Operator) (*Spectrum, error) {
	m, err := toDense(a)
	if err != nil {
		return nil, err
	}
	n, _ := m.Dims()
	sp := &Spectrum{Abscissa: math.Inf(-1)}
	sp.Method = "QR algorithm on the dense matrix (LAPACK Dgeev via gonum mat.Eigen), left and right eigenvectors"
	if n == 0 {
		return sp, nil
	}
	var e mat.Eigen
	if !e.Factorize(m, mat.EigenBoth) {
		return nil, numErr("QR algorithm did not converge for the %d×%d eigenvalue problem", n, n)
	}
	vals := e.Values(nil)
	var x, y mat.CDense
	e.VectorsTo(&x)
	e.LeftVectorsTo(&y)
	cond := make([]float64, n)
	for k := 0; k < n; k++ {
		var yx complex128
		var nx, ny float64
		for i := 0; i < n; i++ {
			xi, yi := x.At(i, k), y.At(i, k)
			yx += cmplx.Conj(yi) * xi
			nx += real(xi)*real(xi) + imag(xi)*imag(xi)
			ny += real(yi)*real(yi) + imag(yi)*imag(yi)
		}
		cond[k] = math.Sqrt(nx*ny) / cmplx.Abs(yx)
	}
	idx := make([]int, n)
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(i, j int) bool { return rightOf(vals[idx[i]], vals[idx[j]]) })
	sp.Values = make([]complex128, n)
	sp.Cond = make([]float64, n)
	maxCond := 0.0
	sp.Right, sp.Left = mat.NewCDense(n, n, nil), mat.NewCDense(n, n, nil)
	for k, i := range idx {
		sp.Values[k], sp.Cond[k] = vals[i], cond[i]
		maxCond = math.Max(maxCond, cond[i])
		for r := 0; r < n; r++ {
			sp.Right.Set(r, k, x.At(r, i))
			sp.Left.Set(r, k, y.At(r, i))
		}
	}
	sp.Abscissa = real(sp.Values[0])
	fn := mat.Norm(m, 2) // Frobenius
	sp.Accuracy = fmt.Sprintf("backward stable: each λ has error ≲ Cond·u·‖A‖_F ≈ Cond × %.1e (first order, simple eigenvalues); largest Cond = %.3g", 0x1p-53*fn*float64(n), maxCond)
	return sp, nil
}

func rightOf(a, b complex128) bool {
	if real(a) != real(b) {
		return real(a) > real(b)
	}
	return imag(a) > imag(b)
}

// SpectralAbscissa returns α(A) = max Re λ over the eigenvalues of the
// dense operator A.
func SpectralAbscissa(a linop.Operator) (float64, error) {
	s, err := NewSchur(a)
	if err != nil {
		return 0, err
	}
	return s.abscissa(), nil
}

func (s *Schur) abscissa() float64 {
	al := math.Inf(-1)
	for i := 0; i < s.N; i++ {
		al = math.Max(al, real(s.T[i*s.N+i]))
	}
	return al
}

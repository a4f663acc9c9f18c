package spectra

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"
	"strings"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/roundoff"
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
	// IllCond[k] reports Cond[k] > IllCondLimit: λ_k is defective or
	// nearly so (a Jordan block, or a cluster whose eigenvectors are
	// nearly parallel), and the first-order bound Cond·u·‖A‖ does not
	// describe its error; its pseudospectra do. Empty for the sparse method.
	IllCond []bool
	// Right and Left hold unit right and left eigenvectors in the columns
	// (column k for Values[k]; A x = λ x, yᴴA = λ yᴴ), for the dense method;
	// Right also for the sparse one.
	Right, Left *mat.CDense
	// Abscissa is the spectral abscissa α(A) = max Re λ over the computed
	// eigenvalues (over all of them for the dense method).
	Abscissa float64
	// Rounding is the backward error n·u·‖A‖_F of the dense method
	// (roundoff.Threshold); 0 for the sparse one. For the symmetric route
	// of a reversible rate matrix it is the absolute error of every
	// eigenvalue, whatever Cond says (absolute is then true).
	Rounding float64
	absolute bool
	Method   string
	Accuracy string
}

// IllCondLimit is 1/√u ≈ 9.5e7: an eigenvalue whose condition number
// exceeds it is treated as defective. A perturbation of size δ = u‖A‖
// moves a simple eigenvalue by about Cond·δ, which is then above √u‖A‖ —
// as large as for a 2×2 Jordan block, whose eigenvalue moves by
// √(δ‖A‖) = √u‖A‖ — so the first-order bound no longer holds (Wilkinson,
// The Algebraic Eigenvalue Problem, 1965, §2.26 and §2.22).
const IllCondLimit = 0x1p26 * math.Sqrt2 // 1/√u = 2^26.5

// DenseSpectrum computes all eigenvalues of the square operator A with
// their condition numbers, by the QR algorithm (gonum mat.Eigen with left
// and right eigenvectors). It panics with ErrShape if A is not square and
// returns an error if the QR algorithm fails. Eigenvalues with condition
// above IllCondLimit are flagged in IllCond and named in Accuracy, which
// then points to pseudospectra instead of the first-order bound.
//
// The rate matrix of an irreducible reversible chain (a birth–death chain,
// or detailed balance π_i q_ij = π_j q_ji) takes the symmetric route
// instead: its eigenvalues are those of S = D^{1/2} Q D^{-1/2}, computed by
// a symmetric eigensolver to n·u·‖S‖_F however strongly graded Q is (the
// non-symmetric QR algorithm on such a Q can be off by percents).
//
// A complex operator (linop.Complex, A = B + iC) gets its own n eigenvalues,
// not the 2n of its real form: complex Hessenberg QR (complexDenseSpectrum).
func DenseSpectrum(a linop.Operator) (*Spectrum, error) {
	if b, c, ok, err := complexParts(a); ok || err != nil {
		if err != nil {
			return nil, err
		}
		return complexDenseSpectrum(nil, b, c)
	}
	m, err := toDense(a)
	if err != nil {
		return nil, err
	}
	if sp, ok, err := reversibleRateSpectrum(m); ok || err != nil {
		return sp, err
	}
	return denseSpectrum(m)
}

// denseSpectrum is DenseSpectrum of the matrix m, which it does not modify.
func denseSpectrum(m *mat.Dense) (*Spectrum, error) {
	n, _ := m.Dims()
	sp := &Spectrum{Abscissa: math.Inf(-1)}
	sp.Method = "QR algorithm on the dense matrix (Hessenberg reduction, implicit double shifts), left and right eigenvectors"
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
	finishSpectrum(sp, vals, &x, &y, n, mat.Norm(m, 2), sp.Method)
	return sp, nil
}

// finishSpectrum fills sp from the eigenvalues vals with right and left
// eigenvectors in the columns of x and y: condition numbers, the order by
// decreasing real part, the abscissa, and the accuracy statement from the
// backward error n·u·‖A‖_F (normF = ‖A‖_F).
func finishSpectrum(sp *Spectrum, vals []complex128, x, y *mat.CDense, n int, normF float64, method string) {
	sp.Method = method
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
	tol := roundoff.Threshold(n, normF) // n·u·‖A‖_F
	sp.Rounding = tol
	sp.IllCond = make([]bool, n)
	var bad []string
	for k, c := range sp.Cond {
		if !(c <= IllCondLimit) {
			sp.IllCond[k] = true
			if len(bad) < 6 {
				bad = append(bad, fmt.Sprintf("k = %d (Cond = %.2g)", k, c))
			} else if len(bad) == 6 {
				bad = append(bad, "…")
			}
		}
	}
	if len(bad) == 0 {
		sp.Accuracy = fmt.Sprintf("backward stable: each λ has error ≲ Cond·n·u·‖A‖_F = Cond × %.1e (first order, simple eigenvalues); largest Cond = %.3g", tol, maxCond)
		return
	}
	sp.Accuracy = fmt.Sprintf("backward stable (backward error n·u·‖A‖_F = %.1e); DEFECTIVE OR NEARLY: %d eigenvalue(s) have condition above 1/√u = %.2g: %s. "+
		"For these the first-order bound Cond × %.1e does not hold: a perturbation δ can move an eigenvalue of an m×m Jordan block by about (δ‖A‖^{m−1})^{1/m} (√(δ‖A‖) = %.1e for m = 2); "+
		"the pseudospectra σ_ε(A) show where they can lie. The other eigenvalues have error ≲ Cond × %.1e",
		tol, countTrue(sp.IllCond), IllCondLimit, strings.Join(bad, ", "), tol, math.Sqrt(tol*normF), tol)
}

func countTrue(b []bool) int {
	c := 0
	for _, v := range b {
		if v {
			c++
		}
	}
	return c
}

// AbscissaError returns the error allowance of the dense Abscissa: Rounding
// times the condition of the rightmost eigenvalue, or, when that is above
// IllCondLimit (ill, defective or nearly so), √(Rounding·‖A‖_F), the
// distance a 2×2 Jordan block's eigenvalue moves under a perturbation of
// size Rounding (larger blocks move further). |α| within it is zero within
// rounding. It returns (NaN, false) for a sparse spectrum.
func (s *Spectrum) AbscissaError() (tol float64, ill bool) {
	if len(s.Cond) == 0 {
		return math.NaN(), false
	}
	if s.absolute {
		return s.Rounding, false
	}
	fn := s.Rounding / roundoff.Threshold(len(s.Values), 1)
	return abscissaRounding(s, s.Rounding, fn)
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

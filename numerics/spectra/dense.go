package spectra

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
	"semiflow/numerics/roundoff"
)

// denser is implemented by operators that can produce their dense matrix.
type denser interface {
	ToDense() (*mat.Dense, error)
}

// maxDense is the largest dimension the dense methods accept: an n×n
// complex Schur form and its unitary factor take 32n² bytes.
const maxDense = 8000

// toDense returns A as a new n×n dense matrix. It panics with ErrShape if A
// is not square and returns an error if n exceeds maxDense.
func toDense(a linop.Operator) (*mat.Dense, error) {
	r, c := a.Dims()
	if r != c {
		panic(ErrShape)
	}
	// The matrix, a complex Schur form with its unitary factor, and
	// workspace: about 64n² bytes, asked first (formed in floating point,
	// so no order overflows it) so that an order no memory holds is
	// refused as such.
	if err := memguard.Bytes(64*float64(r)*float64(r), fmt.Sprintf("dense spectral analysis of order %d", r)); err != nil {
		return nil, err
	}
	if r > maxDense {
		return nil, numErr("dense method refused for n = %d > %d; use the sparse (Arnoldi) methods", r, maxDense)
	}
	if d, ok := a.(denser); ok {
		m, err := d.ToDense()
		if err == nil {
			return m, checkFinite(m)
		}
	}
	m := mat.NewDense(max(r, 1), max(r, 1), nil)
	if r == 0 {
		return &mat.Dense{}, nil
	}
	x := make([]float64, r)
	col := make([]float64, r)
	for j := 0; j < r; j++ {
		x[j] = 1
		a.Apply(col, x)
		x[j] = 0
		m.SetCol(j, col)
	}
	return m, checkFinite(m)
}

// checkFinite returns an error naming the first NaN or infinite entry of m:
// no spectral quantity of such a matrix means anything, and LAPACK's
// iterations would otherwise fail with an unrelated message.
func checkFinite(m *mat.Dense) error {
	r, c := m.Dims()
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			if v := m.At(i, j); math.IsNaN(v) || math.IsInf(v, 0) {
				return numErr("entry (%d, %d) of the operator is %v; spectral analysis needs finite entries", i, j, v)
			}
		}
	}
	return nil
}

// Weight is a weighted inner product ⟨x, y⟩_W = xᵀ W y with W = RᵀR
// symmetric positive definite, given through its factor R. The W-norm of A
// is the Euclidean norm of R A R⁻¹, so every weighted analysis transforms A
// to R A R⁻¹ first. linop.DiagWeight and linop.SPDWeight implement it.
type Weight interface {
	Len() int
	// Factor sets dst = R x (or Rᵀ x if trans).
	Factor(dst, x []float64, trans bool)
	// FactorSolve sets dst = R⁻¹ x (or R⁻ᵀ x if trans).
	FactorSolve(dst, x []float64, trans bool)
}

// weighted returns R A R⁻¹ as a dense matrix, or A itself if w is nil.
// It panics with ErrShape if w.Len() differs from the dimension of A.
func weighted(a *mat.Dense, w Weight) *mat.Dense {
	if w == nil {
		return a
	}
	n, _ := a.Dims()
	if w.Len() != n {
		panic(ErrShape)
	}
	// B = R A R⁻¹: first C = A R⁻¹ column by column, then B = R C.
	c := mat.NewDense(n, n, nil)
	e := make([]float64, n)
	col := make([]float64, n)
	acol := make([]float64, n)
	for j := 0; j < n; j++ {
		e[j] = 1
		w.FactorSolve(col, e, false)
		e[j] = 0
		mat.NewVecDense(n, acol).MulVec(a, mat.NewVecDense(n, col))
		w.Factor(col, acol, false)
		c.SetCol(j, col)
	}
	return c
}

// RoundingThreshold returns τ = n·u·‖B‖_F (roundoff.Threshold) for
// B = RAR⁻¹, or A itself when w is nil: the backward error of the dense
// spectral methods on A in that inner product, below which the sign of ω(A)
// (and of a well-conditioned α(A)) is not decided. A large sparse A without
// a weight is measured in its sparse form; otherwise the dense matrix is
// formed (with the memory guard of the dense methods). It panics with
// ErrShape if A is not square or w does not match it.
func RoundingThreshold(a linop.Operator, w Weight) (float64, error) {
	n, _ := a.Dims()
	if w == nil && n > largeGenerator {
		if csr, err := linop.ToCSR(a); err == nil {
			return roundoff.Threshold(n, normFrobCSR(csr)), nil
		}
	}
	m, err := toDense(a)
	if err != nil {
		return 0, err
	}
	return roundoff.Threshold(n, mat.Norm(weighted(m, w), 2)), nil
}

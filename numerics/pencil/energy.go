package pencil

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// symmetricDense returns the dense matrix of a after checking that it is
// symmetric to within 16 units of roundoff entry by entry (then it is made
// exactly symmetric, the mean of the two triangles); name names the matrix
// in the error, which wraps ErrNotDefinite.
func symmetricDense(a linop.Operator, name string) (*mat.SymDense, error) {
	n := square(a)
	if err := memguard.Dense(n, n, 2*memguard.RealBytes); err != nil {
		return nil, err
	}
	d, err := linop.ToDense(a)
	if err != nil {
		return nil, err
	}
	s := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			x, y := d.At(i, j), d.At(j, i)
			if math.Abs(x-y) > 16*0x1p-53*math.Max(math.Abs(x), math.Abs(y)) {
				return nil, fmt.Errorf("%w: %s is not symmetric: %s[%d, %d] = %.17g but %s[%d, %d] = %.17g", ErrNotDefinite, name, name, i, j, x, name, j, i, y)
			}
			s.SetSym(i, j, (x+y)/2)
		}
	}
	return s, nil
}

// spdWeight returns the weight xᵀAx of a symmetric positive definite A: its
// diagonal when A is diagonal, otherwise a dense Cholesky factorisation. An
// A that is not symmetric, or whose factorisation fails, gives an error
// wrapping ErrNotDefinite that names it.
func spdWeight(a linop.Operator, name string) (linop.Weight, error) {
	if d, ok := diagonalOf(a); ok {
		for i, v := range d {
			if !(v > 0) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("%w: %s is diagonal with %s[%d, %d] = %g, not positive", ErrNotDefinite, name, name, i, i, v)
			}
		}
		return linop.NewDiagWeight(d)
	}
	s, err := symmetricDense(a, name)
	if err != nil {
		return nil, err
	}
	w, err := linop.NewSPDWeight(s)
	if err != nil {
		return nil, fmt.Errorf("%w: %s is symmetric but not positive definite (its Cholesky factorisation fails)", ErrNotDefinite, name)
	}
	return w, nil
}

// diagonalOf returns the diagonal of a when a is diagonal (a Diag, or a
// sparse form with no off-diagonal entries).
func diagonalOf(a linop.Operator) ([]float64, bool) {
	if d, ok := a.(*linop.Diag); ok {
		return d.D, true
	}
	if m, err := linop.ToCSR(a); err == nil && isDiagonal(m) {
		return m.Diagonal(), true
	}
	return nil, false
}

// EnergyWeight returns W = diag(K, M), the weight of the energy inner
// product: E(x) = ½ xᵀWx = ½(uᵀKu + vᵀMv) for x = [u; v]. K and M must be
// symmetric positive definite (an error wrapping ErrNotDefinite says which
// is not); non-diagonal ones are factored densely (memory guard).
func (s *Second) EnergyWeight() (linop.Weight, error) {
	k, err := spdWeight(s.K, "K")
	if err != nil {
		return nil, err
	}
	m, err := spdWeight(s.M, "M")
	if err != nil {
		return nil, err
	}
	return linop.NewBlockWeight(k, m), nil
}

// Energy returns E(x) = ½(uᵀKu + vᵀMv) for x = [u; v], from one product
// with K and one with M.
func (s *Second) Energy(x []float64) float64 {
	n := s.n
	if len(x) != 2*n {
		panic(linop.ErrShape)
	}
	t := make([]float64, n)
	s.K.Apply(t, x[:n])
	e := dot(t, x[:n])
	s.M.Apply(t, x[n:])
	return (e + dot(t, x[n:])) / 2
}

// EnergyWeight returns W = M, the weight of the energy ½uᵀMu of
// M u' = K u. M must be symmetric positive definite.
func (a *Mass) EnergyWeight() (linop.Weight, error) { return spdWeight(a.M, "M") }

// Energy returns ½uᵀMu.
func (a *Mass) Energy(x []float64) float64 {
	if len(x) != a.n {
		panic(linop.ErrShape)
	}
	t := make([]float64, a.n)
	a.M.Apply(t, x)
	return dot(t, x) / 2
}

func dot(x, y []float64) float64 {
	var s float64
	for i, v := range x {
		s += v * y[i]
	}
	return s
}

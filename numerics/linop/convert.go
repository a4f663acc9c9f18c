package linop

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
	"semiflow/numerics/memguard"
)

// ToDense returns the matrix of a. Operators implementing Denser produce it
// directly; any other operator is applied to the unit vectors e_j, one
// column at a time. The memory guard refuses matrices too large for the
// machine with an error stating the size needed.
func ToDense(a Operator) (*mat.Dense, error) {
	if d, ok := a.(Denser); ok {
		return d.ToDense()
	}
	r, c := a.Dims()
	if err := memguard.DenseReal(r, c); err != nil {
		return nil, err
	}
	if r == 0 || c == 0 {
		return &mat.Dense{}, nil
	}
	m := mat.NewDense(r, c, nil)
	e := make([]float64, c)
	col := make([]float64, r)
	for j := 0; j < c; j++ {
		e[j] = 1
		a.Apply(col, e)
		e[j] = 0
		m.SetCol(j, col)
	}
	return m, nil
}

// ToCSR returns the sparse form of a if a implements Sparser, and an error
// wrapping ErrNotSparse otherwise.
func ToCSR(a Operator) (*CSR, error) {
	if s, ok := a.(Sparser); ok {
		return s.ToCSR()
	}
	return nil, fmt.Errorf("%w (%T)", ErrNotSparse, a)
}

// NormInf returns ‖A‖_∞ = max_i Σ_j |A_ij| and true when it can be computed
// exactly at the cost of one pass over the entries: for Dense, CSR, Diag,
// scalar multiples of these, and operators with a sparse form. Otherwise it
// returns (0, false).
func NormInf(a Operator) (float64, bool) { return norm(a, true) }

// Norm1 returns ‖A‖₁ = max_j Σ_i |A_ij| under the same conditions as NormInf.
func Norm1(a Operator) (float64, bool) { return norm(a, false) }

func norm(a Operator, inf bool) (float64, bool) {
	switch a := a.(type) {
	case *Dense:
		if inf {
			return mat.Norm(a.m, math.Inf(1)), true
		}
		return mat.Norm(a.m, 1), true
	case *CSR:
		if inf {
			return a.NormInf(), true
		}
		return a.Norm1(), true
	case *Diag:
		var n float64
		for _, v := range a.D {
			n = math.Max(n, math.Abs(v))
		}
		return n, true
	case *Scaled:
		n, ok := norm(a.A, inf)
		return math.Abs(a.Alpha) * n, ok
	case *Adjoint:
		if a.W == nil {
			n, ok := norm(a.A, !inf)
			return n, ok
		}
	}
	if s, ok := a.(Sparser); ok {
		m, err := s.ToCSR()
		if err != nil {
			return 0, false
		}
		return norm(m, inf)
	}
	return 0, false
}

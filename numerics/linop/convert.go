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
	case *KronSum:
		return kronSumNorm(a, inf)
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

// kronNormMaxPairs bounds the order nx·ny of a Kronecker sum whose norm
// kronSumNorm evaluates (one pass over the index pairs).
const kronNormMaxPairs = 1 << 26

// kronSumNorm returns ‖X ⊕ Y‖∞ (‖·‖₁ when inf is false) from the factors,
// without forming X ⊗ I + I ⊗ Y: row (i, j) of X ⊕ Y holds X_ik (k ≠ i),
// Y_jl (l ≠ j) and the diagonal X_ii + Y_jj, so its absolute sum is
// r_X(i) + r_Y(j) + |X_ii + Y_jj| with r the off-diagonal absolute row sums
// (column sums for ‖·‖₁). It returns false when a factor has no sparse
// form or nx·ny exceeds kronNormMaxPairs.
func kronSumNorm(k *KronSum, inf bool) (float64, bool) {
	nx, ny := k.sizes()
	if float64(nx)*float64(ny) > kronNormMaxPairs {
		return 0, false
	}
	offX, dX, ok := offDiagSums(k.X, inf)
	if !ok {
		return 0, false
	}
	offY, dY, ok := offDiagSums(k.Y, inf)
	if !ok {
		return 0, false
	}
	var n float64
	for i := range offX {
		for j := range offY {
			s := offX[i] + offY[j] + math.Abs(dX[i]+dY[j])
			if s > n || math.IsNaN(s) {
				n = s
			}
		}
	}
	return n, true
}

// offDiagSums returns the off-diagonal absolute row sums (column sums when
// rows is false) and the diagonal of a square operator with a dense or
// sparse form.
func offDiagSums(a Operator, rows bool) (off, diag []float64, ok bool) {
	var c *CSR
	switch t := a.(type) {
	case *Dense:
		c = CSRFromDense(t.m, 0)
	default:
		var err error
		if c, err = ToCSR(a); err != nil {
			return nil, nil, false
		}
	}
	n, _ := c.Dims()
	off, diag = make([]float64, n), make([]float64, n)
	for i := 0; i < n; i++ {
		for p := c.RowPtr[i]; p < c.RowPtr[i+1]; p++ {
			j, v := c.ColIdx[p], c.Val[p]
			switch {
			case i == j:
				diag[i] += v
			case rows:
				off[i] += math.Abs(v)
			default:
				off[j] += math.Abs(v)
			}
		}
	}
	return off, diag, true
}

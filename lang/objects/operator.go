package objects

import (
	"fmt"

	"gonum.org/v1/gonum/mat"

	"semiflow/lang/value"
	"semiflow/numerics/linop"
)

// Operator is a language operator: a real linear map with the grid it acts
// on (nil for explicit matrices) and a label describing how it was built.
type Operator struct {
	Op    linop.Operator
	Grid  *Grid // may be nil
	Label string
}

func (a *Operator) Type() string { return "operator" }

// Dims returns the dimensions of the operator.
func (a *Operator) Dims() (r, c int) { return a.Op.Dims() }

func (a *Operator) String() string {
	r, c := a.Op.Dims()
	s := fmt.Sprintf("operator %s: %d×%d, %s", a.Label, r, c, structure(a.Op))
	if a.Grid != nil {
		s += "\n  on " + a.Grid.describe()
	}
	return s
}

// structure describes the storage of op.
func structure(op linop.Operator) string {
	switch t := op.(type) {
	case *linop.CSR:
		return fmt.Sprintf("sparse, %d nonzeros", t.NNZ())
	case *linop.Dense:
		return "dense"
	case *linop.KronSum:
		return "Kronecker sum"
	case *linop.Diag:
		return "diagonal"
	}
	return "matrix-free"
}

// AsOperator converts v to an operator: an *Operator is returned as it is,
// a square *value.Matrix is wrapped (copied) as a dense operator. Other
// values give a TypeError, a non-square matrix a ValueError.
func AsOperator(v value.Value) (*Operator, error) {
	switch t := v.(type) {
	case *Operator:
		return t, nil
	case *value.Matrix:
		if t.Rows != t.Cols {
			return nil, value.ValueErrorf("an operator needs a square matrix, not %d×%d", t.Rows, t.Cols)
		}
		return FromMatrix(t), nil
	}
	return nil, value.TypeErrorf("needs an operator or a square matrix, not %s", value.TypeName(v))
}

// FromMatrix returns the dense operator with the entries of m (copied).
func FromMatrix(m *value.Matrix) *Operator {
	d := mat.NewDense(m.Rows, m.Cols, append([]float64(nil), m.Data...))
	return &Operator{Op: linop.NewDense(d), Label: "matrix"}
}

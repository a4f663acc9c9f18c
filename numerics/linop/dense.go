package linop

import (
	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"
)

// Dense is an explicit r×c matrix acting by y = A x.
type Dense struct {
	m *mat.Dense
}

// NewDense wraps m without copying; later changes to m change the operator.
// NewDense panics if m is nil.
func NewDense(m *mat.Dense) *Dense {
	if m == nil {
		panic("linop: NewDense of nil matrix")
	}
	return &Dense{m: m}
}

// Mat returns the wrapped matrix (not a copy).
func (d *Dense) Mat() *mat.Dense { return d.m }

// Dims returns the dimensions of the matrix.
func (d *Dense) Dims() (r, c int) { return d.m.Dims() }

// Apply sets dst = A x. It panics with ErrShape on a length mismatch.
func (d *Dense) Apply(dst, x []float64) {
	r, c := d.m.Dims()
	if len(x) != c || len(dst) != r {
		panic(ErrShape)
	}
	blas64.Gemv(blas.NoTrans, 1, d.m.RawMatrix(), vec(x), 0, vec(dst))
}

// ApplyT sets dst = Aᵀ x. It panics with ErrShape on a length mismatch.
func (d *Dense) ApplyT(dst, x []float64) {
	r, c := d.m.Dims()
	if len(x) != r || len(dst) != c {
		panic(ErrShape)
	}
	blas64.Gemv(blas.Trans, 1, d.m.RawMatrix(), vec(x), 0, vec(dst))
}

// ToDense returns a copy of the matrix.
func (d *Dense) ToDense() (*mat.Dense, error) { return mat.DenseCopyOf(d.m), nil }

// ToCSR returns the nonzero entries of the matrix in CSR form.
func (d *Dense) ToCSR() (*CSR, error) { return CSRFromDense(d.m, 0), nil }

func vec(x []float64) blas64.Vector { return blas64.Vector{N: len(x), Inc: 1, Data: x} }

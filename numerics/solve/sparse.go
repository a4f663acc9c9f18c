package solve

import (
	"context"

	"semiflow/numerics/linop"
)

// newSparse factors zI − A for a sparse A. Until the sparse LU lands this
// uses the dense complex LU (guarded by memguard).
func newSparse(ctx context.Context, a linop.Operator, csr *linop.CSR, z complex128) (ShiftedSolver, error) {
	d, err := csr.ToDense()
	if err != nil {
		return nil, err
	}
	n := csr.Rows
	return NewZDenseShifted(n, flat(d.RawMatrix().Data, d.RawMatrix().Stride, n), z)
}

// Package linop defines real linear operators on R^n and their structured
// implementations (dense, sparse CSR, Kronecker sums, sums, scalar multiples,
// products, diagonal coefficient multiplications, adjoints). A complex
// operator B + iC is carried as its real form [B −C; C B] (Complex).
//
// Conventions shared by every numerics package:
//
//   - An Operator is a real linear map A : R^c → R^r with Dims() = (r, c).
//   - Apply(dst, x) sets dst = A x; ApplyT(dst, x) sets dst = Aᵀ x. dst and x
//     must not alias. A length mismatch is a programming error and panics
//     with ErrShape; numerical trouble is returned as an error value.
//   - On a 2-D tensor grid with nx × ny points the vector index is
//     k = ix*ny + iy (row-major, y fastest). A Kronecker sum X ⊕ Y acting on
//     such vectors is X ⊗ I_ny + I_nx ⊗ Y, so e^{t(X⊕Y)} = e^{tX} ⊗ e^{tY}
//     and, with U the nx × ny matrix of values, (e^{tX} ⊗ e^{tY}) vec(U) =
//     e^{tX} U e^{tY}ᵀ.
package linop

import (
	"errors"

	_ "semiflow/numerics/gemm" // registers the BLAS every dense computation uses
)

// ErrShape is the panic value for operands whose dimensions do not agree.
var ErrShape = errors.New("linop: dimension mismatch")

// Operator is a real linear map A : R^c → R^r.
type Operator interface {
	// Dims returns the number of rows r and columns c.
	Dims() (r, c int)
	// Apply sets dst = A x. len(x) must be c and len(dst) r.
	Apply(dst, x []float64)
	// ApplyT sets dst = Aᵀ x. len(x) must be r and len(dst) c.
	ApplyT(dst, x []float64)
}

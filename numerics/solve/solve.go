// Package solve factors shifted operators zI − A for complex z and solves
// (zI − A) x = b for many right-hand sides with one factorisation.
//
// Four direct methods are provided, because gonum has no complex or banded
// LU and no sparse matrices:
//
//   - Band: LU with partial pivoting of a banded matrix in LAPACK gbtrf
//     storage, real or complex, for 1-D operators (O(n·kl·(kl+ku)) work).
//   - Supernodal: sparse LU of zI − A (multifrontal, Duff & Reid, ACM
//     TOMS 1983) on the fill-reducing order — approximate minimum degree
//     (Amestoy, Davis & Duff 1996) or nested dissection (by grid geometry,
//     George 1973, for operators on tensor grids; by level structures
//     otherwise) — that predicts the smaller fill; elimination tree,
//     column counts and relaxed supernodes; fronts factored by blocked
//     kernels on the project's matrix product; real arithmetic when z is
//     real; independent subtrees on separate cores; blocked solves for
//     several right-hand sides. Pivots are chosen inside each supernode's
//     diagonal block; weak ones make solves refine, and a negligible one
//     falls back to
//   - Multifrontal: the frontal LU with threshold pivoting and delayed
//     pivots, which pivots across supernodes (FrontalMethod asks for it).
//     SparseLU, a left-looking LU with free partial pivoting
//     (Gilbert–Peierls, SIAM J. Sci. Stat. Comput. 1988), is available
//     through FactorSparse as an independent sparse factorisation.
//   - ZDense: dense complex LU with partial pivoting for dense operators,
//     guarded by memguard.
//
// NewShifted chooses among them from the operator's structure. A shift at
// which zI − A is singular to working precision is reported as an error
// wrapping ErrSingular that names z.
package solve

import (
	"errors"
	"fmt"
	"math"

	"semiflow/numerics/linop"
)

// ErrSingular is matched (errors.Is) by every singularity error.
var ErrSingular = errors.New("solve: matrix is singular to working precision")

// ErrShape is the panic value for vectors of the wrong length.
var ErrShape = errors.New("solve: dimension mismatch")

// SingularError reports a zero (or negligible) pivot.
type SingularError struct {
	Z      complex128 // the shift, when the matrix is zI − A
	Shift  bool       // whether Z is meaningful
	Pivot  int        // index of the failing pivot (0-based)
	N      int        // order of the matrix
	Method string     // "band", "sparse", "dense"
}

func (e *SingularError) Error() string {
	if e.Shift {
		return fmt.Sprintf("solve: zI − A is singular to working precision at z = %s (%s LU, pivot %d of %d); z is (close to) an eigenvalue",
			FormatComplex(e.Z), e.Method, e.Pivot+1, e.N)
	}
	return fmt.Sprintf("solve: matrix is singular to working precision (%s LU, pivot %d of %d)", e.Method, e.Pivot+1, e.N)
}

// Is reports whether target is ErrSingular.
func (e *SingularError) Is(target error) bool { return target == ErrSingular }

// FormatComplex renders z as "a+bi" with up to 6 significant digits.
func FormatComplex(z complex128) string {
	re, im := real(z), imag(z)
	if im == 0 {
		return fmt.Sprintf("%.6g", re)
	}
	sign := "+"
	if im < 0 || math.Signbit(im) {
		sign = "-"
		im = -im
	}
	return fmt.Sprintf("%.6g%s%.6gi", re, sign, im)
}

// pivotTol is the relative size below which a pivot counts as zero:
// |u_jj| ≤ pivotTol · n · max|a_ij| (a backward-stable LU then cannot
// distinguish the matrix from a singular one).
const pivotTol = 0x1p-52

func withShift(err error, z complex128) error {
	var s *SingularError
	if errors.As(err, &s) {
		s.Z, s.Shift = z, true
	}
	return err
}

// ShiftedSolver is a factorisation of zI − A for one complex z, reusable
// for any number of right-hand sides. The solvers of this package are safe
// for concurrent calls of Solve and SolveH (the factors are only read).
type ShiftedSolver interface {
	// Solve sets dst = (zI − A)⁻¹ b. It panics with ErrShape on a length
	// mismatch; dst and b may be the same slice.
	Solve(dst, b []complex128) error
}

// AdjointSolver is implemented by every solver of this package: SolveH
// sets dst = (zI − A)⁻ᴴ b, the solve with the conjugate transpose
// (z̄I − Aᵀ), as inverse Lanczos iterations for resolvent norms need.
type AdjointSolver interface {
	ShiftedSolver
	SolveH(dst, b []complex128) error
}

func abs1(z complex128) float64 { return math.Abs(real(z)) + math.Abs(imag(z)) }

// Residual returns b − (zI − A)x, with the real operator A applied to the
// real and imaginary parts of x separately.
func Residual(a linop.Operator, z complex128, x, b []complex128) []complex128 {
	n := len(x)
	xr, xi := make([]float64, n), make([]float64, n)
	for i, v := range x {
		xr[i], xi[i] = real(v), imag(v)
	}
	ar, ai := make([]float64, n), make([]float64, n)
	a.Apply(ar, xr)
	a.Apply(ai, xi)
	r := make([]complex128, n)
	for i := range r {
		r[i] = b[i] - (z*x[i] - complex(ar[i], ai[i]))
	}
	return r
}

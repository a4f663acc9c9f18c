package spectra

import (
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/gemm"
	"semiflow/numerics/linop"
)

// Schur is a complex Schur factorisation A = Z T Zᴴ of a real square
// matrix: T is upper triangular with the eigenvalues of A on its diagonal
// and Z is unitary. Both are stored row-major, T[i*N+j] = T_ij.
//
// It is computed without balancing (a diagonal similarity would change
// norms, and with them pseudospectra and resolvent norms): real Hessenberg
// reduction and the real Schur form by the Francis QR algorithm
// (gemm.RealSchur: gonum's Dgehrd, Dorghr and Dhseqr in the pure-Go build,
// the system LAPACK's dgees — permutation only, no scaling — in the
// openblas build), then each standardised 2×2 block [a b; c a] with bc < 0 is
// triangularised by the unitary rotation G = [x₁ −x̄₂; x₂ x̄₁] whose first
// column x is the unit eigenvector of the block for λ = a + i√(−bc).
type Schur struct {
	N int
	T []complex128
	Z []complex128
}

// NewSchur computes the complex Schur form of A. It panics with ErrShape
// if A is not square, and returns an error if the QR algorithm does not
// converge or A has non-finite entries.
//
// For a complex operator (linop.Complex, A = B + iC) it is the Schur form of
// the n×n complex A, computed by the complex QR algorithm (complexSchur).
func NewSchur(a linop.Operator) (*Schur, error) {
	if b, c, ok, err := complexParts(a); ok || err != nil {
		if err != nil {
			return nil, err
		}
		h, n, err := complexRowMajor(b, c)
		if err != nil {
			return nil, err
		}
		return complexSchur(nil, h, n)
	}
	m, err := toDense(a)
	if err != nil {
		return nil, err
	}
	return schurOf(m)
}

// NewSchurWeighted computes the complex Schur form of B = R A R⁻¹ for the
// weight W = RᵀR, so that σ_min(zI − B) = 1/‖(zI − A)⁻¹‖_W: pseudospectra,
// resolvent norms and abscissae from it are those of the W-norm. It panics
// with ErrShape on a size mismatch.
func NewSchurWeighted(a linop.Operator, w Weight) (*Schur, error) {
	m, err := toDense(a)
	if err != nil {
		return nil, err
	}
	return schurOf(weighted(m, w))
}

func schurOf(m *mat.Dense) (*Schur, error) {
	n, _ := m.Dims()
	s := &Schur{N: n}
	if n == 0 {
		return s, nil
	}
	if n == 1 {
		v := m.At(0, 0)
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, numErr("matrix entry (0,0) is %v", v)
		}
		s.T, s.Z = []complex128{complex(v, 0)}, []complex128{1}
		return s, nil
	}
	h := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			v := m.At(i, j)
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, numErr("matrix entry (%d,%d) is %v", i, j, v)
			}
			h[i*n+j] = v
		}
	}
	q := make([]float64, n*n)
	wr := make([]float64, n)
	wi := make([]float64, n)
	if unconv := gemm.RealSchur(n, h, q, wr, wi); unconv > 0 {
		return nil, numErr("Schur QR algorithm did not converge (%d eigenvalues unconverged)", unconv)
	}
	t := make([]complex128, n*n)
	z := make([]complex128, n*n)
	for i := range h {
		t[i] = complex(h[i], 0)
		z[i] = complex(q[i], 0)
	}
	for k := 0; k < n-1; k++ {
		if h[(k+1)*n+k] == 0 {
			continue
		}
		// Standardised 2×2 block [a b; c d] with eigenvalues wr ± i wi.
		a, b := h[k*n+k], h[k*n+k+1]
		lam := complex(wr[k], math.Abs(wi[k]))
		x1, x2 := complex(b, 0), lam-complex(a, 0)
		nx := math.Hypot(cmplx.Abs(x1), cmplx.Abs(x2))
		x1, x2 = x1/complex(nx, 0), x2/complex(nx, 0)
		// T ← Gᴴ T on rows k, k+1 (columns ≥ k).
		for j := k; j < n; j++ {
			tk, tk1 := t[k*n+j], t[(k+1)*n+j]
			t[k*n+j] = cmplx.Conj(x1)*tk + cmplx.Conj(x2)*tk1
			t[(k+1)*n+j] = -x2*tk + x1*tk1
		}
		// T ← T G on columns k, k+1 (rows ≤ k+1), Z ← Z G.
		for i := 0; i <= k+1; i++ {
			tk, tk1 := t[i*n+k], t[i*n+k+1]
			t[i*n+k] = tk*x1 + tk1*x2
			t[i*n+k+1] = -tk*cmplx.Conj(x2) + tk1*cmplx.Conj(x1)
		}
		for i := 0; i < n; i++ {
			zk, zk1 := z[i*n+k], z[i*n+k+1]
			z[i*n+k] = zk*x1 + zk1*x2
			z[i*n+k+1] = -zk*cmplx.Conj(x2) + zk1*cmplx.Conj(x1)
		}
		t[(k+1)*n+k] = 0
		k++
	}
	s.T, s.Z = t, z
	return s, nil
}

// Eigenvalues returns the diagonal of T, the eigenvalues of A.
func (s *Schur) Eigenvalues() []complex128 {
	ev := make([]complex128, s.N)
	for i := range ev {
		ev[i] = s.T[i*s.N+i]
	}
	return ev
}

// solveShifted sets x = (zI − A)⁻¹ b = Z (zI − T)⁻¹ Zᴴ b. It returns an
// error if zI − T has a zero on its diagonal. It panics with ErrShape on a
// length mismatch.
func (s *Schur) solveShifted(x, b []complex128, z complex128) error {
	n := s.N
	if len(x) != n || len(b) != n {
		panic(ErrShape)
	}
	y := make([]complex128, n)
	for i := 0; i < n; i++ { // y = Zᴴ b
		var acc complex128
		for k := 0; k < n; k++ {
			acc += cmplx.Conj(s.Z[k*n+i]) * b[k]
		}
		y[i] = acc
	}
	w := make([]complex128, n)
	if !backSolve(s.T, n, z, w, y) {
		return numErr("zI − A is singular at z = %v", z)
	}
	for i := 0; i < n; i++ {
		var acc complex128
		for k := 0; k < n; k++ {
			acc += s.Z[i*n+k] * w[k]
		}
		x[i] = acc
	}
	return nil
}

// backSolve sets w = (zI − T)⁻¹ y for upper-triangular T, returning false
// if a diagonal entry z − T_ii is zero.
func backSolve(t []complex128, n int, z complex128, w, y []complex128) bool {
	for i := n - 1; i >= 0; i-- {
		acc := y[i]
		row := t[i*n+i+1 : i*n+n]
		ws := w[i+1 : n]
		for j, tij := range row {
			acc += tij * ws[j]
		}
		d := z - t[i*n+i]
		if d == 0 {
			return false
		}
		w[i] = acc / d
	}
	return true
}

// eigCond returns the condition number ‖x‖‖y‖/|yᴴx| of the eigenvalue
// λ = T_kk, x and y its right and left eigenvectors, from the triangular
// factor (a unitary similarity keeps it): x has x_k = 1 and x_j = 0 for
// j > k, y has y_k = 1 and y_j = 0 for j < k, so yᴴx = 1. An eigenvalue
// repeated exactly on the diagonal whose back substitution meets a zero
// pivot with a non-zero right-hand side gives +Inf (defective).
func (s *Schur) eigCond(k int) float64 {
	n, t := s.N, s.T
	lam := t[k*n+k]
	x := make([]complex128, k+1)
	x[k] = 1
	nx := 1.0
	for i := k - 1; i >= 0; i-- {
		var acc complex128
		for j := i + 1; j <= k; j++ {
			acc += t[i*n+j] * x[j]
		}
		d := t[i*n+i] - lam
		switch {
		case acc == 0:
			x[i] = 0
		case d == 0:
			return math.Inf(1)
		default:
			x[i] = -acc / d
		}
		nx += real(x[i])*real(x[i]) + imag(x[i])*imag(x[i])
	}
	y := make([]complex128, n-k)
	y[0] = 1
	ny := 1.0
	for j := k + 1; j < n; j++ {
		var acc complex128
		for i := k; i < j; i++ {
			acc += cmplx.Conj(t[i*n+j]) * y[i-k]
		}
		d := cmplx.Conj(t[j*n+j] - lam)
		switch {
		case acc == 0:
			y[j-k] = 0
		case d == 0:
			return math.Inf(1)
		default:
			y[j-k] = -acc / d
		}
		ny += real(y[j-k])*real(y[j-k]) + imag(y[j-k])*imag(y[j-k])
	}
	return math.Sqrt(nx) * math.Sqrt(ny)
}

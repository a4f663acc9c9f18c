// Package pencil holds the evolution operators of models written with a
// mass matrix, kept in the structure the model gives them:
//
//   - Mass, the generator A = M⁻¹K of M u' = K u, and
//   - Second, the generator G = [0 I; −M⁻¹K −M⁻¹C] of the first-order form
//     of M u″ + C u' + K u = 0 on the state x = [u; u'].
//
// Neither forms M⁻¹K: a product A x is one product with K (and C) and one
// solve with M, factored once by its own structure (diagonal, band LU,
// sparse LU, dense LU). Shifted solves (zI − A)⁻¹ — for shift-and-invert,
// contour integrals, resolvent powers and eigenvalue searches — factor the
// pencil zM − K, or the quadratic pencil z²M + zC + K, sparsely: both
// operators implement solve.Shifter, so every routine that asks the solve
// package for a shifted solver gets these. The sparse or dense form of A is
// assembled only on demand (ToCSR when M is diagonal; the dense form by
// solves with M, column by column, for the dense analyses).
//
// The energy inner product of the state, E(x) = ½(vᵀMv + uᵀKu) for
// x = [u; v] (½uᵀMu for M u' = K u), is offered as a weight (EnergyWeight),
// so growth, numerical abscissae and dissipativity can be measured in it:
// with M, K symmetric positive definite and C positive semidefinite, G is
// dissipative in energy (d/dt E = −u'ᵀCu' ≤ 0).
//
// Dense spectra take the symmetric definite route where the matrices allow
// it (Cholesky reduction M = LLᵀ, then L⁻¹KL⁻ᵀ by a symmetric
// eigensolver), and the quadratic eigenproblem λ²M + λC + K in its
// linearised (companion) form after the same scaling.
package pencil

import (
	"context"
	"errors"
	"fmt"
	"sync"

	"semiflow/numerics/linop"
	"semiflow/numerics/solve"
)

// Mass is A = M⁻¹K, the generator of M u' = K u, for square M and K of one
// order with M invertible.
type Mass struct {
	M, K linop.Operator
	n    int
	mf   *massFactor
}

// NewMass factors M and returns M⁻¹K. It panics with linop.ErrShape if M
// or K is not square or their orders differ; it returns an error wrapping
// ErrSingularMass for a singular M, or from the memory guard or ctx.
func NewMass(ctx context.Context, m, k linop.Operator) (*Mass, error) {
	n := square(m)
	if square(k) != n {
		panic(linop.ErrShape)
	}
	mf, err := factorMass(ctx, m)
	if err != nil {
		return nil, err
	}
	return &Mass{M: m, K: k, n: n, mf: mf}, nil
}

func square(a linop.Operator) int {
	r, c := a.Dims()
	if r != c {
		panic(linop.ErrShape)
	}
	return r
}

// Dims returns (n, n).
func (a *Mass) Dims() (r, c int) { return a.n, a.n }

// Apply sets dst = M⁻¹(K x).
func (a *Mass) Apply(dst, x []float64) {
	a.K.Apply(dst, x)
	a.mf.solve(dst, dst, false)
}

// ApplyT sets dst = Kᵀ(M⁻ᵀ x).
func (a *Mass) ApplyT(dst, x []float64) {
	t := getBuf(a.n)
	a.mf.solve(*t, x, true)
	a.K.ApplyT(dst, *t)
	putBuf(t)
}

// ScratchFloats counts one vector of order n and K's own needs.
func (a *Mass) ScratchFloats() int { return a.n*(1+linop.Scratch(a.K)) + 2*a.n }

// MassMethod names the factorisation of M.
func (a *Mass) MassMethod() string { return a.mf.method }

// Structure describes the operator for displays.
func (a *Mass) Structure() string {
	return fmt.Sprintf("M⁻¹K of M u' = K u: products with K, solves with M (%s)", a.mf.method)
}

// ToCSR returns M⁻¹K in sparse form when M is diagonal and K has a sparse
// form (the rows of K divided by M's diagonal); otherwise an error wrapping
// linop.ErrNotSparse (M⁻¹K is then generally dense).
func (a *Mass) ToCSR() (*linop.CSR, error) {
	if a.mf.diag == nil {
		return nil, fmt.Errorf("%w (M⁻¹K with a non-diagonal mass matrix)", linop.ErrNotSparse)
	}
	k, err := linop.ToCSR(a.K)
	if err != nil {
		return nil, err
	}
	for i := 0; i < k.Rows; i++ {
		for p := k.RowPtr[i]; p < k.RowPtr[i+1]; p++ {
			k.Val[p] /= a.mf.diag[i]
		}
	}
	return k, nil
}

// NewShifted factors zI − M⁻¹K = M⁻¹(zM − K) through the pencil zM − K
// (see factorCombination), never forming M⁻¹K.
func (a *Mass) NewShifted(ctx context.Context, z complex128, opt solve.Options) (solve.ShiftedSolver, error) {
	p, err := factorCombination(ctx, a.n, []term{{z, a.M}, {-1, a.K}}, opt.Progress)
	if err != nil {
		return nil, shiftErr(err, z)
	}
	return &massShifted{a: a, p: p}, nil
}

// shiftErr names the shift in a singularity error.
func shiftErr(err error, z complex128) error {
	var s *solve.SingularError
	if errors.As(err, &s) {
		s.Z, s.Shift = z, true
	}
	return err
}

type massShifted struct {
	a *Mass
	p *combined
}

// Solve sets dst = (zI − M⁻¹K)⁻¹ b = (zM − K)⁻¹ M b.
func (s *massShifted) Solve(dst, b []complex128) error {
	t := make([]complex128, len(b))
	applyC(s.a.M, t, b, false)
	return s.p.Solve(dst, t)
}

// SolveH sets dst = (zI − M⁻¹K)⁻ᴴ b = Mᵀ (zM − K)⁻ᴴ b.
func (s *massShifted) SolveH(dst, b []complex128) error {
	t := make([]complex128, len(b))
	if err := s.p.SolveH(t, b); err != nil {
		return err
	}
	applyC(s.a.M, dst, t, true)
	return nil
}

// Second is G = [0 I; −M⁻¹K −M⁻¹C], the generator of the first-order form
// x' = G x of M u″ + C u' + K u = 0 with x = [u; v], v = u'. C may be nil
// (no damping).
type Second struct {
	M, C, K linop.Operator
	n       int
	mf      *massFactor
}

// NewSecond factors M and returns G of order 2n. It panics with
// linop.ErrShape if M, C (when not nil) or K is not square or their orders
// differ; it returns an error wrapping ErrSingularMass for a singular M, or
// from the memory guard or ctx.
func NewSecond(ctx context.Context, m, c, k linop.Operator) (*Second, error) {
	n := square(m)
	if square(k) != n || (c != nil && square(c) != n) {
		panic(linop.ErrShape)
	}
	mf, err := factorMass(ctx, m)
	if err != nil {
		return nil, err
	}
	return &Second{M: m, C: c, K: k, n: n, mf: mf}, nil
}

// Dims returns (2n, 2n).
func (s *Second) Dims() (r, c int) { return 2 * s.n, 2 * s.n }

// N returns n, the number of displacements.
func (s *Second) N() int { return s.n }

// MassMethod names the factorisation of M.
func (s *Second) MassMethod() string { return s.mf.method }

// Structure describes the operator for displays.
func (s *Second) Structure() string {
	d, p := "M u'' + C u' + K u = 0", "K and C"
	if s.C == nil {
		d, p = "M u'' + K u = 0", "K"
	}
	return fmt.Sprintf("first-order form of %s on [u; u'] (n = %d): products with %s, solves with M (%s)", d, s.n, p, s.mf.method)
}

// Apply sets dst = [v; −M⁻¹(K u + C v)] for x = [u; v].
func (s *Second) Apply(dst, x []float64) {
	n := s.n
	if len(x) != 2*n || len(dst) != 2*n {
		panic(linop.ErrShape)
	}
	u, v := x[:n], x[n:]
	du, dv := dst[:n], dst[n:]
	s.K.Apply(dv, u)
	if s.C != nil {
		t := getBuf(n)
		s.C.Apply(*t, v)
		for i, w := range *t {
			dv[i] += w
		}
		putBuf(t)
	}
	s.mf.solve(dv, dv, false)
	for i := range dv {
		dv[i] = -dv[i]
	}
	copy(du, v)
}

// ApplyT sets dst = Gᵀ[a; b] = [−Kᵀw; a − Cᵀw] with w = M⁻ᵀ b.
func (s *Second) ApplyT(dst, x []float64) {
	n := s.n
	if len(x) != 2*n || len(dst) != 2*n {
		panic(linop.ErrShape)
	}
	a, b := x[:n], x[n:]
	du, dv := dst[:n], dst[n:]
	w := getBuf(n)
	defer putBuf(w)
	s.mf.solve(*w, b, true)
	s.K.ApplyT(du, *w)
	for i := range du {
		du[i] = -du[i]
	}
	if s.C != nil {
		s.C.ApplyT(dv, *w)
		for i := range dv {
			dv[i] = a[i] - dv[i]
		}
	} else {
		copy(dv, a)
	}
}

// ScratchFloats counts one vector of order n and the needs of K and C.
func (s *Second) ScratchFloats() int {
	k := linop.Scratch(s.K)
	if s.C != nil {
		k = max(k, linop.Scratch(s.C))
	}
	return s.n*(1+k) + 2*s.n
}

// ToCSR returns G in sparse form when M is diagonal and K and C have sparse
// forms; otherwise an error wrapping linop.ErrNotSparse.
func (s *Second) ToCSR() (*linop.CSR, error) {
	if s.mf.diag == nil {
		return nil, fmt.Errorf("%w (M⁻¹K with a non-diagonal mass matrix)", linop.ErrNotSparse)
	}
	scaled := func(a linop.Operator) (linop.Operator, error) {
		m, err := linop.ToCSR(a)
		if err != nil {
			return nil, err
		}
		for i := 0; i < m.Rows; i++ {
			for p := m.RowPtr[i]; p < m.RowPtr[i+1]; p++ {
				m.Val[p] /= -s.mf.diag[i]
			}
		}
		return m, nil
	}
	k, err := scaled(s.K)
	if err != nil {
		return nil, err
	}
	var c linop.Operator
	if s.C != nil {
		if c, err = scaled(s.C); err != nil {
			return nil, err
		}
	}
	n := s.n
	return linop.NewBlock([][]linop.Operator{{nil, linop.Identity(n)}, {k, c}}, []int{n, n}, []int{n, n}).ToCSR()
}

// NewShifted factors the quadratic pencil Q(z) = z²M + zC + K, which gives
// (zI − G)⁻¹ without forming G: for (zI − G)[x; y] = [a; b],
// Q(z) x = M b + (zM + C) a and y = z x − a.
func (s *Second) NewShifted(ctx context.Context, z complex128, opt solve.Options) (solve.ShiftedSolver, error) {
	p, err := factorCombination(ctx, s.n, []term{{z * z, s.M}, {z, s.C}, {1, s.K}}, opt.Progress)
	if err != nil {
		return nil, shiftErr(err, z)
	}
	return &secondShifted{s: s, p: p, z: z}, nil
}

type secondShifted struct {
	s *Second
	p *combined
	z complex128
}

// Solve sets dst = (zI − G)⁻¹ b; dst and b may be the same slice.
func (q *secondShifted) Solve(dst, b []complex128) error {
	n, z := q.s.n, q.z
	if len(dst) != 2*n || len(b) != 2*n {
		panic(solve.ErrShape)
	}
	a := append([]complex128(nil), b[:n]...)
	bb := append([]complex128(nil), b[n:]...)
	rhs := make([]complex128, n)
	t := make([]complex128, n)
	for i := range t {
		t[i] = bb[i] + z*a[i]
	}
	applyC(q.s.M, rhs, t, false) // M b + z M a
	if q.s.C != nil {
		applyC(q.s.C, t, a, false)
		for i := range rhs {
			rhs[i] += t[i]
		}
	}
	x := dst[:n]
	if err := q.p.Solve(x, rhs); err != nil {
		return err
	}
	for i := range a {
		dst[n+i] = z*x[i] - a[i]
	}
	return nil
}

// SolveH sets dst = (zI − G)⁻ᴴ b: with Q(z)ᴴ w = a + z̄ b, the result is
// [(z̄Mᵀ + Cᵀ) w − b; Mᵀ w]. dst and b may be the same slice.
func (q *secondShifted) SolveH(dst, b []complex128) error {
	n := q.s.n
	zc := complex(real(q.z), -imag(q.z))
	if len(dst) != 2*n || len(b) != 2*n {
		panic(solve.ErrShape)
	}
	bb := append([]complex128(nil), b[n:]...)
	w := make([]complex128, n)
	for i := range w {
		w[i] = b[i] + zc*bb[i]
	}
	if err := q.p.SolveH(w, w); err != nil {
		return err
	}
	mw := make([]complex128, n)
	applyC(q.s.M, mw, w, true)
	x := dst[:n]
	for i := range x {
		x[i] = zc*mw[i] - bb[i]
	}
	if q.s.C != nil {
		cw := make([]complex128, n)
		applyC(q.s.C, cw, w, true)
		for i := range x {
			x[i] += cw[i]
		}
	}
	copy(dst[n:], mw)
	return nil
}

// applyC sets dst = A x (or Aᵀ x) for complex x, a real operator applied to
// the real and imaginary parts.
func applyC(a linop.Operator, dst, x []complex128, trans bool) {
	n := len(x)
	xr, xi := make([]float64, n), make([]float64, n)
	for i, v := range x {
		xr[i], xi[i] = real(v), imag(v)
	}
	yr, yi := make([]float64, len(dst)), make([]float64, len(dst))
	if trans {
		a.ApplyT(yr, xr)
		a.ApplyT(yi, xi)
	} else {
		a.Apply(yr, xr)
		a.Apply(yi, xi)
	}
	for i := range dst {
		dst[i] = complex(yr[i], yi[i])
	}
}

var bufPool sync.Pool

func getBuf(n int) *[]float64 {
	if b, ok := bufPool.Get().(*[]float64); ok && cap(*b) >= n {
		*b = (*b)[:n]
		return b
	}
	b := make([]float64, n)
	return &b
}

func putBuf(b *[]float64) { bufPool.Put(b) }

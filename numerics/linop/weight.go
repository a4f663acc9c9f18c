package linop

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

// Weight defines the inner product ⟨x, y⟩_W = xᵀ W y on R^n by a symmetric
// positive definite W = Rᵀ R. With it, the adjoint of A is A* = W⁻¹ Aᵀ W and
// the W-norm of A equals the Euclidean norm of R A R⁻¹ (see Similarity).
// Every method panics with ErrShape if a vector's length is not Len().
type Weight interface {
	// Len returns n.
	Len() int
	// Mul sets dst = W x.
	Mul(dst, x []float64)
	// Solve sets dst = W⁻¹ x.
	Solve(dst, x []float64)
	// Factor sets dst = R x, or dst = Rᵀ x if trans.
	Factor(dst, x []float64, trans bool)
	// FactorSolve sets dst = R⁻¹ x, or dst = R⁻ᵀ x if trans.
	FactorSolve(dst, x []float64, trans bool)
	// Inner returns xᵀ W y.
	Inner(x, y []float64) float64
	// Norm returns √(xᵀ W x).
	Norm(x []float64) float64
}

// ErrNotPositive is returned for weights that are not positive definite.
var ErrNotPositive = errors.New("linop: weight is not positive definite")

// DiagWeight is the weight W = diag(w) with every w_i > 0, R = diag(√w).
type DiagWeight struct {
	w, s []float64
}

// NewDiagWeight returns diag(w). It returns an error naming the first index
// whose entry is not positive and finite. w is copied.
func NewDiagWeight(w []float64) (*DiagWeight, error) {
	d := &DiagWeight{w: append([]float64(nil), w...), s: make([]float64, len(w))}
	for i, v := range w {
		if !(v > 0) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("%w: diagonal weight w[%d] = %g", ErrNotPositive, i, v)
		}
		d.s[i] = math.Sqrt(v)
	}
	return d, nil
}

// Len returns the number of entries.
func (d *DiagWeight) Len() int { return len(d.w) }

func (d *DiagWeight) check(a, b []float64) {
	if len(a) != len(d.w) || len(b) != len(d.w) {
		panic(ErrShape)
	}
}

// Mul sets dst = W x.
func (d *DiagWeight) Mul(dst, x []float64) {
	d.check(dst, x)
	for i, v := range d.w {
		dst[i] = v * x[i]
	}
}

// Solve sets dst = W⁻¹ x.
func (d *DiagWeight) Solve(dst, x []float64) {
	d.check(dst, x)
	for i, v := range d.w {
		dst[i] = x[i] / v
	}
}

// Factor sets dst = √W x (R is symmetric, trans is immaterial).
func (d *DiagWeight) Factor(dst, x []float64, trans bool) {
	d.check(dst, x)
	for i, v := range d.s {
		dst[i] = v * x[i]
	}
}

// FactorSolve sets dst = √W⁻¹ x.
func (d *DiagWeight) FactorSolve(dst, x []float64, trans bool) {
	d.check(dst, x)
	for i, v := range d.s {
		dst[i] = x[i] / v
	}
}

// Inner returns Σ w_i x_i y_i.
func (d *DiagWeight) Inner(x, y []float64) float64 {
	d.check(x, y)
	var s float64
	for i, v := range d.w {
		s += v * x[i] * y[i]
	}
	return s
}

// Norm returns √(Σ w_i x_i²).
func (d *DiagWeight) Norm(x []float64) float64 {
	d.check(x, x)
	var s float64
	for i, v := range d.s {
		s = math.Hypot(s, v*x[i])
	}
	return s
}

// SPDWeight is a dense symmetric positive definite weight W = Uᵀ U
// factored by Cholesky (R = U, upper triangular).
type SPDWeight struct {
	u blas64.Triangular
}

// NewSPDWeight factors w. It returns an error wrapping ErrNotPositive if
// the Cholesky factorisation fails. w is copied.
func NewSPDWeight(w mat.Symmetric) (*SPDWeight, error) {
	var ch mat.Cholesky
	if ok := ch.Factorize(w); !ok {
		return nil, fmt.Errorf("%w: Cholesky factorisation of the %d×%d weight failed", ErrNotPositive, w.SymmetricDim(), w.SymmetricDim())
	}
	var u mat.TriDense
	ch.UTo(&u)
	return &SPDWeight{u: u.RawTriangular()}, nil
}

// Len returns n.
func (s *SPDWeight) Len() int { return s.u.N }

func (s *SPDWeight) check(a, b []float64) {
	if len(a) != s.u.N || len(b) != s.u.N {
		panic(ErrShape)
	}
}

// Factor sets dst = U x, or Uᵀ x if trans.
func (s *SPDWeight) Factor(dst, x []float64, trans bool) {
	s.check(dst, x)
	copy(dst, x)
	t := blas.NoTrans
	if trans {
		t = blas.Trans
	}
	blas64.Trmv(t, s.u, vec(dst))
}

// FactorSolve sets dst = U⁻¹ x, or U⁻ᵀ x if trans.
func (s *SPDWeight) FactorSolve(dst, x []float64, trans bool) {
	s.check(dst, x)
	copy(dst, x)
	t := blas.NoTrans
	if trans {
		t = blas.Trans
	}
	blas64.Trsv(t, s.u, vec(dst))
}

// Mul sets dst = Uᵀ U x.
func (s *SPDWeight) Mul(dst, x []float64) {
	s.Factor(dst, x, false)
	blas64.Trmv(blas.Trans, s.u, vec(dst))
}

// Solve sets dst = U⁻¹ U⁻ᵀ x.
func (s *SPDWeight) Solve(dst, x []float64) {
	s.FactorSolve(dst, x, true)
	blas64.Trsv(blas.NoTrans, s.u, vec(dst))
}

// Inner returns (U x)ᵀ (U y).
func (s *SPDWeight) Inner(x, y []float64) float64 {
	s.check(x, y)
	ux := make([]float64, len(x))
	uy := make([]float64, len(y))
	s.Factor(ux, x, false)
	s.Factor(uy, y, false)
	return floats.Dot(ux, uy)
}

// Norm returns ‖U x‖₂.
func (s *SPDWeight) Norm(x []float64) float64 {
	ux := make([]float64, len(x))
	s.Factor(ux, x, false)
	return floats.Norm(ux, 2)
}

// Adjoint is the adjoint A* of a square operator A in the inner product
// ⟨·,·⟩_W: ⟨A x, y⟩_W = ⟨x, A* y⟩_W, so A* = W⁻¹ Aᵀ W. With W nil it is the
// Euclidean adjoint Aᵀ (and A may be rectangular). Apply panics with
// ErrShape if W's length differs from A's size.
type Adjoint struct {
	A   Operator
	W   Weight
	buf scratchPool
}

// Dims returns the dimensions of Aᵀ.
func (a *Adjoint) Dims() (r, c int) {
	r, c = a.A.Dims()
	if a.W != nil && (r != c || a.W.Len() != r) {
		panic(ErrShape)
	}
	return c, r
}

// Apply sets dst = W⁻¹ Aᵀ W x.
func (a *Adjoint) Apply(dst, x []float64) {
	r, c := a.Dims()
	if len(x) != c || len(dst) != r {
		panic(ErrShape)
	}
	if a.W == nil {
		a.A.ApplyT(dst, x)
		return
	}
	b := a.buf.get(len(x))
	defer a.buf.put(b)
	t := *b
	a.W.Mul(t, x)
	a.A.ApplyT(dst, t)
	copy(t, dst)
	a.W.Solve(dst, t)
}

// ApplyT sets dst = W A W⁻¹ x.
func (a *Adjoint) ApplyT(dst, x []float64) {
	r, c := a.Dims()
	if len(x) != r || len(dst) != c {
		panic(ErrShape)
	}
	if a.W == nil {
		a.A.Apply(dst, x)
		return
	}
	b := a.buf.get(len(x))
	defer a.buf.put(b)
	t := *b
	a.W.Solve(t, x)
	a.A.Apply(dst, t)
	copy(t, dst)
	a.W.Mul(dst, t)
}

// ToCSR returns Aᵀ in CSR form when W is nil or diagonal and A has a sparse form.
func (a *Adjoint) ToCSR() (*CSR, error) {
	m, err := ToCSR(a.A)
	if err != nil {
		return nil, err
	}
	t := m.Transpose()
	switch w := a.W.(type) {
	case nil:
		return t, nil
	case *DiagWeight:
		a.Dims()
		for i := 0; i < t.Rows; i++ {
			for p := t.RowPtr[i]; p < t.RowPtr[i+1]; p++ {
				t.Val[p] *= w.w[t.ColIdx[p]] / w.w[i]
			}
		}
		return t, nil
	}
	return nil, fmt.Errorf("%w (adjoint in a dense weight)", ErrNotSparse)
}

// Similarity is the operator R A R⁻¹ for a square A and a weight W = Rᵀ R.
// Since ‖x‖_W = ‖R x‖₂, its Euclidean norm, numerical range, spectrum and
// pseudospectra equal those of A in the W inner product, and e^{t R A R⁻¹}
// = R e^{tA} R⁻¹. Apply panics with ErrShape if the sizes differ.
type Similarity struct {
	A   Operator
	W   Weight
	buf scratchPool
}

// Dims returns the dimensions of A.
func (s *Similarity) Dims() (r, c int) {
	r, c = s.A.Dims()
	if r != c || s.W.Len() != r {
		panic(ErrShape)
	}
	return r, c
}

// Apply sets dst = R A R⁻¹ x.
func (s *Similarity) Apply(dst, x []float64) {
	n, _ := s.Dims()
	if len(x) != n || len(dst) != n {
		panic(ErrShape)
	}
	b := s.buf.get(n)
	defer s.buf.put(b)
	t := *b
	s.W.FactorSolve(t, x, false)
	s.A.Apply(dst, t)
	copy(t, dst)
	s.W.Factor(dst, t, false)
}

// ApplyT sets dst = R⁻ᵀ Aᵀ Rᵀ x.
func (s *Similarity) ApplyT(dst, x []float64) {
	n, _ := s.Dims()
	if len(x) != n || len(dst) != n {
		panic(ErrShape)
	}
	b := s.buf.get(n)
	defer s.buf.put(b)
	t := *b
	s.W.Factor(t, x, true)
	s.A.ApplyT(dst, t)
	copy(t, dst)
	s.W.FactorSolve(dst, t, true)
}

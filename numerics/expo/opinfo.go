package expo

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// maxDenseN is the largest order for which an operator without a dense form
// is turned into a dense matrix by applying it to unit vectors.
const maxDenseN = 4000

// counted wraps an operator and counts its applications, checking the
// context through the caller.
type counted struct {
	a       linop.Operator
	matvecs int
	budget  *workBudget // nil: no limit
}

// workBudget cancels a computation's context once it has used its
// products: a limit counted in work, so the same problem stops at the same
// point on a busy machine and a quiet one.
type workBudget struct {
	left int
	stop context.CancelCauseFunc
}

// errWorkBudget is the cause of a cancellation by a workBudget.
var errWorkBudget = errors.New("expo: work budget used up")

func (c *counted) spend() {
	c.matvecs++
	if b := c.budget; b != nil {
		if b.left--; b.left < 0 {
			b.stop(errWorkBudget)
		}
	}
}

func (c *counted) apply(dst, x []float64) {
	c.a.Apply(dst, x)
	c.spend()
}

func (c *counted) applyT(dst, x []float64) {
	c.a.ApplyT(dst, x)
	c.spend()
}

// toDense returns the dense matrix of a, from its own dense form when it
// has one and otherwise by applying it to the unit vectors.
func toDense(a linop.Operator) (*mat.Dense, error) {
	if d, ok := a.(linop.Denser); ok {
		return d.ToDense()
	}
	if s, ok := a.(linop.Sparser); ok {
		if c, err := s.ToCSR(); err == nil {
			return c.ToDense()
		}
	}
	n, _ := a.Dims()
	if n > maxDenseN {
		return nil, fmt.Errorf("expo: operator of order %d is too large for a dense exponential (limit %d)", n, maxDenseN)
	}
	if err := memguard.DenseReal(n, n); err != nil {
		return nil, err
	}
	m := mat.NewDense(n, n, nil)
	e := make([]float64, n)
	col := make([]float64, n)
	for j := 0; j < n; j++ {
		e[j] = 1
		a.Apply(col, e)
		e[j] = 0
		m.SetCol(j, col)
	}
	return m, nil
}

// setupVectors is the most work vectors of A's order that opNorm1 (through
// normEst1) or isSymmetric holds at once; Propagate asks the memory guard
// for them before either runs.
const setupVectors = 3

// opNorm1 returns ‖A‖₁ exactly when the operator has an explicit sparse or
// dense form, and otherwise the estimate of normEst1 (whose products are
// counted in c).
func opNorm1(c *counted) float64 {
	switch a := c.a.(type) {
	case interface{ Norm1() float64 }:
		return a.Norm1()
	case *linop.Diag:
		m := 0.0
		for _, v := range a.D {
			m = math.Max(m, math.Abs(v))
		}
		return m
	case *linop.Dense:
		return mat.Norm(a.Mat(), 1)
	case *linop.KronSum:
		// ‖X⊕Y‖₁ ≤ ‖X‖₁ + ‖Y‖₁, exact when both have positive diagonals
		// of the same sign pattern as the off-diagonals; an upper bound in general.
		return opNorm1(&counted{a: a.X}) + opNorm1(&counted{a: a.Y})
	}
	n, _ := c.a.Dims()
	return normEst1(n, c.apply, c.applyT)
}

// opDiagonal returns the diagonal of A when it is cheaply available.
func opDiagonal(a linop.Operator) []float64 {
	switch a := a.(type) {
	case interface{ Diagonal() []float64 }:
		return a.Diagonal()
	case *linop.Diag:
		return a.D
	case *linop.Dense:
		n, _ := a.Dims()
		d := make([]float64, n)
		for i := range d {
			d[i] = a.Mat().At(i, i)
		}
		return d
	}
	return nil
}

// isSymmetric reports whether A x = Aᵀ x to working accuracy for a random x,
// a one-product test that is exact for symmetric A and fails with
// probability one for a nonsymmetric A.
func isSymmetric(a linop.Operator) bool {
	if _, ok := a.(*linop.Diag); ok {
		return true
	}
	n, c := a.Dims()
	if n != c {
		return false
	}
	r := rand.New(rand.NewPCG(1, 2))
	x := make([]float64, n)
	for i := range x {
		x[i] = r.NormFloat64()
	}
	y := make([]float64, n)
	z := make([]float64, n)
	a.Apply(y, x)
	a.ApplyT(z, x)
	d, s := 0.0, 0.0
	for i := range y {
		d = math.Max(d, math.Abs(y[i]-z[i]))
		s = math.Max(s, math.Abs(y[i]))
	}
	return d <= 1e-13*s
}

func normInf(x []float64) float64 {
	m := 0.0
	for _, v := range x {
		if a := math.Abs(v); a > m || math.IsNaN(a) {
			m = a
		}
	}
	return m
}

func norm2(x []float64) float64 {
	s := 0.0
	for _, v := range x {
		s += v * v
	}
	return math.Sqrt(s)
}

// shifted is the operator A − μI.
type shifted struct {
	a  linop.Operator
	mu float64
}

func (s *shifted) Dims() (r, c int) { return s.a.Dims() }

// ScratchFloats is what a product of A holds (linop.Scratcher).
func (s *shifted) ScratchFloats() int {
	r, c := s.a.Dims()
	return linop.Scratch(s.a) * max(r, c)
}

func (s *shifted) Apply(dst, x []float64) {
	s.a.Apply(dst, x)
	for i := range dst {
		dst[i] -= s.mu * x[i]
	}
}

func (s *shifted) ApplyT(dst, x []float64) {
	s.a.ApplyT(dst, x)
	for i := range dst {
		dst[i] -= s.mu * x[i]
	}
}

func errorf(format string, args ...any) error {
	return fmt.Errorf("expo: "+format+": %w", append(args, ErrNumerical)...)
}

package expo

import (
	"context"
	"fmt"
	"math"
	"time"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/solve"
)

// The implicit–explicit Runge–Kutta scheme ARS(4,4,3) of Ascher, Ruuth &
// Spiteri (Appl. Numer. Math. 25, 1997, §2.8): L-stable, stiffly accurate
// and of order 3, with L treated implicitly (diagonal γ = 1/2) and N
// explicitly. It shares nothing with ETDRK4 but the problem: no
// φ-functions, no exponentials, only solves with I − γhL. The order
// conditions up to 3, coupling conditions included, are checked in
// TestIMEXTableau.
var (
	imexA = [5][5]float64{
		{},
		{0, 1. / 2},
		{0, 1. / 6, 1. / 2},
		{0, -1. / 2, 1. / 2, 1. / 2},
		{0, 3. / 2, -3. / 2, 1. / 2, 1. / 2},
	}
	imexE = [5][5]float64{
		{},
		{1. / 2},
		{11. / 18, 1. / 18},
		{5. / 6, -5. / 6, 1. / 2},
		{1. / 4, 7. / 4, 3. / 4, -7. / 4},
	}
	imexC     = [5]float64{0, 1. / 2, 2. / 3, 1. / 2, 1}
	imexGamma = 1. / 2
)

// imexStepper is ARS(4,4,3) as a oneStepper, with the factorisations of
// I − γhL cached per step length.
type imexStepper struct {
	ctx   context.Context
	L     linop.Operator
	N     Nonlinear
	cache map[float64]func(dst, b []float64) error
	keys  []float64
	dense *mat.Dense // L when it is factored densely
	stage [5][]float64
	lu    [5][]float64 // L U_i
	nv    [5][]float64 // N(U_i)
	rhs   []float64
}

// imexDenseMax bounds the order of an operator without banded, sparse or
// diagonal form that the cross-check factors densely.
const imexDenseMax = 1500

// newIMEXStepper returns the stepper, or an error saying why I − γhL
// cannot be factored for this operator.
func newIMEXStepper(ctx context.Context, L linop.Operator, N Nonlinear) (*imexStepper, error) {
	n, _ := L.Dims()
	s := &imexStepper{ctx: ctx, L: L, N: N, cache: map[float64]func(dst, b []float64) error{}, rhs: make([]float64, n)}
	for i := range s.stage {
		s.stage[i], s.lu[i], s.nv[i] = make([]float64, n), make([]float64, n), make([]float64, n)
	}
	if _, ok := L.(*linop.Diag); ok {
		return s, nil
	}
	if _, ok := sparseForm(L); ok || solve.Choose(L) == solve.BandMethod {
		return s, nil
	}
	if n > imexDenseMax {
		return nil, fmt.Errorf("the operator (order %d) has no sparse, banded or diagonal form and is too large to factor densely (limit %d)", n, imexDenseMax)
	}
	a, err := toDense(L)
	if err != nil {
		return nil, err
	}
	s.dense = a
	return s, nil
}

func (s *imexStepper) order() int   { return 3 }
func (s *imexStepper) name() string { return "IMEX ARS(4,4,3)" }

// solver returns x ↦ (I − γhL)⁻¹x.
func (s *imexStepper) solver(h float64) (func(dst, b []float64) error, error) {
	if f, ok := s.cache[h]; ok {
		return f, nil
	}
	g := imexGamma * h
	var f func(dst, b []float64) error
	switch {
	case s.dense != nil:
		n, _ := s.dense.Dims()
		m := mat.NewDense(n, n, nil)
		m.Scale(-g, s.dense)
		for i := 0; i < n; i++ {
			m.Set(i, i, 1+m.At(i, i))
		}
		var lu mat.LU
		lu.Factorize(m)
		if c := lu.Cond(); c > 1/unitRoundoff || math.IsInf(c, 0) {
			return nil, errorf("I − %.3g·A is singular to working precision", g)
		}
		f = func(dst, b []float64) error {
			x := mat.NewVecDense(len(dst), dst)
			return lu.SolveVecTo(x, false, mat.NewVecDense(len(b), b))
		}
	default:
		if d, ok := s.L.(*linop.Diag); ok {
			f = func(dst, b []float64) error {
				for i, v := range b {
					dst[i] = v / (1 - g*d.D[i])
				}
				return nil
			}
			break
		}
		// (I − gL) = g(sI − L) with s = 1/g.
		r, err := factorReal(s.ctx, s.L, 1/g)
		if err != nil {
			return nil, err
		}
		f = func(dst, b []float64) error {
			if err := r.solve(dst, b); err != nil {
				return err
			}
			for i := range dst {
				dst[i] /= g
			}
			return nil
		}
	}
	if len(s.keys) >= 8 {
		delete(s.cache, s.keys[0])
		s.keys = s.keys[1:]
	}
	s.cache[h] = f
	s.keys = append(s.keys, h)
	return f, nil
}

// step: U_i = u + h Σ_{j<i} E_ij N(t + c_j h, U_j) + h Σ_{j≤i} A_ij L U_j,
// each stage one solve with I − γhL, and u_{n+1} = U_4.
func (s *imexStepper) step(t, h float64, u []float64, seg segment) error {
	solveF, err := s.solver(h)
	if err != nil {
		return err
	}
	copy(s.stage[0], u)
	for i := 0; i < 5; i++ {
		if i > 0 {
			copy(s.rhs, u)
			for j := 0; j < i; j++ {
				e, a := h*imexE[i][j], h*imexA[i][j]
				for k := range s.rhs {
					s.rhs[k] += e*s.nv[j][k] + a*s.lu[j][k]
				}
			}
			if err := solveF(s.stage[i], s.rhs); err != nil {
				return err
			}
			// L U_i from the stage equation, without a product with the
			// stiff L: γh L U_i = U_i − rhs.
			g := imexGamma * h
			for k := range s.rhs {
				s.lu[i][k] = (s.stage[i][k] - s.rhs[k]) / g
			}
		} else {
			s.L.Apply(s.lu[0], s.stage[0])
		}
		if i < 4 {
			s.N(seg.clamp(t+imexC[i]*h), s.stage[i], s.nv[i])
		}
	}
	copy(u, s.stage[4])
	return nil
}

// crossSemilinear solves u' = Lu + N(t, u) again by the IMEX scheme with
// its own step-doubling control and records the comparison in sol.Cross,
// or in Cross.Skipped why it could not be run.
func crossSemilinear(ctx context.Context, sol *Solution, L linop.Operator, N Nonlinear, u0 []float64, times []float64, ctl StepControl, opts Options) {
	t0 := time.Now()
	method := "imex-ars443 (implicit in A, explicit in the rest, order 3, own step-doubling control)"
	st, err := newIMEXStepper(ctx, L, N)
	if err != nil {
		sol.Cross = &Crosscheck{Method: "imex-ars443", Skipped: "no second method: " + err.Error()}
		return
	}
	c := ctl
	c.Steps = 0 // the second method chooses its own steps
	r, err := integrate(ctx, st, u0, times, opts.Tol, c, nil)
	if err != nil {
		sol.Cross = &Crosscheck{Method: "imex-ars443", Skipped: "the second method failed: " + err.Error(), Elapsed: time.Since(t0)}
		return
	}
	cc := &Crosscheck{Method: method, Elapsed: time.Since(t0)}
	for i := range sol.Values {
		cc.MaxDiff = math.Max(cc.MaxDiff, maxAbsDiff(sol.Values[i], r.vals[i]))
		cc.ErrEst = math.Max(cc.ErrEst, r.errs[i])
	}
	sol.Cross = cc
}

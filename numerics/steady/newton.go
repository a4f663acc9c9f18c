// Package steady finds steady states of u' = A u + N(u) + f, the zeros of
// F(u) = A u + N(u) + f, by Newton's method with a backtracking line
// search, and linearises the problem there: J = A + N'(u*), the operator
// whose spectrum and semigroup decide the stability of u* and the transient
// growth of small disturbances about it.
//
// N'(u) comes from the caller (checked) or by differences: complex steps
// when N has an analytic complex form, forward differences otherwise; as a
// diagonal when N acts entry by entry, on A's sparsity pattern with
// columns grouped by colouring (Curtis, Powell & Reid 1974), or dense. The
// structure is chosen by checking N'(u)v against the derivative of N along
// a random direction v. The linear systems J δ = −F are solved by the
// factorisations of numerics/solve (banded, sparse or dense LU, chosen from
// J's structure), never densely for a sparse J.
//
// The error of the state is estimated as ‖J⁻¹F(u)‖∞ + ‖J⁻¹‖∞·ρ: the next
// Newton step, which bounds the error to first order, plus the rounding ρ
// of F itself amplified by ‖J⁻¹‖∞ (estimated by Hager's method, Higham's
// variant: ACM TOMS 1988), the accuracy no solver can beat.
package steady

import (
	"context"
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/roundoff"
	"semiflow/numerics/solve"
)

// Options control Solve.
type Options struct {
	// Tol is the relative accuracy asked of the state: ErrEst ≤ Tol·‖u*‖∞.
	Tol float64
	// MaxSteps bounds the Newton steps.
	MaxSteps int
	// Progress, if not nil, is called after each Newton step with the step
	// number and MaxSteps.
	Progress func(done, total int)
}

// Step is one Newton step: the residual at its start, the length of the
// update taken and its damping factor.
type Step struct {
	Residual float64 // ‖F(u_k)‖∞
	Update   float64 // ‖λδ_k‖∞
	Damping  float64 // λ, 1 for a full step
}

// Result is a steady state and how it was found.
type Result struct {
	U        []float64
	Residual float64 // ‖F(u*)‖∞
	Rounding float64 // ρ: the size of F's rounding at u*
	NextStep float64 // ‖J⁻¹F(u*)‖∞
	InvNorm  float64 // estimate of ‖J⁻¹‖∞ at u*
	ErrEst   float64 // NextStep + InvNorm·ρ, ≈ a bound on ‖u* − true steady state‖∞
	Tol      float64
	TolMet   bool
	Steps    []Step
	Evals    int       // evaluations of N, complex ones included
	Jac      *Jacobian // N'(u*), checked
	J        linop.Operator
	Solver   string // the factorisation used for J
}

// Linearisation returns A + N' in the most structured form: a dense sum
// for dense A, otherwise the operator sum of A and N' (A keeps its
// Kronecker or block structure; the sparse form is made on demand).
func Linearisation(a, jn linop.Operator) linop.Operator {
	if da, ok := a.(*linop.Dense); ok {
		m := mat.DenseCopyOf(da.Mat())
		switch t := jn.(type) {
		case *linop.Diag:
			for i, x := range t.D {
				m.Set(i, i, m.At(i, i)+x)
			}
			return linop.NewDense(m)
		case *linop.Dense:
			m.Add(m, t.Mat())
			return linop.NewDense(m)
		}
	}
	return &linop.Sum{Terms: []linop.Operator{a, jn}}
}

// problem holds F's pieces.
type problem struct {
	a       linop.Operator
	f       []float64
	d       *differ
	normA   float64
	rowLen  int
	n       int
	scratch []float64
}

// residual sets dst = A u + N(u) + f and returns ‖dst‖∞ and the rounding
// level ρ = k·u·(‖A‖∞‖u‖∞ + ‖N(u)‖∞ + ‖f‖∞), k the longest row of A plus 2.
func (p *problem) residual(u, dst []float64) (float64, float64, error) {
	if err := p.d.eval(u, p.scratch); err != nil {
		return 0, 0, err
	}
	nn := normInf(p.scratch)
	p.a.Apply(dst, u)
	fn := 0.0
	for i := range dst {
		dst[i] += p.scratch[i]
		if p.f != nil {
			dst[i] += p.f[i]
			fn = math.Max(fn, math.Abs(p.f[i]))
		}
	}
	if k := firstNonFinite(dst); k >= 0 {
		return 0, 0, &NonFiniteError{What: "F(u) = A u + N(u) + f", Index: k, Value: dst[k]}
	}
	rho := roundoff.Threshold(p.rowLen+2, p.normA*normInf(u)+nn+fn)
	return normInf(dst), rho, nil
}

func norm2(v []float64) float64 {
	s := 0.0
	for _, x := range v {
		s += x * x
	}
	return math.Sqrt(s)
}

// factor returns a solver of −J (the shifted solvers factor zI − J; z = 0).
func factor(ctx context.Context, j linop.Operator) (solve.AdjointSolver, string, error) {
	s, err := solve.NewShiftedContext(ctx, j, 0, solve.Options{})
	if err != nil {
		return nil, "", err
	}
	as, ok := s.(solve.AdjointSolver)
	if !ok {
		return nil, "", fmt.Errorf("the %s factorisation offers no solves with the transpose, which ‖J⁻¹‖∞ needs", solve.Choose(j))
	}
	return as, solve.Choose(j).String() + " LU", nil
}

// factorError: an interrupt as the context's error, a singular pivot as a
// SingularError at Newton step k, anything else (a refusal of the memory
// guard) unchanged.
func factorError(ctx context.Context, err error, k int, r float64) error {
	switch {
	case ctx.Err() != nil:
		return ctx.Err()
	case errors.Is(err, solve.ErrSingular):
		return &SingularError{Step: k, Residual: r, Cause: err}
	}
	return err
}

// step returns δ = −J⁻¹ b through the solver of −J: (−J)δ = b.
func solveReal(s solve.ShiftedSolver, b []float64) ([]float64, error) {
	z := make([]complex128, len(b))
	for i, x := range b {
		z[i] = complex(x, 0)
	}
	if err := s.Solve(z, z); err != nil {
		return nil, err
	}
	out := make([]float64, len(b))
	for i, x := range z {
		out[i] = real(x)
	}
	return out, nil
}

// Solve finds u* with A u* + N(u*) + f = 0 from the guess u0 (f may be
// nil). A must be square and u0 of its order (ErrShape otherwise). It
// returns a NoConvergenceError, SingularError, LineSearchError,
// NonFiniteError or JacobianError when it cannot deliver, the error of a
// term's function as it is, and the context's error when interrupted.
func Solve(ctx context.Context, a linop.Operator, f []float64, term Term, u0 []float64, opt Options) (*Result, error) {
	n, c := a.Dims()
	if n != c || len(u0) != n || (f != nil && len(f) != n) {
		return nil, fmt.Errorf("%w: operator %d×%d, guess of %d entries", ErrShape, n, c, len(u0))
	}
	if k := firstNonFinite(u0); k >= 0 {
		return nil, &NonFiniteError{What: "the guess", Index: k, Value: u0[k]}
	}
	if opt.MaxSteps <= 0 {
		opt.MaxSteps = 50
	}
	if !(opt.Tol > 0) {
		opt.Tol = 1e-8
	}
	p := &problem{a: a, f: f, d: newDiffer(ctx, a, term), n: n, scratch: make([]float64, n)}
	p.normA, p.rowLen = operatorSize(a)

	u := append([]float64(nil), u0...)
	guessNorm := normInf(u0)
	fu := make([]float64, n)
	res := &Result{Tol: opt.Tol}
	r, rho, err := p.residual(u, fu)
	if err != nil {
		return nil, locate(err, "at the guess")
	}
	ut, ft := make([]float64, n), make([]float64, n)
	slow := 0 // consecutive full steps that did not halve ‖F‖ near the rounding level
	for k := 1; ; k++ {
		if k > opt.MaxSteps {
			last := 0.0
			damped := 0
			for _, s := range res.Steps {
				if s.Damping < 1 {
					damped++
				}
				last = s.Update
			}
			return nil, &NoConvergenceError{Steps: opt.MaxSteps, Residual: r, Update: last, Damped: damped}
		}
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		jn, err := p.d.At(u)
		if err != nil {
			if k == 1 {
				return nil, locate(err, "at the guess")
			}
			return nil, locate(err, fmt.Sprintf("at Newton step %d", k))
		}
		s, _, err := factor(ctx, Linearisation(a, jn.Op))
		if err != nil {
			return nil, factorError(ctx, err, k, r)
		}
		delta, err := solveReal(s, fu)
		if err != nil {
			return nil, &SingularError{Step: k, Residual: r, Cause: err}
		}
		if i := firstNonFinite(delta); i >= 0 {
			return nil, &SingularError{Step: k, Residual: r, Cause: fmt.Errorf("Newton step entry %d is %g", i, delta[i])}
		}
		// Backtracking on ‖F‖₂ (Armijo with slope −‖F‖₂ for the exact
		// Newton direction); at the rounding level the full step is taken.
		f2 := norm2(fu)
		lambda := 1.0
		var rt, rhot float64
		for {
			for i := range ut {
				ut[i] = u[i] + lambda*delta[i]
			}
			rt, rhot, err = p.residual(ut, ft)
			if err != nil && ctx.Err() != nil {
				return nil, ctx.Err()
			}
			if err == nil && (r <= 10*rho || norm2(ft) <= (1-1e-4*lambda)*f2) {
				break
			}
			// A trial point where F is not finite, or where the term
			// fails (outside its domain), is rejected like one where ‖F‖
			// grows: the step is shortened.
			lambda /= 2
			if lambda < 0x1p-20 {
				if _, nonFinite := err.(*NonFiniteError); err != nil && !nonFinite {
					return nil, err // the term fails however short the step: its own error says why
				}
				return nil, &LineSearchError{Step: k, Residual: r, Damping: 2 * lambda, Update: normInf(delta)}
			}
		}
		upd := lambda * normInf(delta)
		res.Steps = append(res.Steps, Step{Residual: r, Update: upd, Damping: lambda})
		if opt.Progress != nil {
			opt.Progress(k, opt.MaxSteps)
		}
		if lambda == 1 && r <= 100*rho && rt > r/2 {
			slow++
		} else {
			slow = 0
		}
		copy(u, ut)
		copy(fu, ft)
		prevR := r
		r, rho = rt, rhot
		// Converged: a full step below tol relative to the state, or below
		// rounding relative to the guess (a state at or near 0), or F at
		// its rounding level.
		if lambda == 1 && (upd <= opt.Tol*normInf(u) || upd <= roundoff.Unit*guessNorm || prevR <= rho || slow >= 2) {
			break
		}
	}
	// At u*: the checked Jacobian, its factorisation, the next step and
	// ‖J⁻¹‖∞.
	jn, err := p.d.Decide(u)
	if err != nil {
		return nil, locate(err, "at the steady state found")
	}
	j := Linearisation(a, jn.Op)
	s, how, err := factor(ctx, j)
	if err != nil {
		return nil, factorError(ctx, err, len(res.Steps)+1, r)
	}
	next, err := solveReal(s, fu)
	if err != nil {
		return nil, &SingularError{Step: len(res.Steps) + 1, Residual: r, Cause: err}
	}
	inv, err := invNormInf(s, n)
	if err != nil {
		return nil, err
	}
	res.U, res.Residual, res.Rounding = u, r, rho
	res.NextStep, res.InvNorm = normInf(next), inv
	res.ErrEst = res.NextStep + inv*rho
	res.TolMet = res.ErrEst <= opt.Tol*normInf(u)
	if normInf(u) == 0 {
		res.TolMet = res.ErrEst <= opt.Tol
	}
	res.Jac, res.J, res.Solver = jn, j, how
	res.Evals = p.d.evals
	return res, nil
}

// operatorSize returns ‖A‖∞ (from a sparse form when the structure has no
// cheaper one) and the largest number of entries in a row.
func operatorSize(a linop.Operator) (float64, int) {
	n, _ := a.Dims()
	if d, ok := a.(*linop.Dense); ok {
		return mat.Norm(d.Mat(), math.Inf(1)), n
	}
	if csr, err := linop.ToCSR(a); err == nil {
		w := 0
		for i := 0; i < csr.Rows; i++ {
			w = max(w, csr.RowPtr[i+1]-csr.RowPtr[i])
		}
		return csr.NormInf(), w
	}
	if m, ok := linop.NormInf(a); ok {
		return m, n
	}
	// A matrix-free operator: ‖A‖∞ ≥ ‖A 1‖∞ is only a lower bound; take n
	// times it as the row length to stay on the safe side.
	one := make([]float64, n)
	for i := range one {
		one[i] = 1
	}
	out := make([]float64, n)
	a.Apply(out, one)
	return normInf(out), n
}

// invNormInf estimates ‖J⁻¹‖∞ = ‖J⁻ᵀ‖₁ by Hager's method with Higham's
// extra vector (ACM TOMS 14, 1988), from the solver of −J: B = (−J)⁻ᵀ is
// applied by SolveH and Bᵀ by Solve. The estimate is a lower bound, in
// practice within a factor 3 of the norm.
func invNormInf(s solve.AdjointSolver, n int) (float64, error) {
	apply := func(x []float64, trans bool) ([]float64, error) {
		z := make([]complex128, n)
		for i, v := range x {
			z[i] = complex(v, 0)
		}
		var err error
		if trans {
			err = s.Solve(z, z)
		} else {
			err = s.SolveH(z, z)
		}
		out := make([]float64, n)
		for i, v := range z {
			out[i] = real(v)
		}
		return out, err
	}
	x := make([]float64, n)
	for i := range x {
		x[i] = 1 / float64(n)
	}
	est := 0.0
	prevJ := -1
	for it := 0; it < 5; it++ {
		y, err := apply(x, false)
		if err != nil {
			return 0, err
		}
		e1 := 0.0
		xi := make([]float64, n)
		for i, v := range y {
			e1 += math.Abs(v)
			xi[i] = 1
			if v < 0 {
				xi[i] = -1
			}
		}
		if it > 0 && e1 <= est {
			break
		}
		est = e1
		z, err := apply(xi, true)
		if err != nil {
			return 0, err
		}
		jmax, zmax, ztx := 0, 0.0, 0.0
		for i, v := range z {
			if math.Abs(v) > zmax {
				jmax, zmax = i, math.Abs(v)
			}
			ztx += v * x[i]
		}
		if zmax <= ztx || jmax == prevJ {
			break
		}
		prevJ = jmax
		for i := range x {
			x[i] = 0
		}
		x[jmax] = 1
	}
	// Higham's alternating vector guards against the estimate's worst
	// cases.
	alt := make([]float64, n)
	for i := range alt {
		alt[i] = 1 + float64(i)/math.Max(float64(n-1), 1)
		if i%2 == 1 {
			alt[i] = -alt[i]
		}
	}
	y, err := apply(alt, false)
	if err != nil {
		return 0, err
	}
	e2 := 0.0
	for _, v := range y {
		e2 += math.Abs(v)
	}
	return math.Max(est, 2*e2/(3*float64(n))), nil
}

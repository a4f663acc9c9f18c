package builtin

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/mat"

	"semiflow/lang/eval"
	"semiflow/lang/objects"
	"semiflow/lang/value"
	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
	"semiflow/numerics/steady"
)

// steadyFamily: steady states of u' = Au + N(u) + f and the linearisation
// about them.
var steadyFamily = []*Builtin{
	{
		Name: "steadystate",
		Params: []value.Param{
			req("A", "the linear part: a square operator or matrix"),
			req("guess", "where Newton's method starts: a vector, a number (constant), a steady state (its state), or a function of x (x, y) sampled on A's grid"),
			opt("nonlinear", value.None, "the term N(u) in u' = Au + N(u) + f: a function of the vector u returning a vector (none: the linear problem)"),
			opt("forcing", value.None, "a constant source f: a vector or a number"),
			opt("jacobian", value.None, "N'(u) if known: a function of u returning the diagonal of N'(u) (a vector or number), a matrix or an operator; none: found by differences"),
			opt("tol", value.Num(1e-8), "relative accuracy asked of the state: error estimate ≤ tol·‖u*‖∞"),
			opt("steps", value.Num(50), "the most Newton steps taken"),
		},
		Doc: "A steady state u* of u' = Au + N(u) + f: a zero of F(u) = Au + N(u) + f, by Newton's method from the guess, each step solving (A + N'(u)) Δu = −F(u) and shortened by halving until ‖F‖₂ falls (a backtracking line search). " +
			"N'(u) is checked against the derivative of N along a random direction and found by complex steps (Im N(u + ih v)/h, exact for a term built from analytic functions; Squire & Trapp, SIAM Rev. 1998) or by forward differences when N has no complex form: as a diagonal when N acts entry by entry (one evaluation of N per step), on A's sparsity pattern with columns grouped by colouring (Curtis, Powell & Reid, IMA J. Appl. Math. 1974) when N couples neighbours, dense otherwise; a given jacobian is checked the same way. " +
			"Boundary data the operator's grid carries (boundary=[g_left, g_right], numbers) enter as a constant term b of Au + b. " +
			"The linear systems are solved by banded, sparse or dense LU chosen from the structure, never densely for a sparse operator. " +
			"The report gives the residual ‖F(u*)‖∞, the error estimate ‖J⁻¹F(u*)‖∞ + ‖J⁻¹‖∞·ρ (the next Newton step plus the rounding ρ of F amplified by ‖J⁻¹‖∞, estimated by Hager's method), the Newton history and a figure; s.state is the state as a vector and linearisation(s) the operator A + N'(u*). " +
			"Newton's method finds the steady state nearest the guess in its own sense, not necessarily a stable one: linearisation and spectrum say which it is. " +
			"No convergence within the steps, a singular Jacobian and a term that turns non-finite are errors that name the Newton step and the residual.",
		Examples: []Example{
			{"s = steadystate({-2, 1 | 1, -2}, [0, 0], forcing=[1, 1]); s.state", "[1, 1]"},
			{"steadystate({-1}, 2, nonlinear=u -> u^3 - 2*u^2 + 3*u - 1).state", "[1]"},
		},
		Impl: steadyImpl,
	},
	{
		Name: "linearisation",
		Params: []value.Param{
			req("A", "a steady state from steadystate, or the linear part: a square operator or matrix"),
			opt("state", value.None, "with an operator A: the state u at which to linearise (a vector, a number, a steady state, or a function of x on A's grid)"),
			opt("nonlinear", value.None, "with an operator A: the term N(u) (a function of the vector u)"),
			opt("jacobian", value.None, "with an operator A: N'(u) if known (a function of u returning the diagonal, a matrix or an operator)"),
		},
		Doc: "The linearisation J = A + N'(u) of u' = Au + N(u) + f about a state u: small disturbances v of u evolve by v' = Jv to first order, so spectrum(J) decides the stability of a steady state and growth(J) the transient growth of disturbances about it. " +
			"Given a steady state s, the operator at s.state; given A, a state and the nonlinear term, the operator there, with N'(u) found as steadystate finds it (checked along a random direction). " +
			"The result keeps its structure: A (sparse, a Kronecker sum, blocks) plus a diagonal when N acts entry by entry, plus a sparse matrix on A's pattern when N couples neighbours, dense for a dense A; spectrum, growth, wellposed, pseudospectrum and propagate take it like any operator.",
		Examples: []Example{
			{"dense(linearisation({-1, 0 | 0, -2}, state=[1, 2], nonlinear=u -> u^2))", "{1, 0 |\n 0, 2}"},
		},
		Impl: linearisationImpl,
	},
	{
		Name: "continuation",
		Params: []value.Param{
			req("values", "the parameter values p_0, p_1, …, in the order the branch is followed: a vector, range or list of real numbers"),
			req("f", "a function (p, u) -> steadystate(…, u, …) returning the steady state at parameter p from the guess u"),
			req("guess", "the guess for the first value: a vector (or a number)"),
		},
		Doc: "A branch of steady states followed through a parameter (natural-parameter continuation): f(p_k, u) is called at each value in order, its guess u the previous state extrapolated along the branch (the secant through the two previous states; the given guess first, then the first state). " +
			"The result is a table with a row per value reached: the parameter, the state's size ‖u*‖∞ (norm), its residual, error estimate, Newton steps and ‖J⁻¹‖∞ (inverse_norm), whose growth warns of a turning point; t.states[k] is the k-th state as a vector, t.stopped why the branch stopped early (\"\" when it did not). " +
			"When a value cannot be reached (no convergence, a singular Jacobian: past a turning point of the branch, or a step too long) the table stops there and its note says why; an error only when the first value fails. Interrupts stop it.",
		Examples: []Example{
			{"continuation([1, 2, 3], (p, u) -> steadystate({-1}, u, forcing=p), 0).norm", "[1, 2, 3]"},
		},
		Impl: continuationImpl,
	},
}

// steadyWorkVectors is the number of vectors of the operator's order that
// a Newton step holds at once (numerics/steady), besides the factorisation.
const steadyWorkVectors = 16

// stateArg reads a state vector of order n: a vector, a number, or a
// function sampled on the operator's grid.
func stateArg(c *eval.Call, i int, a *objects.Operator, n int) ([]float64, error) {
	// The state, the residuals, the Newton step, trial copies and the
	// differences' work vectors, plus what a product of A holds.
	if err := memguard.Vectors(steadyWorkVectors+linop.Scratch(a.Op), n, memguard.RealBytes, c.Name+" work vectors (state, residuals, Newton steps, differences)"); err != nil {
		return nil, err
	}
	v, err := c.Arg(i)
	if err != nil {
		return nil, err
	}
	name := paramName(c, i)
	var u []float64
	switch t := v.(type) {
	case *value.Vec, *value.Range:
		re, cx, err := numbers(c, name, t)
		if err != nil {
			return nil, err
		}
		if cx != nil {
			return nil, value.TypeErrorf("%s: %s must be real", c.Name, name)
		}
		u = append([]float64(nil), re...)
	case value.Num:
		u = constVec(n, float64(t))
	case *objects.SteadyState:
		u = append([]float64(nil), t.Res.U...)
	case value.Callable:
		if a.Grid == nil {
			return nil, value.TypeErrorf("%s: %s is a function but the operator has no grid to sample it on; give a vector", c.Name, name)
		}
		if u, err = sampleOn(c, name, t, a.Grid); err != nil {
			return nil, err
		}
	default:
		return nil, value.TypeErrorf("%s: %s must be a vector, a number, a steady state or a function on the operator's grid, not %s", c.Name, name, value.TypeName(v))
	}
	if len(u) != n {
		return nil, value.ValueErrorf("%s: the operator is %d×%d but %s has %d entries", c.Name, n, n, name, len(u))
	}
	if k := firstNonFinite(u); k >= 0 {
		return nil, value.ValueErrorf("%s: %s must be finite; entry %d is %s", c.Name, name, k, value.FormatNum(u[k]))
	}
	return u, nil
}

// steadyTerm builds the numerics' term from the nonlinear and jacobian
// arguments (at indices nl and jac); a none term is N = 0.
func steadyTerm(c *eval.Call, nl, jac int, n int) (steady.Term, bool, error) {
	nv, err := c.Arg(nl)
	if err != nil {
		return steady.Term{}, false, err
	}
	jv, err := c.Arg(jac)
	if err != nil {
		return steady.Term{}, false, err
	}
	var term steady.Term
	have := false
	switch f := nv.(type) {
	case value.NoneType:
		term.Eval = func(u, dst []float64) error {
			for i := range dst {
				dst[i] = 0
			}
			return nil
		}
		term.Jacobian = func([]float64) (linop.Operator, error) { return &linop.Diag{D: make([]float64, n)}, nil }
	case value.Callable:
		have = true
		if ps := f.Params(); len(ps) >= 2 && ps[1].Default == nil {
			return term, false, value.ValueErrorf("%s: a steady state needs a term N(u) of the state alone, not of (u, t)", c.Name)
		}
		term.Eval = func(u, dst []float64) error {
			v, err := callVector(c, "nonlinear", f, n, value.RealVec(append([]float64(nil), u...)))
			if err != nil {
				return err
			}
			copy(dst, v)
			return nil
		}
		term.EvalComplex = func(z, dst []complex128) (bool, error) {
			r, err := c.Apply(f, value.ComplexVec(append([]complex128(nil), z...)))
			if err != nil {
				if c.Ctx != nil && c.Ctx.Err() != nil {
					return false, c.Ctx.Err()
				}
				return false, nil // no complex form: differences instead
			}
			v, ok := r.(*value.Vec)
			if !ok || !v.IsComplex() || len(v.C) != n {
				return false, nil
			}
			copy(dst, v.C)
			return true, nil
		}
	default:
		return term, false, value.TypeErrorf("%s: nonlinear must be none or a function N(u), not %s", c.Name, value.TypeName(nv))
	}
	switch j := jv.(type) {
	case value.NoneType:
	case value.Callable:
		if !have {
			return term, false, value.ValueErrorf("%s: jacobian is the derivative of the nonlinear term; give nonlinear= too", c.Name)
		}
		term.Jacobian = func(u []float64) (linop.Operator, error) {
			r, err := c.Apply(j, value.RealVec(append([]float64(nil), u...)))
			if err != nil {
				return nil, err
			}
			return jacobianValue(c, r, n)
		}
	default:
		return term, false, value.TypeErrorf("%s: jacobian must be none or a function of u, not %s", c.Name, value.TypeName(jv))
	}
	return term, have, nil
}

// jacobianValue turns what a jacobian function returned into an operator:
// a vector or number is the diagonal, a matrix or an operator itself.
func jacobianValue(c *eval.Call, r value.Value, n int) (linop.Operator, error) {
	var op linop.Operator
	switch t := r.(type) {
	case value.Num:
		op = &linop.Diag{D: constVec(n, float64(t))}
	case *value.Vec:
		if t.IsComplex() || len(t.R) != n {
			return nil, value.ValueErrorf("%s: jacobian returned a vector of %d entries; the diagonal of N'(u) needs %d real entries", c.Name, t.Len(), n)
		}
		op = &linop.Diag{D: append([]float64(nil), t.R...)}
	case *value.Matrix:
		if t.Rows != n || t.Cols != n {
			return nil, value.ValueErrorf("%s: jacobian returned a %d×%d matrix; the operator has order %d", c.Name, t.Rows, t.Cols, n)
		}
		op = linop.NewDense(mat.NewDense(n, n, append([]float64(nil), t.Data...)))
	case *objects.Operator:
		if r, k := t.Op.Dims(); r != n || k != n {
			return nil, value.ValueErrorf("%s: jacobian returned a %d×%d operator; the operator has order %d", c.Name, r, k, n)
		}
		op = t.Op
	default:
		return nil, value.TypeErrorf("%s: jacobian must return the diagonal of N'(u) (a vector or number), a matrix or an operator, not %s", c.Name, value.TypeName(r))
	}
	if m, ok := linop.NormInf(op); ok && (math.IsNaN(m) || math.IsInf(m, 0)) {
		return nil, value.ValueErrorf("%s: jacobian returned non-finite entries", c.Name)
	}
	return op, nil
}

// steadyError turns the solver's failures into language errors; an error
// of a user function (nonlinear, jacobian) passes unchanged, with its own
// position and call stack.
func steadyError(c *eval.Call, err error) error {
	if c.Ctx != nil && c.Ctx.Err() != nil {
		return value.Errorf(value.ClassInterrupted, "interrupted")
	}
	var (
		nc *steady.NoConvergenceError
		sg *steady.SingularError
		ls *steady.LineSearchError
		nf *steady.NonFiniteError
		je *steady.JacobianError
		ee *eval.Error
		ve *value.Error
	)
	switch {
	case errors.As(err, &ee), errors.As(err, &ve):
		return err
	case errors.As(err, &nc), errors.As(err, &sg), errors.As(err, &ls), errors.As(err, &je):
		return &value.Error{Name: value.ClassNumerical, Msg: c.Name + ": " + err.Error(), Cause: err}
	case errors.As(err, &nf):
		return &value.Error{Name: value.ClassValue, Msg: c.Name + ": " + err.Error(), Cause: err}
	}
	return numericsError(c, err)
}

func steadyImpl(c *eval.Call) (value.Value, error) {
	a, n, err := squareOperator(c, 0)
	if err != nil {
		return nil, err
	}
	guess, err := stateArg(c, 1, a, n)
	if err != nil {
		return nil, err
	}
	term, haveN, err := steadyTerm(c, 2, 4, n)
	if err != nil {
		return nil, err
	}
	var f []float64
	fv, err := c.Arg(3)
	if err != nil {
		return nil, err
	}
	switch t := fv.(type) {
	case value.NoneType:
	case value.Num:
		f = constVec(n, float64(t))
	case *value.Vec, *value.Range:
		re, cx, err := numbers(c, "forcing", t)
		if err != nil {
			return nil, err
		}
		if cx != nil || len(re) != n {
			return nil, value.ValueErrorf("steadystate: the forcing must be real, one entry per unknown (%d), not %d entries", n, len(re)+len(cx))
		}
		f = append([]float64(nil), re...)
	case value.Callable:
		return nil, value.TypeErrorf("steadystate: a steady state needs a constant forcing (a vector or number), not a function of t")
	default:
		return nil, value.TypeErrorf("steadystate: forcing must be none, a vector or a number, not %s", value.TypeName(fv))
	}
	if k := firstNonFinite(f); k >= 0 {
		return nil, value.ValueErrorf("steadystate: the forcing must be finite; entry %d is %s", k, value.FormatNum(f[k]))
	}
	tol, err := argReal(c, 5)
	if err != nil {
		return nil, err
	}
	if !(tol > 0 && tol < 1) {
		return nil, value.ValueErrorf("steadystate: tol must lie in (0, 1), not %s", value.FormatNum(tol))
	}
	steps, err := argInt(c, 6)
	if err != nil {
		return nil, err
	}
	if steps < 1 || steps > 10000 {
		return nil, value.ValueErrorf("steadystate: steps must lie between 1 and 10000, not %d", steps)
	}
	if err := c.CheckSize(float64(n), "steadystate: the state"); err != nil {
		return nil, err
	}
	// Boundary data carried by the operator enter as the constant b of
	// Au + b; data that vary in time have no steady state.
	var ends *[2]float64
	if len(a.Lift) > 0 {
		if liftHasFunc(a.Lift) {
			return nil, value.ValueErrorf("steadystate: the operator's boundary data vary in time, so there is no steady state; give the grid constant data")
		}
		b, _ := objects.LiftConst(a.Lift, n)
		if f == nil {
			f = b
		} else {
			for i, x := range b {
				f[i] += x
			}
		}
		ev, err := endValues(c, a, []float64{0})
		if err != nil {
			return nil, err
		}
		if ev != nil {
			ends = &ev[0]
		}
	}
	res, err := steady.Solve(c.Ctx, a.Op, f, term, guess, steady.Options{Tol: tol, MaxSteps: steps, Progress: lazyProgress(c)})
	if err != nil {
		return nil, steadyError(c, err)
	}
	problem := "0 = A u"
	if haveN {
		problem += " + N(u)"
	}
	if fv != value.None {
		problem += " + f"
	}
	if len(a.Lift) > 0 {
		problem += " + b (boundary data)"
	}
	return objects.NewSteadyState(res, a, guess, problem, ends), nil
}

func linearisationImpl(c *eval.Call) (value.Value, error) {
	v, err := c.Arg(0)
	if err != nil {
		return nil, err
	}
	if s, ok := v.(*objects.SteadyState); ok {
		for i := 1; i < 4; i++ {
			if w, _ := c.Arg(i); w != value.None {
				return nil, value.ValueErrorf("linearisation: given a steady state, %s is taken from it; leave %s out", paramName(c, i), paramName(c, i))
			}
		}
		return s.Lin, nil
	}
	a, n, err := squareOperator(c, 0)
	if err != nil {
		return nil, err
	}
	if w, _ := c.Arg(1); w == value.None {
		return nil, value.ValueErrorf("linearisation: give the state at which to linearise (state=u), or a steady state from steadystate")
	}
	u, err := stateArg(c, 1, a, n)
	if err != nil {
		return nil, err
	}
	term, haveN, err := steadyTerm(c, 2, 3, n)
	if err != nil {
		return nil, err
	}
	if !haveN {
		return nil, value.ValueErrorf("linearisation: without a nonlinear term the linearisation is A itself; give nonlinear=N")
	}
	jac, err := steady.JacobianAt(c.Ctx, a.Op, term, u)
	if err != nil {
		return nil, steadyError(c, err)
	}
	return &objects.Operator{Op: steady.Linearisation(a.Op, jac.Op), Grid: a.Grid, Label: "A + N'(u)"}, nil
}

func continuationImpl(c *eval.Call) (value.Value, error) {
	v, err := c.Arg(0)
	if err != nil {
		return nil, err
	}
	ps, err := finiteReals(c, "values", "", v)
	if err != nil {
		return nil, err
	}
	if len(ps) == 0 {
		return nil, value.ValueErrorf("continuation: values is empty")
	}
	for k := 1; k < len(ps); k++ {
		if ps[k] == ps[k-1] {
			return nil, value.ValueErrorf("continuation: values[%d] repeats values[%d] = %s; a branch needs distinct values", k, k-1, value.FormatNum(ps[k]))
		}
	}
	fv, err := c.Arg(1)
	if err != nil {
		return nil, err
	}
	f, ok := fv.(value.Callable)
	if !ok {
		return nil, value.TypeErrorf("continuation: f must be a function (p, u) -> steadystate(…), not %s", value.TypeName(fv))
	}
	pname := "p"
	if prm := f.Params(); len(prm) < 2 {
		return nil, value.ValueErrorf("continuation: f must take the parameter and the guess, (p, u) -> steadystate(…, u, …)")
	} else if !prm[0].Variadic {
		pname = prm[0].Name
	}
	gv, err := c.Arg(2)
	if err != nil {
		return nil, err
	}
	var guess value.Value
	switch t := gv.(type) {
	case value.Num:
		guess = t
	case *value.Vec, *value.Range:
		re, cx, err := numbers(c, "guess", t)
		if err != nil {
			return nil, err
		}
		if cx != nil {
			return nil, value.TypeErrorf("continuation: guess must be real")
		}
		if k := firstNonFinite(re); k >= 0 {
			return nil, value.ValueErrorf("continuation: guess must be finite; entry %d is %s", k, value.FormatNum(re[k]))
		}
		guess = value.RealVec(append([]float64(nil), re...))
	default:
		return nil, value.TypeErrorf("continuation: guess must be a vector or a number, not %s", value.TypeName(gv))
	}
	if err := c.CheckSize(6*float64(len(ps)), "continuation: the table"); err != nil {
		return nil, err
	}
	progress := lazyProgress(c)
	var rows [][]value.Value
	var states value.List
	var prev [][]float64 // the last two states
	note := ""
	for k, p := range ps {
		if err := c.Tick(1); err != nil {
			return nil, err
		}
		progress(k, len(ps))
		g := guess
		switch {
		case len(prev) == 1:
			g = value.RealVec(append([]float64(nil), prev[0]...))
		case len(prev) == 2:
			a, b := prev[0], prev[1]
			if len(a) == len(b) {
				s := (p - ps[k-1]) / (ps[k-1] - ps[k-2])
				w := make([]float64, len(b))
				for i := range w {
					w[i] = b[i] + s*(b[i]-a[i])
				}
				g = value.RealVec(w)
			}
		}
		r, err := c.Apply(f, value.Num(p), g)
		if err != nil {
			if c.Ctx != nil && c.Ctx.Err() != nil {
				return nil, value.Errorf(value.ClassInterrupted, "interrupted")
			}
			if k == 0 {
				return nil, err
			}
			note = fmt.Sprintf("stopped at %s = %s: %s", pname, value.FormatNum(p), firstLine(err))
			break
		}
		st, ok := r.(*objects.SteadyState)
		if !ok {
			return nil, value.TypeErrorf("continuation: f must return a steady state (the result of steadystate), but at %s = %s it returned %s", pname, value.FormatNum(p), value.TypeName(r))
		}
		u := st.Res.U
		if len(prev) == 2 {
			prev = prev[1:]
		}
		prev = append(prev, u)
		states = append(states, value.RealVec(append([]float64(nil), u...)))
		norm := 0.0
		for _, x := range u {
			norm = math.Max(norm, math.Abs(x))
		}
		rows = append(rows, []value.Value{value.Num(p), value.Num(norm), value.Num(st.Res.Residual), value.Num(st.Res.ErrEst),
			value.Num(float64(len(st.Res.Steps))), value.Num(st.Res.InvNorm)})
	}
	progress(len(ps), len(ps))
	cols := []string{pname, "norm", "residual", "errest", "steps", "inverse_norm"}
	t := objects.NewTable(fmt.Sprintf("branch of steady states over %d of %d values of %s", len(rows), len(ps), pname), cols, rows)
	t.Named = append(t.Named, objects.Named{Name: "states", X: states}, objects.Named{Name: "stopped", X: value.Str(note)})
	if note != "" {
		t.Notes = append(t.Notes, note)
	}
	t.Figure = sweepFigure(pname, cols, rows)
	return t, nil
}

// firstLine is an error's message without the position and source
// excerpt a user function's error carries.
func firstLine(err error) string {
	m := err.Error()
	var ee *eval.Error
	if errors.As(err, &ee) {
		m = ee.Msg // without the position, which the table cannot point at
	}
	if i := strings.IndexByte(m, '\n'); i >= 0 {
		m = m[:i]
	}
	return m
}

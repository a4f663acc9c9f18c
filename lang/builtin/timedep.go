package builtin

import (
	"errors"
	"fmt"

	"semiflow/lang/eval"
	"semiflow/lang/objects"
	"semiflow/lang/value"
	"semiflow/numerics/expo"
	"semiflow/numerics/linop"
)

// Time-dependent generators in propagate: A given as a function of t
// (the commutator-free Magnus method of numerics/expo) or as a list of
// operators with switching times (piecewise constant, exact).

// propagateTimeDependent takes propagate's route for a time-dependent A:
// a function t -> A(t), or a list of operators A_0, A_1, … that switch at
// the times in switches. ok is false when A is neither.
func propagateTimeDependent(c *eval.Call) (r value.Value, ok bool, err error) {
	v, err := c.Arg(0)
	if err != nil {
		return nil, true, err
	}
	switch A := v.(type) {
	case value.Callable:
		r, err = propagateMagnus(c, A)
		return r, true, err
	case value.List:
		r, err = propagatePieces(c, A)
		return r, true, err
	}
	return nil, false, nil
}

// operatorAt calls the user's A(t) and returns its operator.
func operatorAt(c *eval.Call, f value.Value, t float64) (*objects.Operator, error) {
	r, err := c.Apply(f, value.Num(t))
	if err != nil {
		return nil, err
	}
	a, err := objects.AsOperator(r)
	if err != nil {
		var e *value.Error
		if errors.As(err, &e) {
			return nil, &value.Error{Name: e.Name, Msg: fmt.Sprintf("%s: A(t) at t = %s %s", c.Name, value.FormatNum(t), e.Msg), Cause: e.Cause}
		}
		return nil, err
	}
	if r, k := a.Op.Dims(); r != k {
		return nil, value.ValueErrorf("%s: A(t) at t = %s must be square, not %d×%d", c.Name, value.FormatNum(t), r, k)
	}
	if a.IsComplex() {
		return nil, value.ValueErrorf("%s: A(t) at t = %s is complex; a time-dependent complex operator is not supported yet (write it as a real block operator with blocks)", c.Name, value.FormatNum(t))
	}
	if len(a.Lift) > 0 {
		return nil, value.ValueErrorf("%s: A(t) at t = %s carries boundary data, which a time-dependent operator does not take yet; give homogeneous ends and the data as a forcing of a constant operator", c.Name, value.FormatNum(t))
	}
	return a, nil
}

// userOrNumerics returns a language error (a user function's, raised
// inside the numerics) as it is, and turns any other into one.
func userOrNumerics(c *eval.Call, err error) error {
	var e *value.Error
	if errors.As(err, &e) {
		return e
	}
	return numericsError(c, err)
}

// operatorAtFunc is A(t) for the numerics, of order n, from t0 on.
func operatorAtFunc(c *eval.Call, f value.Value, n int, t0 float64) expo.OperatorAt {
	return func(s float64) (linop.Operator, error) {
		t := t0 + s
		a, err := operatorAt(c, f, t)
		if err != nil {
			return nil, err
		}
		if r, _ := a.Op.Dims(); r != n {
			return nil, value.ValueErrorf("%s: A(t) at t = %s is %d×%d, but A(0) is %d×%d", c.Name, value.FormatNum(t), r, r, n, n)
		}
		return a.Op, nil
	}
}

// shiftedBreaks returns the breaks after t0, as offsets from t0.
func shiftedBreaks(breaks []float64, t0 float64) []float64 {
	var out []float64
	for _, b := range breaks {
		if b > t0 {
			out = append(out, b-t0)
		}
	}
	return out
}

func propagateMagnus(c *eval.Call, f value.Callable) (value.Value, error) {
	if c.Args[6] != value.None {
		return nil, value.ValueErrorf("propagate: a time-dependent operator A(t) takes no nonlinear term (not supported yet); give a constant operator for that")
	}
	if requiredParams(f) > 1 || len(f.Params()) == 0 {
		return nil, value.TypeErrorf("propagate: a time-dependent A must be a function of one argument t returning an operator, e.g. t -> (1 + sin(t))*L")
	}
	a0, err := operatorAt(c, f, 0)
	if err != nil {
		return nil, err
	}
	n, _ := a0.Op.Dims()
	u0, err := realInitialValue(c, a0, n)
	if err != nil {
		return nil, err
	}
	times, _, err := outputTimes(c)
	if err != nil {
		return nil, err
	}
	if err := c.CheckSize(float64(len(times))*float64(n), "propagate: the solution"); err != nil {
		return nil, err
	}
	ps, err := propagateSettings(c)
	if err != nil {
		return nil, err
	}
	opts := expo.Options{Method: ps.method, Tol: ps.tol, Crosscheck: ps.cross, Progress: lazyProgress(c)}
	ctl := expo.StepControl{Steps: ps.steps, Breaks: ps.switches}
	src, err := sourceFunc(c, c.Args[5], n, 0)
	if err != nil {
		return nil, err
	}
	var sol *expo.Solution
	problem := "u' = A(t) u"
	if src == nil {
		sol, _, err = expo.PropagateMagnus(c.Ctx, operatorAtFunc(c, f, n, 0), u0, times, ctl, opts)
	} else {
		sol, _, err = expo.PropagateMagnusForced(c.Ctx, operatorAtFunc(c, f, n, 0), src, u0, times, ctl, opts)
		problem += " + f"
	}
	if err != nil {
		return nil, userOrNumerics(c, err)
	}
	if err := finiteSolution(sol); err != nil {
		return nil, err
	}
	return &objects.Solution{S: sol, Grid: a0.Grid, Problem: problem, Label: "A(t)",
		Flow: &magnusFlow{f: f, forcing: c.Args[5], n: n, u0: u0, breaks: ps.switches, opts: opts}}, nil
}

// sourceFunc is a forcing beside a time-dependent A, at the times t0 + t:
// nil for none, a constant for a number or a vector, or the user's
// function of t (its values checked: finite, one per unknown).
func sourceFunc(c *eval.Call, fv value.Value, n int, t0 float64) (func(t float64, dst []float64) error, error) {
	f, _, err := source(c, fv, n, t0)
	return f, err
}

// source is sourceFunc with the constant vector of a constant forcing (nil
// for a function of t).
func source(c *eval.Call, fv value.Value, n int, t0 float64) (func(t float64, dst []float64) error, []float64, error) {
	var cst []float64
	switch f := fv.(type) {
	case value.NoneType:
		return nil, nil, nil
	case value.Num:
		cst = constVec(n, float64(f))
	case *value.Vec, *value.Range:
		re, cx, err := numbers(c, "forcing", f)
		if err != nil {
			return nil, nil, err
		}
		if cx != nil || len(re) != n {
			return nil, nil, value.ValueErrorf("propagate: the forcing vector must be real, one entry per unknown (%d), not %d entries", n, len(re)+len(cx))
		}
		cst = re
	case value.Callable:
		return func(t float64, dst []float64) error {
			v, err := callForcing(c, f, n, t0+t)
			if err != nil {
				return err
			}
			copy(dst, v)
			return nil
		}, nil, nil
	default:
		return nil, nil, value.TypeErrorf("propagate: forcing must be none, a vector, a number or a function of t, not %s", value.TypeName(f))
	}
	if k := firstNonFinite(cst); k >= 0 {
		return nil, nil, value.ValueErrorf("propagate: the forcing must be finite; forcing[%d] = %s", k, value.FormatNum(cst[k]))
	}
	return func(_ float64, dst []float64) error { copy(dst, cst); return nil }, cst, nil
}

func propagatePieces(c *eval.Call, list value.List) (value.Value, error) {
	if c.Args[6] != value.None {
		return nil, value.ValueErrorf("propagate: a piecewise-constant operator takes no nonlinear term (not supported yet); give a constant operator for that")
	}
	if len(list) == 0 {
		return nil, value.ValueErrorf("propagate: A is an empty list; give the operators [A0, A1, …] with switches=[s1, …], the times where each takes over")
	}
	ops := make([]linop.Operator, len(list))
	var first *objects.Operator
	n := 0
	for k, v := range list {
		a, err := objects.AsOperator(v)
		if err != nil {
			e := err.(*value.Error)
			return nil, &value.Error{Name: e.Name, Msg: fmt.Sprintf("propagate: A[%d] %s", k, e.Msg), Cause: e.Cause}
		}
		if a.IsComplex() {
			return nil, value.ValueErrorf("propagate: A[%d] is complex; a piecewise-constant complex operator is not supported yet (write it as a real block operator with blocks)", k)
		}
		if len(a.Lift) > 0 {
			return nil, value.ValueErrorf("propagate: A[%d] carries boundary data, which a piecewise-constant operator does not take yet; give homogeneous ends", k)
		}
		r, cc := a.Op.Dims()
		if k == 0 {
			first, n = a, r
		}
		if r != cc || r != n {
			return nil, value.ValueErrorf("propagate: A[%d] is %d×%d, but A[0] is %d×%d: the pieces must be square of one size", k, r, cc, n, n)
		}
		ops[k] = a.Op
	}
	ps, err := propagateSettings(c)
	if err != nil {
		return nil, err
	}
	if len(ps.switches) != len(list)-1 {
		return nil, value.ValueErrorf("propagate: %d operators need %d switching time%s (switches=[…], where A[1], A[2], … take over), not %d", len(list), len(list)-1, plural(len(list)-1), len(ps.switches))
	}
	for k, s := range ps.switches {
		if !(s > 0) || (k > 0 && !(s > ps.switches[k-1])) {
			return nil, value.ValueErrorf("propagate: switches must be positive and increasing; switches[%d] = %s", k, value.FormatNum(s))
		}
	}
	if ps.steps != 0 {
		return nil, value.ValueErrorf("propagate: steps does not apply to a piecewise-constant operator: each piece is one exponential")
	}
	u0, err := realInitialValue(c, first, n)
	if err != nil {
		return nil, err
	}
	times, _, err := outputTimes(c)
	if err != nil {
		return nil, err
	}
	if err := c.CheckSize(float64(len(times))*float64(n), "propagate: the solution"); err != nil {
		return nil, err
	}
	opts := expo.Options{Method: ps.method, Tol: ps.tol, Crosscheck: ps.cross, Progress: lazyProgress(c)}
	fl := &piecesFlow{ops: ops, u0: u0, forcing: c.Args[5], switches: ps.switches, opts: opts}
	sol, err := fl.run(c, 0, u0, times, opts)
	if err != nil {
		return nil, err
	}
	if err := finiteSolution(sol); err != nil {
		return nil, err
	}
	problem := "u' = A_k u between switches"
	if c.Args[5] != value.None {
		problem = "u' = A_k u + f between switches"
	}
	return &objects.Solution{S: sol, Grid: first.Grid, Problem: problem, Label: fmt.Sprintf("%d pieces", len(list)), Flow: fl}, nil
}

// realInitialValue is propagate's u0 (argument 1) for the time-dependent
// routes, which are real: a real vector, a number (constant) or a function
// sampled on a's grid, n entries.
func realInitialValue(c *eval.Call, a *objects.Operator, n int) ([]float64, error) {
	var u0 []float64
	var err error
	switch v := c.Args[1].(type) {
	case *value.Vec, *value.Range:
		re, cx, err := numbers(c, "u0", v)
		if err != nil {
			return nil, err
		}
		if cx != nil {
			return nil, value.TypeErrorf("propagate: u0 must be real for a time-dependent operator (complex ones are not supported yet)")
		}
		u0 = append([]float64(nil), re...)
	case value.Num:
		u0 = constVec(n, float64(v))
	case value.Callable:
		if a.Grid == nil {
			return nil, value.TypeErrorf("propagate: u0 is a function but the operator has no grid to sample it on; give a vector")
		}
		if u0, err = sampleOn(c, "u0", v, a.Grid); err != nil {
			return nil, err
		}
	default:
		return nil, value.TypeErrorf("propagate: u0 must be a real vector, a number or a function on the operator's grid, not %s", value.TypeName(v))
	}
	if len(u0) != n {
		return nil, value.ValueErrorf("propagate: the operator is %d×%d but u0 has %d entries", n, n, len(u0))
	}
	if k := firstNonFinite(u0); k >= 0 {
		return nil, value.ValueErrorf("propagate: the initial value must be finite; u0[%d] = %s", k, value.FormatNum(u0[k]))
	}
	return u0, nil
}

// finiteSolution refuses a solution that overflowed.
func finiteSolution(sol *expo.Solution) error {
	for i, u := range sol.Values {
		if k := firstNonFinite(u); k >= 0 {
			return value.ValueErrorf("propagate: the solution is not finite at t = %s (entry %d is %s): it overflows double precision",
				value.FormatNum(sol.Times[i]), k, value.FormatNum(u[k]))
		}
	}
	return nil
}

// flow restarts a solved problem from a known state: what evaluating a
// solution between its output times needs (crossing's dense output).
type flow interface {
	// start is u(0).
	start() []float64
	// advance returns u(t1) from u(t0) = u (t1 ≥ t0) with an estimate of
	// its own error (∞-norm), asked to tol relative to ‖u‖∞.
	advance(c *eval.Call, t0 float64, u []float64, t1, tol float64) ([]float64, float64, error)
	// how says in a few words how it advances.
	how() string
}

// restartOpts are the options of a restart: the problem's method, the
// tolerance asked, no cross-check and no progress display of its own.
func restartOpts(o expo.Options, tol float64) expo.Options {
	o.Tol, o.Crosscheck, o.Progress = tol, false, nil
	return o
}

// linearFlow is u' = Au + f with a constant A, f the user's forcing plus
// the boundary data lifted into it.
type linearFlow struct {
	op       linop.Operator
	u0       []float64
	forcing  value.Value // none, a number, a vector or a function of t
	lift     []objects.LiftTerm
	switches []float64
	opts     expo.Options
}

// newFlow is the flow of propagate's constant-operator route: linear, or
// semilinear with a nonlinear term.
func newFlow(op linop.Operator, u0 []float64, forcing, nonlinear value.Value, lift []objects.LiftTerm, switches []float64, opts expo.Options) flow {
	l := &linearFlow{op: op, u0: u0, forcing: forcing, lift: lift, switches: switches, opts: opts}
	if nl, ok := nonlinear.(value.Callable); ok {
		return &semilinearFlow{linearFlow: l, nl: nl}
	}
	return l
}

// nonlinearArgs are the arguments of the user's N: the state, and the time
// when N takes two parameters.
func nonlinearArgs(nl value.Callable, t float64, u []float64) []value.Value {
	args := []value.Value{value.RealVec(append([]float64(nil), u...))}
	if len(nl.Params()) >= 2 {
		args = append(args, value.Num(t))
	}
	return args
}

// nonlinearTerm is N(u, t) + f(t) at the time t0 + t for ETDRK4: the
// user's N plus the source src (absolute times; nil for none). The first
// error of a user function goes to *callErr, and the term is zero from
// then on.
func nonlinearTerm(c *eval.Call, nl value.Callable, src *expo.Forcing, n int, t0 float64, callErr *error) expo.Nonlinear {
	return func(t float64, u, dst []float64) {
		if *callErr != nil {
			clear(dst)
			return
		}
		v, err := callVector(c, "nonlinear", nl, n, nonlinearArgs(nl, t0+t, u)...)
		if err != nil {
			*callErr = err
			clear(dst)
			return
		}
		copy(dst, v)
		switch {
		case src == nil:
		case src.Const != nil:
			for i := range dst {
				dst[i] += src.Const[i]
			}
		default:
			f := make([]float64, n)
			src.Func(t0+t, f)
			for i := range dst {
				dst[i] += f[i]
			}
		}
	}
}

// semilinearFlow is u' = Au + N(u) + f, restarted by ETDRK4.
type semilinearFlow struct {
	*linearFlow
	nl value.Callable
}

func (s *semilinearFlow) how() string { return "ETDRK4 from u(t_k)" }

func (s *semilinearFlow) advance(c *eval.Call, t0 float64, u []float64, t1, tol float64) ([]float64, float64, error) {
	n := len(u)
	var callErr error
	src, err := s.source(c, n, &callErr)
	if err != nil {
		return nil, 0, err
	}
	N := nonlinearTerm(c, s.nl, src, n, t0, &callErr)
	sol, _, err := expo.ETDRK4(c.Ctx, s.op, N, u, []float64{t1 - t0}, expo.StepControl{Breaks: shiftedBreaks(s.switches, t0)}, restartOpts(s.opts, tol))
	if callErr != nil {
		return nil, 0, callErr
	}
	if err != nil {
		return nil, 0, numericsError(c, err)
	}
	return sol.Values[0], sol.ErrEst[0], nil
}

func (l *linearFlow) start() []float64 { return l.u0 }

func (l *linearFlow) how() string {
	if l.forcing == value.None && len(l.lift) == 0 {
		return "e^{(t−t_k)A}u(t_k)"
	}
	return "the forced propagation from u(t_k)"
}

// source is the forcing at absolute times t: the user's plus the lifted
// boundary data; nil when there is none.
func (l *linearFlow) source(c *eval.Call, n int, callErr *error) (*expo.Forcing, error) {
	var f *expo.Forcing
	switch fv := l.forcing.(type) {
	case value.NoneType:
	case value.Num:
		f = &expo.Forcing{Const: constVec(n, float64(fv))}
	case *value.Vec, *value.Range:
		re, _, err := numbers(c, "forcing", fv)
		if err != nil {
			return nil, err
		}
		f = &expo.Forcing{Const: re}
	case value.Callable:
		f = &expo.Forcing{Breaks: l.switches, Func: func(t float64, dst []float64) {
			if *callErr != nil {
				return
			}
			v, err := callForcing(c, fv, n, t)
			if err != nil {
				*callErr = err
				return
			}
			copy(dst, v)
		}}
	default:
		return nil, value.TypeErrorf("%s: the solution's forcing is %s, which cannot be restarted", c.Name, value.TypeName(fv))
	}
	if len(l.lift) > 0 {
		return withLift(c, l.lift, f, n, l.switches, callErr)
	}
	return f, nil
}

func (l *linearFlow) advance(c *eval.Call, t0 float64, u []float64, t1, tol float64) ([]float64, float64, error) {
	n := len(u)
	o := restartOpts(l.opts, tol)
	dt := []float64{t1 - t0}
	var callErr error
	f, err := l.source(c, n, &callErr)
	if err != nil {
		return nil, 0, err
	}
	var sol *expo.Solution
	switch {
	case f == nil:
		sol, err = expo.Propagate(c.Ctx, l.op, u, dt, o)
	case f.Func == nil:
		sol, err = expo.PropagateForced(c.Ctx, l.op, u, expo.Forcing{Const: f.Const}, dt, o)
	default:
		sol, err = expo.PropagateForced(c.Ctx, l.op, u, expo.Forcing{Breaks: shiftedBreaks(f.Breaks, t0),
			Func: func(s float64, dst []float64) { f.Func(t0+s, dst) }}, dt, o)
	}
	if callErr != nil {
		return nil, 0, callErr
	}
	if err != nil {
		return nil, 0, numericsError(c, err)
	}
	return sol.Values[0], sol.ErrEst[0], nil
}

// magnusFlow is u' = A(t)u (+ f).
type magnusFlow struct {
	f       value.Value
	forcing value.Value
	n       int
	u0      []float64
	breaks  []float64
	opts    expo.Options
}

func (m *magnusFlow) start() []float64 { return m.u0 }
func (m *magnusFlow) how() string      { return "the Magnus integration from u(t_k)" }

func (m *magnusFlow) advance(c *eval.Call, t0 float64, u []float64, t1, tol float64) ([]float64, float64, error) {
	src, err := sourceFunc(c, m.forcing, m.n, t0)
	if err != nil {
		return nil, 0, err
	}
	ctl := expo.StepControl{Breaks: shiftedBreaks(m.breaks, t0)}
	var sol *expo.Solution
	if src == nil {
		sol, _, err = expo.PropagateMagnus(c.Ctx, operatorAtFunc(c, m.f, m.n, t0), u, []float64{t1 - t0}, ctl, restartOpts(m.opts, tol))
	} else {
		sol, _, err = expo.PropagateMagnusForced(c.Ctx, operatorAtFunc(c, m.f, m.n, t0), src, u, []float64{t1 - t0}, ctl, restartOpts(m.opts, tol))
	}
	if err != nil {
		return nil, 0, userOrNumerics(c, err)
	}
	return sol.Values[0], sol.ErrEst[0], nil
}

// piecesFlow is u' = A_k u (+ f) between switches.
type piecesFlow struct {
	ops      []linop.Operator
	u0       []float64
	forcing  value.Value // none, a number, a vector or a function of t
	switches []float64
	opts     expo.Options
}

// run propagates from u(t0) = u to the times t0 + offs with the pieces in
// force from t0 on.
func (p *piecesFlow) run(c *eval.Call, t0 float64, u []float64, offs []float64, o expo.Options) (*expo.Solution, error) {
	k := 0 // the piece in force at t0: A_k on [s_k, s_{k+1})
	for k < len(p.switches) && p.switches[k] <= t0 {
		k++
	}
	n := len(u)
	src, cst, err := source(c, p.forcing, n, t0)
	if err != nil {
		return nil, err
	}
	ops, sw := p.ops[k:], shiftedBreaks(p.switches[k:], t0)
	var sol *expo.Solution
	var callErr error
	switch {
	case src == nil:
		sol, err = expo.PropagatePiecewise(c.Ctx, ops, sw, u, offs, o)
	case cst != nil:
		sol, err = expo.PropagatePiecewiseForced(c.Ctx, ops, sw, expo.Forcing{Const: cst}, u, offs, o)
	default:
		f := expo.Forcing{Breaks: sw, Func: func(t float64, dst []float64) {
			if callErr == nil {
				callErr = src(t, dst)
			}
		}}
		sol, err = expo.PropagatePiecewiseForced(c.Ctx, ops, sw, f, u, offs, o)
	}
	if callErr != nil {
		return nil, callErr
	}
	if err != nil {
		return nil, numericsError(c, err)
	}
	return sol, nil
}

func (p *piecesFlow) start() []float64 { return p.u0 }
func (p *piecesFlow) how() string      { return "the product of the pieces' exponentials from u(t_k)" }

func (p *piecesFlow) advance(c *eval.Call, t0 float64, u []float64, t1, tol float64) ([]float64, float64, error) {
	sol, err := p.run(c, t0, u, []float64{t1 - t0}, restartOpts(p.opts, tol))
	if err != nil {
		return nil, 0, err
	}
	return sol.Values[0], sol.ErrEst[0], nil
}

// sanity: the flows satisfy the interface.
var (
	_ flow = (*linearFlow)(nil)
	_ flow = (*magnusFlow)(nil)
	_ flow = (*piecesFlow)(nil)
	_ flow = (*semilinearFlow)(nil)
)

// plural is "s" unless k is 1.
func plural(k int) string {
	if k == 1 {
		return ""
	}
	return "s"
}

package expo

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"
	"time"

	"semiflow/numerics/abandon"
	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
	"semiflow/numerics/solve"
)

// Method names accepted in Options.Method.
const (
	MethodAuto      = "auto"
	MethodDense     = "dense"
	MethodTaylor    = "taylor"
	MethodKrylov    = "krylov"
	MethodContour   = "contour"
	MethodResolvent = "resolvent-powers"
	MethodKronecker = "kronecker"
	MethodShiftInv  = "shift-invert"
)

// Contour shapes accepted in Options.Contour.
const (
	ContourParabolic  = "parabolic"
	ContourHyperbolic = "hyperbolic"
	ContourCotangent  = "cotangent"
)

// Options controls Propagate. The zero value asks for the automatic choice
// at tolerance 1e-10.
type Options struct {
	Method string  // one of the Method constants; "" means "auto"
	Tol    float64 // relative accuracy asked, ‖error‖_∞ ≲ Tol·‖u0‖_∞ (default 1e-10)

	// Crosscheck runs a second, independent method and records the largest
	// difference between the two results.
	Crosscheck bool

	// NoEscalate keeps the first method's result when its estimate misses
	// Tol; by default a second method is tried (see Propagate).
	NoEscalate bool

	// Progress, if not nil, is called with the work done and the work
	// expected (in products or solves) as the computation advances.
	Progress func(done, total int)

	KrylovDim int     // Krylov subspace dimension m (default 30)
	Contour   string  // contour shape (default cotangent)
	Nodes     int     // quadrature nodes N on the contour (default from Tol)
	Shift     float64 // contour shift σ: the contour is applied to A − σI (default: a Gershgorin bound when available)

	ResolventSteps  int // smallest n in (I − tA/n)^{-n} (default 16)
	ResolventLevels int // Richardson levels n, 2n, 4n, … (default 4)

	Workers int // parallel shifted solves (default GOMAXPROCS)

	workLimit int // products allowed (0: no limit); set by escalate
}

// Solution is the result of Propagate.
type Solution struct {
	Method  string        // method used
	Reason  string        // why this method (for "auto"), or "requested"
	Tol     float64       // tolerance asked
	Times   []float64     // output times, in the order given
	Values  [][]float64   // Values[i] ≈ e^{Times[i]·A}u0
	ErrEst  []float64     // estimate of ‖Values[i] − e^{Times[i]·A}u0‖_∞
	MatVecs int           // products with A (or Aᵀ), norm estimation included
	Solves  int           // shifted linear solves
	Factors int           // factorisations of shifted matrices
	Elapsed time.Duration // wall time

	// TolMet reports whether the tolerance asked was met: every error
	// estimate is at most Tol·‖u0‖_∞. When it is false, Shortfall says in
	// one line what could not be met (the best estimate against the
	// target); it is empty when TolMet is true.
	TolMet    bool
	Shortfall string

	// Escalation says what was done when the first estimate missed the
	// tolerance (a second method, its agreement), empty when nothing was.
	Escalation string

	Cross *Crosscheck // set when Options.Crosscheck was asked for
}

// Crosscheck records a second, independent computation of the same values.
type Crosscheck struct {
	Method  string
	MaxDiff float64 // max_i ‖Values[i] − other[i]‖_∞
	ErrEst  float64 // the second method's largest error estimate
	Elapsed time.Duration
	// Skipped, when not empty, says why no second method could be run;
	// MaxDiff and ErrEst are then meaningless.
	Skipped string
}

// CheckTol sets TolMet and Shortfall from the error estimates: the
// tolerance is met when max_i ErrEst[i] ≤ Tol·scale, where scale is the
// size the tolerance is relative to (‖u0‖_∞ for u' = Au, the accuracy
// Options.Tol asks for). A NaN estimate never meets it. Every path that
// fills ErrEst calls it last.
func (s *Solution) CheckTol(scale float64) {
	target := s.Tol * scale
	worst, at := 0.0, -1
	for i, e := range s.ErrEst {
		if math.IsNaN(e) {
			worst, at = math.Inf(1), i // an unknown error counts as the worst
			break
		}
		if e > worst {
			worst, at = e, i
		}
	}
	s.TolMet = at < 0 || worst <= target
	s.Shortfall = ""
	if !s.TolMet {
		s.Shortfall = fmt.Sprintf("tolerance %.3g not met: error estimate %.3g at t = %.6g exceeds %.3g (= tol·‖u0‖∞)",
			s.Tol, worst, s.Times[at], target)
	}
}

// MaxErrEst returns the largest error estimate over the output times.
func (s *Solution) MaxErrEst() float64 {
	m := 0.0
	for _, e := range s.ErrEst {
		m = math.Max(m, e)
	}
	return m
}

// Propagate computes u(t) = e^{tA}u0, the solution of u' = Au, u(0) = u0,
// at each of the given times t ≥ 0 (in any order), with the method named
// in opts (see the Method constants) and an error estimate per time.
//
// "auto" chooses: a Kronecker sum X⊕Y with small factors → "kronecker";
// order ≤ 400 → "dense"; t‖A‖₁ > 1000 with a sparse form → "shift-invert"
// (Krylov on (I − γA)⁻¹: polynomial methods would need about t‖A‖₁
// products; on the 1-D heat operator at N = 1e4 to 1e6 it was 1.3–4× faster
// than "contour" and, at t = 1, 100–1000× more accurate, the contour's
// solves at |z| ≪ t‖A‖ losing more to rounding); otherwise "taylor". Solution.Reason says which
// rule applied.
//
// The error-control contract: every ErrEst[i] is meant to bound the true
// ∞-norm error (by a priori bounds or a posteriori estimates, see each
// method), and TolMet says whether all of them are at most Tol·‖u0‖_∞.
// When the first method's estimate misses, Propagate escalates by itself
// (unless Options.NoEscalate): second, independent methods at Tol/100
// (escalationMethods, until one meets it), each within escalationWork
// products (dense exponentials of order ≤ 400 are not limited) and 60 s;
// the difference between the two plus the second's estimate is a second
// bound, and each time keeps the smaller. What was
// done is in Solution.Escalation; when the tolerance is still missed,
// Solution.Shortfall says by how much.
//
// Propagate panics with ErrShape if A is not square or len(u0) differs
// from its order. It returns an error for a negative or non-finite time, an
// unknown method, numerical failure, or when ctx is cancelled.
func Propagate(ctx context.Context, A linop.Operator, u0 []float64, times []float64, opts Options) (*Solution, error) {
	n, c := A.Dims()
	if n != c || len(u0) != n {
		panic(ErrShape)
	}
	for _, t := range times {
		if t < 0 || math.IsNaN(t) || math.IsInf(t, 0) {
			return nil, fmt.Errorf("expo: output time %v: times must be finite and nonnegative", t)
		}
	}
	if opts.Tol <= 0 {
		opts.Tol = 1e-10
	}
	// The choice of method and of the cross-check estimate ‖A‖₁ and test
	// symmetry with three work vectors of order n (normEst1, isSymmetric);
	// each method asks again for its own.
	if err := memguard.Vectors(setupVectors+linop.Scratch(A), n, memguard.RealBytes, "norm-estimate work vectors"); err != nil {
		return nil, err
	}
	start := time.Now()
	method, reason := opts.Method, "requested"
	if method == "" || method == MethodAuto {
		method, reason = chooseMethod(A, times)
	}
	sol, err := run(ctx, method, A, u0, times, opts)
	if err != nil {
		return nil, err
	}
	sol.Method, sol.Reason, sol.Tol = method, reason, opts.Tol
	u0n := normInf(u0)
	sol.CheckTol(u0n)
	var second *Solution // the escalation's run, reused by the cross-check
	if !sol.TolMet && !opts.NoEscalate {
		second = escalate(ctx, sol, A, u0, times, opts)
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		sol.CheckTol(u0n)
	}
	sol.Elapsed = time.Since(start)
	if opts.Crosscheck {
		sol.Cross = crosscheck(ctx, sol, second, A, u0, times, opts)
		if err := ctx.Err(); err != nil {
			return nil, err
		}
	}
	return sol, nil
}

// escalationWork is the work an escalation's second method may use: ten
// times the first run's products and shifted solves (a solve counted as
// ten products), at least 20000 products. Counted in work, not time, so a
// problem escalates the same way on a busy machine as on a quiet one.
func escalationWork(first *Solution) int {
	return max(10*(first.MatVecs+10*first.Solves), 20000)
}

// escalationWallCap bounds an escalation's wall time in any case
// (shifted solves and dense exponentials are not counted as products).
const escalationWallCap = 60 * time.Second

// escalate tries independent methods at a hundredth of the tolerance
// when the first estimate missed it (escalationMethods, in order, until the
// tolerance is met), each within escalationWork products. A second run's estimate
// e₂ and the difference d between the two give a second bound on the
// first's error, d + e₂ (true error ≤ d + the second method's true error);
// each time keeps the smaller bound, and the second method's values where
// its own estimate is smaller still. It returns the last second run (nil
// when none ran) and says what it did in sol.Escalation.
func escalate(ctx context.Context, sol *Solution, A linop.Operator, u0, times []float64, opts Options) *Solution {
	target := opts.Tol * normInf(u0)
	var notes []string
	var last *Solution
	for _, other := range escalationMethods(sol.Method, A) {
		s2, note := escalateOnce(ctx, sol, other, A, u0, times, opts)
		notes = append(notes, note)
		if s2 != nil {
			last = s2
		}
		if ctx.Err() != nil || sol.MaxErrEst() <= target {
			break
		}
	}
	sol.Escalation = sol.Method + "'s " + strings.Join(notes, "; then ")
	return last
}

// escalateOnce runs one second method for escalate and returns it with a
// note saying what it found (nil when it failed or ran out of time).
func escalateOnce(ctx context.Context, sol *Solution, other string, A linop.Operator, u0, times []float64, opts Options) (*Solution, string) {
	bctx, cancel := context.WithTimeout(ctx, escalationWallCap)
	defer cancel()
	o := opts
	o.Tol, o.Progress, o.Crosscheck = opts.Tol/100, nil, false
	if other != MethodDense {
		// Order ≤ maxEscalateDense makes a dense run's cost bounded.
		o.workLimit = escalationWork(sol)
	}
	first := sol.MaxErrEst()
	t0 := time.Now()
	s2, err := run(bctx, other, A, u0, times, o)
	if err != nil {
		switch {
		case errors.Is(err, errWorkBudget):
			return nil, fmt.Sprintf("estimate %.3g missed the tolerance; %s did not finish within its budget of %d products", first, other, o.workLimit)
		case bctx.Err() != nil && ctx.Err() == nil:
			return nil, fmt.Sprintf("estimate %.3g missed the tolerance; %s did not finish within %s", first, other, escalationWallCap)
		}
		return nil, fmt.Sprintf("estimate %.3g missed the tolerance; %s failed: %v", first, other, err)
	}
	s2.Method, s2.Elapsed = other, time.Since(t0)
	agree := maxDiffValues(sol.Values, s2.Values)
	used := 0
	for i := range sol.Values {
		d := 0.0
		for k := range sol.Values[i] {
			d = math.Max(d, math.Abs(sol.Values[i][k]-s2.Values[i][k]))
		}
		// Near the rounding level estimates are models rather than
		// bounds (Krylov's fell 3× short of a 1.5e-14 error when asked
		// for 1e-20): the second estimate counts as at least 1000·u·‖u‖∞.
		e2 := math.Max(s2.ErrEst[i], 1000*unitRoundoff*normInf(s2.Values[i]))
		if b := d + e2; b < sol.ErrEst[i] {
			sol.ErrEst[i] = b
		}
		if e2 < sol.ErrEst[i] {
			sol.Values[i], sol.ErrEst[i] = append([]float64(nil), s2.Values[i]...), e2
			used++
		}
	}
	sol.MatVecs += s2.MatVecs
	sol.Solves += s2.Solves
	sol.Factors += s2.Factors
	note := fmt.Sprintf("estimate %.3g missed the tolerance; %s at tol %.3g (estimate %.3g) agrees to %.3g",
		first, other, o.Tol, s2.MaxErrEst(), agree)
	if used > 0 {
		note += fmt.Sprintf(", its values kept at %d of %d times", used, len(times))
	}
	return s2, note
}

// maxEscalateDense is the largest order for which an escalation uses a
// dense exponential.
const maxEscalateDense = 400

// escalationMethods lists the second methods an escalation tries, in
// order: a dense exponential for small orders, Krylov, and
// shift-and-invert on a sparse operator; never the first method itself.
func escalationMethods(method string, A linop.Operator) []string {
	n, _ := A.Dims()
	var out []string
	if n <= maxEscalateDense {
		out = append(out, MethodDense)
	}
	out = append(out, MethodKrylov)
	if _, sparse := A.(linop.Sparser); sparse {
		out = append(out, MethodShiftInv)
	}
	if len(out) < 2 {
		out = append(out, MethodTaylor)
	}
	keep := out[:0]
	for _, m := range out {
		if m != method {
			keep = append(keep, m)
		}
	}
	return keep
}

// crosscheck runs Options.Crosscheck's second method, or reuses the
// escalation's run, and says in words when no second method could run.
func crosscheck(ctx context.Context, sol, second *Solution, A linop.Operator, u0, times []float64, opts Options) *Crosscheck {
	if second != nil {
		return &Crosscheck{Method: second.Method, MaxDiff: maxDiffValues(sol.Values, second.Values),
			ErrEst: second.MaxErrEst(), Elapsed: second.Elapsed}
	}
	other := crossMethod(sol.Method, A)
	t0 := time.Now()
	o := opts
	o.Progress, o.Crosscheck = nil, false
	s2, err := run(ctx, other, A, u0, times, o)
	if err != nil {
		return &Crosscheck{Method: other, Skipped: fmt.Sprintf("the second method, %s, failed: %v", other, err)}
	}
	return &Crosscheck{Method: other, MaxDiff: maxDiffValues(sol.Values, s2.Values), ErrEst: s2.MaxErrEst(), Elapsed: time.Since(t0)}
}

// maxDiffValues returns max_i ‖x[i] − y[i]‖_∞.
func maxDiffValues(x, y [][]float64) float64 {
	m := 0.0
	for i := range x {
		for k := range x[i] {
			m = math.Max(m, math.Abs(x[i][k]-y[i][k]))
		}
	}
	return m
}

// chooseMethod implements the "auto" rule documented on Propagate.
func chooseMethod(A linop.Operator, times []float64) (method, reason string) {
	n, _ := A.Dims()
	if k, ok := A.(*linop.KronSum); ok {
		f := linop.KronFactors(k)
		sizes := make([]string, len(f))
		small := true
		for i, op := range f {
			ni, _ := op.Dims()
			sizes[i] = fmt.Sprint(ni)
			small = small && ni <= maxDenseN
		}
		if small && len(f) == 2 {
			return MethodKronecker, fmt.Sprintf("Kronecker sum of factors %s and %s: e^{tX} U e^{tY}ᵀ costs two small dense exponentials", sizes[0], sizes[1])
		}
		if small {
			return MethodKronecker, fmt.Sprintf("Kronecker sum of %d factors of orders %s: e^{tF_1} ⊗ … ⊗ e^{tF_%d} applied by mode products costs %d small dense exponentials", len(f), strings.Join(sizes, ", "), len(f), len(f))
		}
	}
	if n <= 400 {
		return MethodDense, fmt.Sprintf("order %d ≤ 400: dense scaling and squaring is cheapest", n)
	}
	tmax := 0.0
	for _, t := range times {
		tmax = math.Max(tmax, t)
	}
	nrm := opNorm1(&counted{a: A})
	stiff := tmax * nrm
	if stiff > 1000 {
		if _, ok := A.(solve.Shifter); ok {
			return MethodShiftInv, fmt.Sprintf("t‖A‖₁ = %.3g is stiff and A factors its own shifts (a mass matrix or a second-order pencil): Krylov on (I − γA)⁻¹, whose convergence does not depend on ‖A‖", stiff)
		}
		if _, ok := A.(linop.Sparser); ok {
			return MethodShiftInv, fmt.Sprintf("t‖A‖₁ = %.3g is stiff and A has a sparse form: Krylov on (I − γA)⁻¹, whose convergence does not depend on ‖A‖", stiff)
		}
	}
	return MethodTaylor, fmt.Sprintf("order %d, t‖A‖₁ = %.3g: truncated Taylor series with scaling, about %.3g products", n, stiff, stiff+float64(len(times))*8)
}

// crossMethod picks the independent method used by Options.Crosscheck.
func crossMethod(method string, A linop.Operator) string {
	n, _ := A.Dims()
	switch method {
	case MethodDense:
		return MethodTaylor
	case MethodTaylor:
		if n <= 400 {
			return MethodDense
		}
		return MethodKrylov
	case MethodShiftInv:
		// For symmetric A with spectrum in (−∞, 0] the contour integral;
		// otherwise implicit-Euler powers, which need no sector. Neither
		// shares anything with the Krylov projection but the
		// factorisation routine.
		if isSymmetric(A) {
			if g, ok := gershgorinRight(A); ok && g <= 0 {
				return MethodContour
			}
		}
		return MethodResolvent
	case MethodContour, MethodKronecker, MethodResolvent:
		// Stiff or structured problems: Krylov's cost grows like √(t‖A‖)
		// for symmetric A, far below Taylor's t‖A‖.
		return MethodKrylov
	default:
		return MethodTaylor
	}
}

// run dispatches to one method on sorted times and returns the values in
// the caller's order.
func run(ctx context.Context, method string, A linop.Operator, u0 []float64, times []float64, opts Options) (*Solution, error) {
	order := make([]int, len(times))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool { return times[order[a]] < times[order[b]] })
	st := make([]float64, len(times))
	for i, k := range order {
		st[i] = times[k]
	}
	vals := make([][]float64, len(times))
	errs := make([]float64, len(times))
	sol := &Solution{Times: append([]float64(nil), times...)}
	var budget *workBudget
	if opts.workLimit > 0 {
		var cancel context.CancelCauseFunc
		ctx, cancel = context.WithCancelCause(ctx)
		defer cancel(nil)
		budget = &workBudget{left: opts.workLimit, stop: cancel}
	}
	c := &counted{a: A, budget: budget}
	var err error
	switch method {
	case MethodTaylor:
		mu := 0.0
		if d := opDiagonal(A); d != nil && len(d) > 0 {
			for _, v := range d {
				mu += v
			}
			mu /= float64(len(d))
		}
		c = &counted{a: A, budget: budget}
		op := A
		if mu != 0 {
			op = &shifted{a: A, mu: mu}
		}
		cs := &counted{a: op, budget: budget}
		tn := &taylorNorms{norm1: opNorm1(cs)}
		if mu != 0 {
			// Keep the shift only when it reduces the norm.
			if n0 := opNorm1(c); n0 <= tn.norm1 {
				cs, mu = &counted{a: A, matvecs: cs.matvecs, budget: budget}, 0
				tn.norm1 = n0
			}
		}
		err = taylorRun(ctx, cs, mu, tn, u0, st, opts.Tol, opts.Progress, vals, errs)
		c.matvecs += cs.matvecs
	case MethodKrylov:
		err = krylovRun(ctx, c, u0, st, opts, vals, errs)
	case MethodDense:
		// Checked between matrix products, each up to a second at order
		// 1500 on a busy machine: run under abandon, so an interrupt is
		// answered at once (A, e^{hA}, the second route's difference, |e^{hA}|
		// and the exponential's work: about ten n×n matrices).
		n, _ := A.Dims()
		_, err = abandon.Run(ctx, abandon.DenseBytes(n, 10), fmt.Sprintf("dense propagation of order %d", n), func() (struct{}, error) {
			return struct{}{}, denseRun(ctx, A, u0, st, opts, vals, errs)
		})
	case MethodKronecker:
		k, ok := A.(*linop.KronSum)
		if !ok {
			return nil, fmt.Errorf("%w: kronecker needs a Kronecker sum X ⊕ Y, and this operator has no such structure", ErrMethod)
		}
		err = kronRun(ctx, k, u0, st, opts, vals, errs)
	case MethodContour:
		var w work
		err = contourRun(ctx, A, u0, st, opts, vals, errs, &w)
		sol.Solves, sol.Factors = w.solves, w.factors
	case MethodShiftInv:
		var w work
		err = siKrylovRun(ctx, c, u0, st, opts, vals, errs, &w)
		sol.Solves, sol.Factors = w.solves, w.factors
	case MethodResolvent:
		var w work
		err = resolventRun(ctx, A, u0, st, opts, vals, errs, &w)
		sol.Solves, sol.Factors = w.solves, w.factors
	default:
		return nil, fmt.Errorf("%w: unknown method %q", ErrMethod, method)
	}
	if err != nil {
		if budget != nil && context.Cause(ctx) == errWorkBudget {
			return nil, errWorkBudget
		}
		return nil, err
	}
	sol.MatVecs = c.matvecs
	sol.Values = make([][]float64, len(times))
	sol.ErrEst = make([]float64, len(times))
	for i, k := range order {
		sol.Values[k] = vals[i]
		sol.ErrEst[k] = errs[i]
	}
	return sol, nil
}

// work counts shifted solves and factorisations.
type work struct {
	solves, factors int
}

// sparseForm returns A's explicit sparse form, if it has one.
func sparseForm(A linop.Operator) (*linop.CSR, bool) {
	s, ok := A.(linop.Sparser)
	if !ok {
		return nil, false
	}
	m, err := s.ToCSR()
	return m, err == nil
}

// gershgorinRight returns max_i (a_ii + Σ_{j≠i}|a_ij|), an upper bound on
// the real parts of the eigenvalues, when A has an explicit sparse form.
func gershgorinRight(A linop.Operator) (float64, bool) {
	m, ok := sparseForm(A)
	if !ok {
		return 0, false
	}
	g := math.Inf(-1)
	for i := 0; i < m.Rows; i++ {
		r := 0.0
		for p := m.RowPtr[i]; p < m.RowPtr[i+1]; p++ {
			if m.ColIdx[p] == i {
				r += m.Val[p]
			} else {
				r += math.Abs(m.Val[p])
			}
		}
		g = math.Max(g, r)
	}
	return g, true
}

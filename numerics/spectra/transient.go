package spectra

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"sort"
	"sync"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/expo"
	"semiflow/numerics/linop"
	"semiflow/numerics/roundoff"
)

// shape holds what the searches over the complex plane need: the Schur
// form, the numerical abscissae of A and −A and the eigenvalues.
type shape struct {
	s          *Schur
	omega      float64 // ω(A) = max Re W(A)
	omegaLeft  float64 // min Re W(A) = −ω(−A)
	eigs       []complex128
	spreadImag float64     // max |Im z| over W(A) (bounds where σ_ε can be)
	split      *splitTri   // T split once, shared by the σ_min solvers
	budget     *workBudget // the work limit of the searches, nil for none
	normF      float64     // ‖A‖_F
	// partialOK lets a Kreiss search that runs out of its budget after
	// its scan return the scan's best value (KreissResult.Partial).
	partialOK bool
}

// abscissaError returns α(A) = max Re λ and its error allowance from the
// Schur form: τ = n·u·‖A‖_F times the condition of the rightmost
// eigenvalue (the largest among those within the allowance of α), or
// √(τ‖A‖_F) when that condition is above IllCondLimit (ill is then true),
// as Spectrum.AbscissaError gives for the dense spectrum. Conditions come
// from the triangular factor, O(n²) each, for the eigenvalues that can lie
// within the largest allowance of α.
func (sh *shape) abscissaError() (al, tol float64, ill bool) {
	n := sh.s.N
	if n == 0 {
		return math.Inf(-1), 0, false
	}
	tau := roundoff.Threshold(n, sh.normF)
	idx := make([]int, n)
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(i, j int) bool { return rightOf(sh.eigs[idx[i]], sh.eigs[idx[j]]) })
	window := math.Max(tau*IllCondLimit, math.Sqrt(tau*sh.normF))
	sp := &Spectrum{}
	for _, i := range idx {
		if len(sp.Values) == maxLines || (len(sp.Values) > 0 && real(sp.Values[0])-real(sh.eigs[i]) > window) {
			break
		}
		sp.Values = append(sp.Values, sh.eigs[i])
		sp.Cond = append(sp.Cond, sh.s.eigCond(i))
	}
	tol, ill = abscissaRounding(sp, tau, sh.normF)
	return real(sp.Values[0]), tol, ill
}

// solver returns an inverse-Lanczos σ_min solver for zI − T to relative
// tolerance tol, sharing the split T; each goroutine needs its own. Its
// iterations stop early once ctx is cancelled.
func (sh *shape) solver(ctx context.Context, tol float64) *triSigma {
	var st *splitTri
	if sh.split != nil {
		st = sh.split.share()
	}
	ts := newTriSigmaOn(st, sh.s.T, sh.s.N, tol, 300)
	ts.done = ctx.Done()
	ts.work = sh.budget.counter()
	return ts
}

// sigmaMin is σ_min(zI − T) from a cold start with the right and left
// singular vectors v, u (see Schur.sigmaMin).
func (sh *shape) sigmaMin(ts *triSigma, z complex128) (float64, []complex128, []complex128) {
	res := ts.eval(z, false, true)
	return res.sigma, res.v, leftVector(sh.s.T, sh.s.N, z, res.v, res.sigma)
}

// newShape computes the shape of A: its Schur form, both numerical
// abscissae and the spread of W(A) in Im z. The dense factorisations cannot
// be interrupted, so they run under abandonable: on cancellation newShape
// returns ctx.Err() at once.
func newShape(ctx context.Context, m *mat.Dense) (*shape, error) {
	return newShapeWith(ctx, m, nil)
}

// newShapeWith is newShape reusing the Schur form s of m if s is not nil.
func newShapeWith(ctx context.Context, m *mat.Dense, s *Schur) (*shape, error) {
	n, _ := m.Dims()
	return abandonable(ctx, denseBytes(n, 10), fmt.Sprintf("dense spectral analysis of order %d", n), func() (*shape, error) {
		return shapeOf(m, s)
	})
}

func shapeOf(m *mat.Dense, s *Schur) (*shape, error) {
	if s == nil {
		var err error
		if s, err = schurOf(m); err != nil {
			return nil, err
		}
	}
	om, err := numAbscissa(m)
	if err != nil {
		return nil, err
	}
	neg := mat.DenseCopyOf(m)
	neg.Scale(-1, neg)
	omn, err := numAbscissa(neg)
	if err != nil {
		return nil, err
	}
	// max |Im z| over W(A) = λmax of the Hermitian (A − Aᵀ)/(2i), bounded by ‖(A−Aᵀ)/2‖₂.
	n, _ := m.Dims()
	k := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			k.Set(i, j, (m.At(i, j)-m.At(j, i))/2)
		}
	}
	var svd mat.SVD
	spread := 0.0
	if n > 0 && svd.Factorize(k, mat.SVDNone) {
		spread = svd.Values(nil)[0]
	}
	sh := &shape{s: s, omega: om, omegaLeft: -omn, eigs: s.Eigenvalues(), spreadImag: spread, normF: mat.Norm(m, 2)}
	if n > 0 {
		sh.split = newSplitTri(s.T, n)
	}
	return sh, nil
}

// rightmostOnLine returns the largest x with σ_min((x + iy)I − A) ≤ eps, or
// −Inf if the horizontal line Im z = y misses σ_ε(A). It walks leftwards
// from x = ω(A) + eps, where σ_min ≥ x − ω(A) ≥ eps. σ_min is 1-Lipschitz
// in z, so a step of σ_min − eps never skips a point of σ_ε; the walk
// takes the longer Newton step for log σ_min (∂σ/∂x = Re(uᴴv) from the
// singular vectors; σ_min often varies exponentially with x for strongly
// non-normal A) and, once a step lands inside σ_ε, finishes by bisection
// to absolute tolerance 1e-12·scale. A step longer than the Lipschitz
// step σ_min − eps is never longer than eps/2: every point z0 with
// σ_min(z0) ≤ eps/2 has the whole segment |x − Re z0| ≤ eps/2 inside σ_ε,
// so such a step cannot jump over it, and the walk is exact for every part
// of σ_ε that reaches down to σ_min ≤ eps/2 (for stiff operators W(A) is
// far wider than σ_ε near the imaginary axis, so steps scaled to W(A)
// would skip it). Only after maxWalk steps may steps grow beyond eps/2
// (to (x − lower)/maxWalk), which bounds the work. When a step longer
// than the Lipschitz step lands where σ increases leftwards, the minimum
// it passed is searched (golden section) for points of σ_ε. The walk stops
// at floor (returning −Inf) when floor > min Re W(A) − eps: a caller that
// only needs points right of floor saves the rest of the walk. It returns
// ctx.Err() when cancelled and ErrBudget when sh.budget is used up.
func (sh *shape) rightmostOnLine(ctx context.Context, y, eps, floor float64) (float64, error) {
	x := sh.omega + eps
	lower := math.Max(sh.omegaLeft-eps, floor)
	if x < lower {
		return math.Inf(-1), nil
	}
	tol := 1e-12 * (math.Abs(sh.omega) + math.Abs(sh.omegaLeft) + eps)
	ts := sh.solver(ctx, 1e-12)
	for it := 0; it < 2*maxWalk; it++ {
		if ctx.Err() != nil {
			return 0, ctx.Err()
		}
		if sh.budget.exhausted() {
			return 0, ErrBudget
		}
		sg, v, u := sh.sigmaMin(ts, complex(x, y))
		gap := sg - eps
		if gap <= tol {
			return x, nil // on the boundary to tolerance
		}
		// Longer than the Lipschitz step only by at most eps/2 (see above).
		long := eps / 2
		if g := real(cdot(u, v)); g > 0 {
			long = math.Min(long, math.Max(sg*math.Log(sg/eps)/g, 0))
		}
		if it >= maxWalk {
			long = math.Max(long, (x-lower)/maxWalk)
		}
		step := math.Max(gap, long)
		if x-step < lower {
			if x-gap < lower {
				return math.Inf(-1), nil
			}
			step = x - lower
		}
		xn := x - step
		sn, vn, un := sh.sigmaMin(ts, complex(xn, y))
		if sn <= eps {
			return sh.bisect(ctx, ts, y, eps, xn, x, tol)
		}
		if step > gap && real(cdot(un, vn)) < 0 {
			// σ increases leftwards at xn: a minimum lies in (xn, x), which
			// the Newton step passed over; look for σ_ε there.
			xm, fm := goldenMax(func(t float64) float64 {
				if ctx.Err() != nil {
					return math.Inf(-1)
				}
				return -ts.eval(complex(t, y), false, false).sigma
			}, xn, x, 1e-10, 80)
			if err := ctx.Err(); err != nil {
				return 0, err
			}
			if -fm <= eps {
				return sh.bisect(ctx, ts, y, eps, xm, x, tol)
			}
		}
		x = xn
	}
	return 0, numErr("boundary search on Im z = %g did not converge", y)
}

// bisect finds the boundary crossing between lo (inside σ_ε) and hi
// (outside); it returns ctx.Err() if ctx is cancelled first.
func (sh *shape) bisect(ctx context.Context, ts *triSigma, y, eps, lo, hi, tol float64) (float64, error) {
	for hi-lo > tol {
		if err := ctx.Err(); err != nil {
			return 0, err
		}
		mid := (lo + hi) / 2
		if ts.eval(complex(mid, y), false, false).sigma <= eps {
			lo = mid
		} else {
			hi = mid
		}
	}
	return lo, nil
}

// AbscissaResult is the ε-pseudospectral abscissa α_ε(A) = max Re σ_ε(A).
type AbscissaResult struct {
	Eps      float64
	Alpha    float64    // α_ε(A)
	Z        complex128 // a rightmost point of σ_ε(A)
	Method   string
	Accuracy string
}

// PseudoAbscissa computes α_ε(A) = max{Re z : σ_min(zI − A) ≤ ε} for the
// dense operator A. It panics with ErrOption if eps ≤ 0.
//
// Method: for a horizontal line Im z = y, the rightmost point of σ_ε on it
// is found exactly (Lipschitz walk from the right, then bisection; see
// rightmostOnLine). The maximum over y is sought from the lines through
// the 60 rightmost eigenvalues (each component of σ_ε contains one), the
// real axis and 17 uniform lines over the numerical range's extent, then refined by golden-section
// search between neighbouring lines. The real axis and the line through the
// rightmost eigenvalue are walked first; every other line only as far left
// as the best point found on them (the walk near the boundary, where σ_min
// is within a few ε, is the costly part, and lines whose σ_ε lies further
// left need not reach it). The result is a lower bound that is
// exact when the maximum is unimodal between neighbouring lines, which holds
// for all but pathological sets; it never exceeds ω(A) + ε. A cancelled
// ctx returns ctx.Err() within one σ_min evaluation.
func PseudoAbscissa(ctx context.Context, a linop.Operator, eps float64) (*AbscissaResult, error) {
	if !(eps > 0) {
		panic(ErrOption)
	}
	m, err := toDense(a)
	if err != nil {
		return nil, err
	}
	sh, err := newShape(ctx, m)
	if err != nil {
		return nil, err
	}
	return sh.pseudoAbscissa(ctx, eps)
}

// AbscissaOptions controls PseudoAbscissae. The zero value is usable.
type AbscissaOptions struct {
	// Budget, if positive, is the work budget (units of InteractiveWork)
	// of each level on its own; a level that would need more is left out.
	// 0 means no limit.
	Budget float64
	// Schur, if not nil, is the Schur form of the same A (from NewSchur),
	// reused instead of computed again.
	Schur *Schur
}

// PseudoAbscissae computes α_ε(A) at each level of eps as PseudoAbscissa
// does, from one Schur form. A level that exceeds opt.Budget is nil in the
// result, and the work spent on the levels left out is returned. It panics
// with ErrOption if a level is not positive.
func PseudoAbscissae(ctx context.Context, a linop.Operator, eps []float64, opt *AbscissaOptions) ([]*AbscissaResult, float64, error) {
	var o AbscissaOptions
	if opt != nil {
		o = *opt
	}
	for _, e := range eps {
		if !(e > 0) {
			panic(ErrOption)
		}
	}
	m, err := toDense(a)
	if err != nil {
		return nil, 0, err
	}
	if _, ok := a.(*linop.Complex); ok {
		// The search runs on the real form [B −C; C B] (its α_ε is A's:
		// σ_ε of the real form is σ_ε(A) ∪ conj σ_ε(A)), which needs that
		// form's own Schur factors, not A's complex ones.
		o.Schur = nil
	}
	if r, _ := m.Dims(); o.Schur != nil && o.Schur.N != r {
		panic(ErrShape)
	}
	sh, err := newShapeWith(ctx, m, o.Schur)
	if err != nil {
		return nil, 0, err
	}
	out := make([]*AbscissaResult, len(eps))
	skipped := 0.0
	failed := 0.0
	for k, e := range eps {
		r, err := sh.budgetedAbscissa(ctx, e, o.Budget, &failed)
		switch {
		case errors.Is(err, ErrBudget):
			skipped += sh.budget.spent()
		case err != nil:
			return nil, 0, err
		default:
			out[k] = r
		}
	}
	return out, skipped, nil
}

func (sh *shape) pseudoAbscissa(ctx context.Context, eps float64) (*AbscissaResult, error) {
	ys := append([]float64{0}, sh.lineStarts()...)
	for _, y := range linspace(0, sh.spreadImag+eps, 17) {
		ys = append(ys, y)
	}
	sort.Float64s(ys)
	ys = dedupe(ys, 1e-9*(sh.spreadImag+eps))
	// First the real axis and the line through the rightmost eigenvalue
	// (where α_ε usually is); then the other lines, each walked only as far
	// as the best point so far (a line that does not reach it cannot hold
	// the maximum). Both phases are deterministic.
	first := []int{0}
	if up := sh.lineStarts(); len(up) > 0 {
		first = append(first, sort.SearchFloat64s(ys, up[0]))
	}
	xs := make([]float64, len(ys))
	errs := make([]error, len(ys))
	parallelFor(ctx, len(first), func(k int) {
		xs[first[k]], errs[first[k]] = sh.rightmostOnLine(ctx, ys[first[k]], eps, math.Inf(-1))
	})
	if err := firstErr(ctx, errs); err != nil {
		return nil, err
	}
	x0 := xs[first[0]]
	for _, k := range first {
		x0 = math.Max(x0, xs[k])
	}
	var rest []int
	for k := range ys {
		if k != first[0] && (len(first) == 1 || k != first[1]) {
			rest = append(rest, k)
		}
	}
	parallelFor(ctx, len(rest), func(k int) {
		xs[rest[k]], errs[rest[k]] = sh.rightmostOnLine(ctx, ys[rest[k]], eps, x0)
	})
	if err := firstErr(ctx, errs); err != nil {
		return nil, err
	}
	best := 0
	for k := range ys {
		if xs[k] > xs[best] {
			best = k
		}
	}
	yb, xb := ys[best], xs[best]
	lo, hi := yb, yb
	if best > 0 {
		lo = ys[best-1]
	}
	if best+1 < len(ys) {
		hi = ys[best+1]
	}
	if hi > lo {
		// Golden-section search assumes x(y) unimodal on [lo, hi], so
		// x(y) ≥ min(x(lo), x(hi)) there: no walk needs to go further left.
		// An end walked only to x0 is walked again in full.
		for _, k := range []int{max(best-1, 0), min(best+1, len(ys)-1)} {
			if math.IsInf(xs[k], -1) && !math.IsInf(x0, -1) {
				if xs[k], errs[k] = sh.rightmostOnLine(ctx, ys[k], eps, math.Inf(-1)); errs[k] != nil {
					return nil, errs[k]
				}
			}
		}
		floor := math.Min(xs[max(best-1, 0)], xs[min(best+1, len(ys)-1)])
		var ferr error
		f := func(y float64) float64 {
			if ferr != nil {
				return math.Inf(-1)
			}
			x, err := sh.rightmostOnLine(ctx, y, eps, floor)
			if err != nil {
				ferr = err
			}
			return x
		}
		y, x := goldenMax(f, lo, hi, 1e-8, 60)
		if ferr != nil {
			return nil, ferr
		}
		if x > xb {
			yb, xb = y, x
		}
	}
	return &AbscissaResult{
		Eps: eps, Alpha: xb, Z: complex(xb, yb),
		Method:   fmt.Sprintf("rightmost σ_ε point on %d horizontal lines (through the eigenvalues and across W(A)), exact per line by a Lipschitz walk and bisection; golden-section refinement in Im z", len(ys)),
		Accuracy: "per line to relative 1e-12; the maximum over lines is local (a lower bound of α_ε, typically exact to ~1e-8 in Im z)",
	}, nil
}

// budgetedAbscissa is pseudoAbscissa under a budget of its own (none if
// budget ≤ 0). A level at or below *failed, the largest level that already
// ran out of its budget, is not tried (ErrBudget, no work): the walk near
// the boundary of σ_ε takes steps of at most ε/2, so a smaller level costs
// more. A level that runs out raises *failed.
func (sh *shape) budgetedAbscissa(ctx context.Context, eps, budget float64, failed *float64) (*AbscissaResult, error) {
	sh.budget = newBudget(budget)
	if sh.budget != nil && eps <= *failed {
		return nil, ErrBudget
	}
	r, err := sh.pseudoAbscissa(ctx, eps)
	if errors.Is(err, ErrBudget) {
		*failed = math.Max(*failed, eps)
	}
	return r, err
}

// firstErr returns ctx.Err() or the first error in errs.
func firstErr(ctx context.Context, errs []error) error {
	if err := ctx.Err(); err != nil {
		return err
	}
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	return nil
}

// maxWalk is the number of walk steps per line kept no longer than eps/2
// beyond the Lipschitz step.
const maxWalk = 20000

// maxLines bounds the eigenvalue-based starting lines of the searches.
const maxLines = 60

// lineStarts returns the imaginary parts (> 0) of the maxLines rightmost
// eigenvalues in the upper half plane.
func (sh *shape) lineStarts() []float64 {
	var up []complex128
	for _, l := range sh.eigs {
		if imag(l) > 0 {
			up = append(up, l)
		}
	}
	sort.Slice(up, func(i, j int) bool { return real(up[i]) > real(up[j]) })
	ys := make([]float64, 0, min(len(up), maxLines))
	for _, l := range up[:min(len(up), maxLines)] {
		ys = append(ys, imag(l))
	}
	return ys
}

func dedupe(x []float64, tol float64) []float64 {
	out := x[:0]
	for i, v := range x {
		if i == 0 || v-out[len(out)-1] > tol {
			out = append(out, v)
		}
	}
	return out
}

// minOverLine returns min_y σ_min((x + iy)I − A) over y ≥ 0 (σ is
// symmetric in y for real A), sampled at the eigenvalues' imaginary parts
// and a uniform set over W(A), refined around the best three samples by
// golden-section search, and the work it took. It returns early, with a
// meaningless value, once ctx is cancelled or sh.budget is used up; the
// caller checks.
func (sh *shape) minOverLine(ctx context.Context, x float64) (float64, float64, float64) {
	ys := sh.lineSamples()
	// One solver per line, warm-started from the previous (nearby) point's
	// singular vector with a little of the fixed cold start mixed in.
	// The scan only ranks the samples (to 5e-7): the best three are
	// evaluated again to 5e-9 before they are compared or refined.
	ts := sh.solver(ctx, 1e-8)
	ts.mix = 0.05
	sigma := func(y float64) float64 {
		if ctx.Err() != nil || sh.budget.exhausted() {
			return math.Inf(1)
		}
		return ts.eval(complex(x, y), true, false).sigma
	}
	scan := sh.solver(ctx, 1e-6)
	scan.mix = 0.05
	vals := make([]float64, len(ys))
	for k, y := range ys {
		if ctx.Err() != nil || sh.budget.exhausted() {
			return math.Inf(1), 0, float64(scan.spent)
		}
		vals[k] = scan.eval(complex(x, y), true, false).sigma
	}
	order := make([]int, len(ys))
	for i := range order {
		order[i] = i
	}
	sort.Slice(order, func(i, j int) bool { return vals[order[i]] < vals[order[j]] })
	for _, k := range order[:min(3, len(order))] {
		vals[k] = sigma(ys[k])
	}
	top := order[:min(3, len(order))]
	sort.Slice(top, func(i, j int) bool { return vals[top[i]] < vals[top[j]] })
	bestY, bestV := ys[order[0]], vals[order[0]]
	f := func(y float64) float64 { return -sigma(y) }
	for _, k := range order[:min(3, len(order))] {
		lo, hi := ys[max(k-1, 0)], ys[min(k+1, len(ys)-1)]
		if hi <= lo {
			continue
		}
		y, v := goldenMax(f, lo, hi, 1e-7, 60) // σ is flat at its minimum
		if -v < bestV {
			bestY, bestV = y, -v
		}
	}
	return bestV, bestY, float64(ts.spent + scan.spent)
}

// lineSamples returns the values of y at which minOverLine samples
// σ_min((x + iy)I − A): 0, the eigenvalues' imaginary parts and 25 points
// over W(A)'s extent in Im z, sorted, without duplicates.
func (sh *shape) lineSamples() []float64 {
	ys := append([]float64{0}, sh.lineStarts()...)
	for _, y := range linspace(0, sh.spreadImag, 25) {
		ys = append(ys, y)
	}
	sort.Float64s(ys)
	return dedupe(ys, 1e-9*(1+sh.spreadImag))
}

// KreissResult is the Kreiss constant K(A) = sup_{Re z > 0} Re z ‖(zI − A)⁻¹‖₂.
type KreissResult struct {
	K        float64    // +Inf if α(A) ≥ 0 or zero within rounding
	Z        complex128 // where the supremum is (approximately) attained
	Method   string
	Accuracy string
	// Abscissa is α(A) and AbscissaTol its error allowance (see
	// Spectrum.AbscissaError); the search runs only when α(A) is below
	// −AbscissaTol. ZeroWithinRounding reports |α(A)| ≤ AbscissaTol: K is
	// then +Inf, since an eigenvalue on the imaginary axis cannot be told
	// from the computed one, and a finite search near the axis would only
	// measure rounding.
	Abscissa, AbscissaTol float64
	ZeroWithinRounding    bool
	// Work is what KreissWithin spent (the predicted Schur form and the
	// search's count, units of InteractiveWork), 0 without a budget.
	Work float64
	// Partial reports a KreissWithin result whose golden-section
	// refinement did not fit the budget: K is the best scanned value, a
	// lower bound of K(A) (Accuracy says so).
	Partial bool
}

// kreiss maximises x / min_y σ_min((x+iy)I − A) over x > 0 on a
// logarithmic grid, then by golden-section search in log x.
func (sh *shape) kreiss(ctx context.Context) (*KreissResult, error) {
	r := &KreissResult{
		Method:   "sup over Re z = x > 0 of x / min_y σ_min(zI − A): log-spaced x (28 values, evaluated in parallel), min over y from the eigenvalues' imaginary parts and a uniform scan with golden-section refinement, then golden-section search in log x",
		Accuracy: "a local maximisation: a lower bound of K(A), typically to ~1e-8 relative; each σ_min to ~5e-9",
	}
	al, atol, ill := sh.abscissaError()
	r.Abscissa, r.AbscissaTol = al, atol
	noSearch := "no search: α(A) from the Schur form, with its rounding allowance, decides K = ∞"
	switch roundoff.Sign(al, atol) {
	case 1:
		r.K, r.Z, r.Method = math.Inf(1), 0, noSearch
		r.Accuracy = fmt.Sprintf("exact: α(A) = %.6g > 0 beyond its rounding allowance %.2g, so ‖(x − A)⁻¹‖ is unbounded as x ↓ α(A)", al, atol)
		return r, nil
	case 0:
		r.K, r.Z, r.ZeroWithinRounding, r.Method = math.Inf(1), 0, true, noSearch
		why := "n·u·‖A‖_F × the condition of the rightmost eigenvalue"
		if ill {
			why = "√(n·u·‖A‖_F·‖A‖_F): the rightmost eigenvalue is defective or nearly so"
		}
		r.Accuracy = fmt.Sprintf("α(A) = %.3g is zero within rounding (|α(A)| ≤ %.2g = %s): an eigenvalue on the imaginary axis cannot be told from it, so K is taken as ∞; a search at Re z > 0 would only measure rounding", al, atol, why)
		return r, nil
	}
	scale := math.Max(math.Max(math.Abs(sh.omega), math.Abs(sh.omegaLeft)), sh.spreadImag)
	// x‖R(x+iy)‖ → 1 for x ≫ ‖A‖, so x ≤ 100·scale suffices.
	lo, hi := 1e-6*math.Abs(al), 100*math.Max(scale, math.Abs(al))
	xs := make([]float64, 28)
	for k := range xs {
		xs[k] = lo * math.Pow(hi/lo, float64(k)/float64(len(xs)-1))
	}
	// Each sample of the scan costs at least one Lanczos step: a budget
	// below that is known to run out before the scan ends.
	if b := sh.budget; b != nil {
		if least := float64(len(xs)*len(sh.lineSamples())) * float64(sh.s.N) * float64(sh.s.N); least > float64(b.limit) {
			return nil, &BudgetError{Estimate: least, AtLeast: true}
		}
	}
	// When the budget runs out, the whole search is extrapolated from the
	// lines finished: the scan's 28 at their mean cost, and about 31 more
	// (golden-section search and a last line) at the cost of the costliest,
	// since they lie near the maximum, where σ_min is smallest and its
	// iterations longest.
	var mu sync.Mutex
	var lines int
	var sum, most float64
	overLine := func(x float64) (float64, float64) {
		s, y, w := sh.minOverLine(ctx, x)
		if !sh.budget.exhausted() {
			mu.Lock()
			lines++
			sum += w
			most = math.Max(most, w)
			mu.Unlock()
		}
		return s, y
	}
	outOfBudget := func() error {
		e := &BudgetError{}
		if lines > 0 {
			e.Estimate = sum/float64(lines)*float64(len(xs)) + 31*most
		}
		return e
	}
	vals := make([]float64, len(xs))
	yAt := make([]float64, len(xs))
	parallelFor(ctx, len(xs), func(k int) {
		s, y := overLine(xs[k])
		vals[k], yAt[k] = xs[k]/s, y
	})
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	if sh.budget.exhausted() {
		return nil, outOfBudget()
	}
	best := 0
	for k := range xs {
		if vals[k] > vals[best] {
			best = k
		}
	}
	// A refinement that runs out of the budget leaves the scan's best
	// value, a lower bound of K (each σ_min from inverse Lanczos is an
	// upper estimate, each minimum over y one over fewer points), which is
	// returned when sh.partialOK is set.
	scanOnly := func() (*KreissResult, error) {
		if !sh.partialOK {
			return nil, outOfBudget()
		}
		r.K, r.Z, r.Partial = vals[best], complex(xs[best], yAt[best]), true
		r.Accuracy = fmt.Sprintf("a lower bound of K(A): the best of the 28 scanned values of Re z (each σ_min to ~5e-7); the golden-section refinement between its neighbours (a factor %.2g apart in Re z) did not fit the work budget", xs[1]/xs[0])
		return r, nil
	}
	a, b := math.Log(xs[max(best-1, 0)]), math.Log(xs[min(best+1, len(xs)-1)])
	f := func(lx float64) float64 { x := math.Exp(lx); s, _ := overLine(x); return x / s }
	lx, v := goldenMax(f, a, b, 1e-6, 60) // flat at the maximum: relative error O(1e-12)
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	if sh.budget.exhausted() {
		return scanOnly()
	}
	x := xs[best]
	if v > vals[best] {
		x = math.Exp(lx)
	} else {
		v = vals[best]
	}
	_, y := overLine(x)
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	if sh.budget.exhausted() {
		return scanOnly()
	}
	r.K, r.Z = v, complex(x, y)
	return r, nil
}

// KreissWithin is Kreiss under a work budget (units of InteractiveWork;
// ≤ 0: none) shared by the Schur form and the search. When the predicted
// Schur form (ShapeWork) alone exceeds it, it returns a *BudgetError
// (AtLeast) at once, before any dense work. When the search runs out of
// what is left during its refinement, the scan's best value is returned as
// a lower bound (Partial); when it runs out during the scan, a
// *BudgetError with the whole search's extrapolated cost (0 when unknown).
func KreissWithin(ctx context.Context, a linop.Operator, budget float64) (*KreissResult, error) {
	sh, err := budgetedShape(ctx, a, budget)
	if err != nil {
		return nil, err
	}
	if budget > 0 {
		sh.budget = newBudget(math.Max(budget-ShapeWork(sh.s.N), 1))
	}
	sh.partialOK = true
	r, err := sh.kreiss(ctx)
	if r != nil && budget > 0 {
		r.Work = sh.budget.spent() + ShapeWork(sh.s.N)
	}
	var be *BudgetError
	if errors.As(err, &be) {
		be.Estimate += ShapeWork(sh.s.N)
		return nil, be
	}
	if errors.Is(err, ErrBudget) {
		return nil, &BudgetError{}
	}
	return r, err
}

// PseudoAbscissaWithin is PseudoAbscissa under a work budget as
// KreissWithin has; a search that runs out returns a *BudgetError whose
// Estimate is 0 (the boundary walk's length is not known in advance).
func PseudoAbscissaWithin(ctx context.Context, a linop.Operator, eps, budget float64) (*AbscissaResult, error) {
	if !(eps > 0) {
		panic(ErrOption)
	}
	sh, err := budgetedShape(ctx, a, budget)
	if err != nil {
		return nil, err
	}
	failed, search := 0.0, 0.0
	if budget > 0 {
		search = math.Max(budget-ShapeWork(sh.s.N), 1)
	}
	r, err := sh.budgetedAbscissa(ctx, eps, search, &failed)
	if errors.Is(err, ErrBudget) {
		return nil, &BudgetError{}
	}
	return r, err
}

// budgetedShape is newShape refusing, with a *BudgetError (AtLeast), an
// operator whose predicted shape (ShapeWork) exceeds a positive budget.
func budgetedShape(ctx context.Context, a linop.Operator, budget float64) (*shape, error) {
	if n, _ := a.Dims(); budget > 0 && ShapeWork(n) > budget {
		return nil, &BudgetError{Estimate: ShapeWork(n), AtLeast: true}
	}
	m, err := toDense(a)
	if err != nil {
		return nil, err
	}
	return newShape(ctx, m)
}

// Kreiss computes the Kreiss constant of the dense operator A, the lower
// bound K ≤ sup_{t≥0} ‖e^{tA}‖₂ of the Kreiss matrix theorem, whose upper
// bound is sup_t ‖e^{tA}‖₂ ≤ e·N·K for N×N matrices (Spijker, BIT 1991).
func Kreiss(ctx context.Context, a linop.Operator) (*KreissResult, error) {
	m, err := toDense(a)
	if err != nil {
		return nil, err
	}
	sh, err := newShape(ctx, m)
	if err != nil {
		return nil, err
	}
	return sh.kreiss(ctx)
}

// GrowthOptions controls GrowthCurve. The zero value is usable.
type GrowthOptions struct {
	// Eps are the levels ε for the lower bounds α_ε(A)/ε.
	Eps []float64
	// NoKreiss skips the Kreiss constant (the most expensive bound).
	NoKreiss bool
	// Budget, if positive, is the work budget (in the units of
	// InteractiveWork) of each bound on its own: the Kreiss constant and
	// each α_ε. A bound that would need more is left out and named in
	// Growth.Skipped; the others are still computed. 0 means no limit.
	Budget float64
	// CurveBudget, if positive, is the work budget (units of
	// InteractiveWork) of the curve itself: the values ‖e^{tA}‖₂ at the
	// times, the refinement of the peak and its singular vector, predicted
	// by GrowthEvalWork. When all the times do not fit, every k-th is kept
	// (the first and the last always) for the smallest k that fits, and
	// the peak refinement takes what is left; Growth.Asked, Stride and
	// CurveNeeds say so. When even three times and the peak's singular
	// vector (no refinement) would need more than ten budgets, GrowthCurve
	// returns a *BudgetError (AtLeast) before any work. 0 means every time and the full refinement.
	CurveBudget float64
	// Weight, if not nil, measures ‖e^{tA}‖ in the norm √(xᵀWx), W = RᵀR:
	// ‖e^{tA}‖_W = ‖e^{tB}‖₂ with B = RAR⁻¹, and all bounds refer to B.
	Weight Weight
	// Progress, if not nil, is called after each time point.
	Progress func(done, total int)
}

// EpsBound is the lower bound sup_{t≥0} ‖e^{tA}‖ ≥ α_ε(A)/ε
// (Trefethen & Embree, Spectra and Pseudospectra, 2005, Thm 15.4; the
// theorem number is cited from memory), useful
// when α_ε(A) > 0.
type EpsBound struct {
	Eps, Alpha, Bound float64
}

// Growth is the transient growth curve ‖e^{tA}‖₂ with its bounds.
type Growth struct {
	T    []float64 // times, as given
	Norm []float64 // ‖e^{tA}‖₂ at each time
	// Peak is max ‖e^{tA}‖₂ over the times, refined between samples by
	// golden-section search, attained at PeakTime; Initial is the unit
	// initial condition u0 (top right singular vector of e^{t*A}) with
	// ‖e^{t*A}u0‖ = Peak.
	Peak, PeakTime float64
	Initial        []float64
	// InitialSlope is ω(A) = d/dt log‖e^{tA}‖ at t = 0⁺; Abscissa is α(A),
	// the asymptotic rate lim log‖e^{tA}‖/t.
	InitialSlope, Abscissa float64
	// Kreiss is K(A) (lower bound K ≤ sup ‖e^{tA}‖); Upper = e·N·K.
	Kreiss    *KreissResult
	Upper     float64
	EpsBounds []EpsBound
	// Skipped names the bounds left out because they exceeded
	// GrowthOptions.Budget ("Kreiss constant", "α_ε for ε = 0.001").
	Skipped []string
	// SkippedWork is the work (units of InteractiveWork) spent on them.
	SkippedWork float64
	// KreissNeeds, when the Kreiss constant was skipped, is the work its
	// search would need: extrapolated from the part done, or a lower bound
	// if KreissAtLeast (0: unknown).
	KreissNeeds   float64
	KreissAtLeast bool
	Method        string
	Accuracy      string
	ExpSquaring   []int // scaling-and-squaring steps used at each time
	// Asked is the number of times given; when it exceeds len(T), the
	// curve was thinned to every Stride-th of them (and the last) to fit
	// GrowthOptions.CurveBudget, and CurveNeeds is the predicted work of
	// all of them with the full peak refinement (units of InteractiveWork).
	Asked, Stride int
	CurveNeeds    float64
	// ShapeNeeds, when positive, is the predicted work (ShapeWork) of the
	// Schur form and numerical ranges that the bounds and α(A) need, left
	// out because it alone exceeded the bounds' budget: Abscissa is then
	// NaN and every bound is in Skipped.
	ShapeNeeds float64
	// PeakTimeWidth bounds the error of PeakTime: the width of the last
	// golden-section bracket (0 when the peak is at an end of the times).
	PeakTimeWidth float64
}

// Calibration of the cost of one value ‖e^{tA}‖₂ (a scaling-and-squaring
// exponential and the largest singular value), in work units per n³ (wall
// seconds × 2·WorkRate), fitted to BenchmarkGrowthEval on the 300×300
// Grcar matrix on the 2-core development machine (1.08 units/n³ with no
// squaring, 1.65 with three, the machine shared with other work, so an
// upper estimate): growthProductWork per matrix product of the
// exponential (growthBaseProducts of them plus one per squaring) and
// growthSVDWork for the SVD. See GrowthEvalWork.
const (
	growthProductWork  = 0.19
	growthBaseProducts = 3
	growthSVDWork      = 0.5
	// padeTheta13 is θ₁₃ of the scaling-and-squaring method (Higham,
	// SIMAX 2005, Table 2.3, to 3 digits): ‖2⁻ˢtA‖₁ ≤ θ₁₃ decides s.
	padeTheta13 = 5.37
	// growthRefineFull is the golden-section evaluations of a full peak
	// refinement (bracket to 1e-8 relative), growthRefineLeast the fewest
	// a thinned curve reserves (bracket shrunk about 150 times).
	growthRefineFull  = 40
	growthRefineLeast = 12
)

// GrowthEvalWork predicts the work (units of InteractiveWork) of one value
// ‖e^{tA}‖₂ at order n with ‖tA‖₁ = tnorm: the products of the
// exponential, one more per squaring s = ⌈log₂(tnorm/θ₁₃)⌉, and the SVD.
// t = 0 (tnorm = 0) costs nothing: ‖e^{0A}‖ = 1.
func GrowthEvalWork(n int, tnorm float64) float64 {
	if tnorm == 0 {
		return 0
	}
	sq := 0.0
	if tnorm > padeTheta13 {
		sq = math.Ceil(math.Log2(tnorm / padeTheta13))
	}
	n3 := float64(n) * float64(n) * float64(n)
	return (growthProductWork*(growthBaseProducts+sq) + growthSVDWork) * n3
}

// shapeWork is the work per n³ of the dense shape of an operator (the
// Schur form by Dhseqr, two symmetric eigenproblems and one SVD): 8.6 and
// 6.0 units/n³ by BenchmarkShape on the Grcar matrix of orders 300 and 600
// (wall seconds × 2·WorkRate on the shared 2-core development machine).
const shapeWork = 8

// ShapeWork predicts the work (units of InteractiveWork) of the Schur form
// and the numerical abscissae of A and −A at order n, which every bound of
// GrowthCurve, the Kreiss constant and α_ε start from. The QR algorithm's
// iterations depend on the matrix; the figure is for the strongly
// non-normal matrices the bounds are for (Grcar's), an upper estimate for
// most others.
func ShapeWork(n int) float64 { return shapeWork * float64(n) * float64(n) * float64(n) }

// growthPlan chooses the times of a curve under a budget (≤ 0: none):
// every time when all of them with the full refinement fit, otherwise every
// stride-th (and the last) for the smallest stride whose samples, the peak
// vector (two evaluations) and a reserve for the refinement
// (growthRefineLeast steps, at most a third of the budget) fit. It
// returns the indices kept, the stride, the predicted work of all times,
// and the predicted work of the fewest times it would keep (3) with the
// peak vector but no refinement, which the caller compares with the budget
// to refuse.
func growthPlan(times []float64, work func(t float64) float64, budget float64) (keep []int, stride int, all, least float64) {
	top := 0.0
	for _, t := range times {
		top = math.Max(top, work(t))
	}
	cost := func(idx []int, refine int) float64 {
		c := float64(2+refine) * top
		for _, k := range idx {
			c += work(times[k])
		}
		return c
	}
	every := make([]int, len(times))
	for k := range every {
		every[k] = k
	}
	all = cost(every, growthRefineFull)
	if budget <= 0 || all <= budget {
		return every, 1, all, all
	}
	if len(times) <= 3 {
		return every, 1, all, cost(every, 0)
	}
	pick := func(stride int) []int {
		var idx []int
		for k := 0; k < len(times); k += stride {
			idx = append(idx, k)
		}
		if idx[len(idx)-1] != len(times)-1 {
			idx = append(idx, len(times)-1)
		}
		return idx
	}
	last := (len(times) - 1) / 2 // stride leaving three times
	least = cost(pick(last), 0)
	// The refinement's reserve is growthRefineLeast steps but at most a
	// third of the budget: at large orders the samples come first.
	reserve := math.Min(float64(growthRefineLeast)*top, budget/3)
	for stride = 2; stride < last; stride++ {
		if idx := pick(stride); cost(idx, 0)+reserve <= budget {
			return idx, stride, all, least
		}
	}
	return pick(last), last, all, least
}

// GrowthCurve computes ‖e^{tA}‖₂ at each time t ≥ 0 for the dense
// operator A, exactly up to rounding: e^{tA} by scaling and squaring
// (expo.Exp), its norm as the largest singular value. It panics with
// ErrShape if A is not square and with ErrOption if a time is negative or
// there are no times.
func GrowthCurve(ctx context.Context, a linop.Operator, times []float64, opt *GrowthOptions) (*Growth, error) {
	if len(times) == 0 {
		panic(ErrOption)
	}
	for _, t := range times {
		if !(t >= 0) {
			panic(ErrOption)
		}
	}
	var o GrowthOptions
	if opt != nil {
		o = *opt
	}
	m0, err := toDense(a)
	if err != nil {
		return nil, err
	}
	m := weighted(m0, o.Weight)
	n, _ := m.Dims()
	norm1 := mat.Norm(m, 1)
	work := func(t float64) float64 { return GrowthEvalWork(n, t*norm1) }
	keep, stride, all, least := growthPlan(times, work, o.CurveBudget)
	if o.CurveBudget > 0 && least > 10*o.CurveBudget {
		return nil, &BudgetError{Estimate: least, AtLeast: true}
	}
	g := &Growth{Asked: len(times), Stride: stride, CurveNeeds: all}
	for _, k := range keep {
		g.T = append(g.T, times[k])
	}
	g.Norm = make([]float64, len(g.T))
	spent := 0.0
	// The exponential and the SVD cannot be interrupted: each time runs
	// under abandonable, so a cancellation returns at once.
	var normAtOnce func(t float64, wantVec bool) (float64, []float64, int, error)
	normAt := func(t float64, wantVec bool) (float64, []float64, int, error) {
		type res struct {
			v  float64
			u  []float64
			sq int
		}
		r, err := abandonable(ctx, denseBytes(n, 8), fmt.Sprintf("‖e^{tA}‖ of order %d", n), func() (res, error) {
			v, u, sq, err := normAtOnce(t, wantVec)
			return res{v, u, sq}, err
		})
		return r.v, r.u, r.sq, err
	}
	normAtOnce = func(t float64, wantVec bool) (float64, []float64, int, error) {
		if t == 0 && !wantVec {
			return 1, nil, 0, nil // e^{0A} = I
		}
		var ta, e mat.Dense
		ta.Scale(t, m)
		info, err := expo.Exp(&e, &ta)
		if err != nil {
			return 0, nil, 0, err
		}
		if err := checkFinite(&e); err != nil {
			return 0, nil, 0, numErr("‖e^{tA}‖ overflows at t = %g (beyond %g); choose smaller times", t, math.MaxFloat64)
		}
		var svd mat.SVD
		kind := mat.SVDNone
		if wantVec {
			kind = mat.SVDThin
		}
		if !svd.Factorize(&e, kind) {
			return 0, nil, 0, numErr("SVD of e^{tA} failed at t = %g", t)
		}
		var v []float64
		if wantVec {
			var vm mat.Dense
			svd.VTo(&vm)
			v = mat.Col(nil, 0, &vm)
		}
		return svd.Values(nil)[0], v, info.Squarings, nil
	}
	best := 0
	for k, t := range g.T {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		nv, _, sq, err := normAt(t, false)
		if err != nil {
			return nil, err
		}
		spent += work(t)
		g.Norm[k] = nv
		g.ExpSquaring = append(g.ExpSquaring, sq)
		if nv > g.Norm[best] {
			best = k
		}
		if o.Progress != nil {
			o.Progress(k+1, len(g.T))
		}
	}
	g.Peak, g.PeakTime = g.Norm[best], g.T[best]
	// The peak is refined between the neighbouring samples, and also when
	// the largest sample is the first or the last: a curve sampled coarsely
	// (a budget's stride) can rise and fall between t₀ and t₁ — ω(A) > 0
	// means ‖e^{tA}‖ > 1 just after t = 0 — and the samples alone would
	// report ‖e^{t₀A}‖ = 1 as the peak.
	if lo, hi := g.T[max(best-1, 0)], g.T[min(best+1, len(g.T)-1)]; hi > lo {
		// Golden-section steps: all 60 without a budget (the bracket
		// reaches 1e-8 relative in about 40), else what the budget leaves
		// after the peak vector (two evaluations).
		steps := 60
		if o.CurveBudget > 0 {
			w := work(hi)
			steps = min(60, max(0, int((o.CurveBudget-spent)/w)-2-2))
			if all <= o.CurveBudget {
				steps = max(steps, growthRefineFull)
			}
		}
		if steps > 0 {
			f := func(t float64) float64 { v, _, _, _ := normAt(t, false); return v }
			tp, vp := goldenMax(f, lo, hi, 1e-8, steps)
			if err := ctx.Err(); err != nil {
				return nil, err
			}
			if vp > g.Peak {
				g.Peak, g.PeakTime = vp, tp
			}
		}
		g.PeakTimeWidth = math.Max((hi-lo)*math.Pow(0.6180339887498949, float64(steps)), 1e-8*(1+math.Abs(lo)+math.Abs(hi)))
	}
	_, g.Initial, _, err = normAt(g.PeakTime, true)
	if err != nil {
		return nil, err
	}
	g.Method = "e^{tA} by scaling and squaring with Padé approximants, ‖·‖₂ as the largest singular value; peak refined by golden-section search; bounds: Kreiss constant K ≤ sup‖e^{tA}‖ ≤ e·N·K (Spijker, BIT 1991, N = dimension), α_ε/ε ≤ sup‖e^{tA}‖, initial slope ω(A)"
	g.Accuracy = "‖e^{tA}‖₂ to a few units of u·‖e^{tA}‖·cond; the Kreiss constant is a local maximisation (lower estimate)"
	// Under a budget, a Schur form that alone exceeds the bounds' budget
	// is not computed: α(A) and every bound are left out, ω(A) comes from
	// the symmetric part alone.
	bounds := len(o.Eps)
	if !o.NoKreiss {
		bounds++
	}
	if need := ShapeWork(n); o.Budget > 0 && bounds > 0 && need > o.Budget*float64(bounds) {
		g.ShapeNeeds = need
		g.InitialSlope, err = abandonable(ctx, denseBytes(n, 3), fmt.Sprintf("numerical abscissa of order %d", n), func() (float64, error) { return numAbscissa(m) })
		if err != nil {
			return nil, err
		}
		g.Abscissa = math.NaN()
		for _, eps := range o.Eps {
			g.Skipped = append(g.Skipped, fmt.Sprintf("α_ε for ε = %g", eps))
		}
		if !o.NoKreiss {
			g.Skipped = append(g.Skipped, "Kreiss constant")
			g.KreissNeeds, g.KreissAtLeast = need, true
		}
		return g, nil
	}
	sh, err := newShape(ctx, m)
	if err != nil {
		return nil, err
	}
	g.InitialSlope = sh.omega
	g.Abscissa = sh.s.abscissa()
	// Each bound under its own budget: one that runs out is named in
	// Skipped and the others are still computed.
	skip := func(what string, err error) error {
		if !errors.Is(err, ErrBudget) {
			return err
		}
		g.Skipped = append(g.Skipped, what)
		g.SkippedWork += sh.budget.spent()
		return nil
	}
	failed := 0.0
	for _, eps := range o.Eps {
		ar, err := sh.budgetedAbscissa(ctx, eps, o.Budget, &failed)
		if err != nil {
			if err := skip(fmt.Sprintf("α_ε for ε = %g", eps), err); err != nil {
				return nil, err
			}
			continue
		}
		g.EpsBounds = append(g.EpsBounds, EpsBound{Eps: eps, Alpha: ar.Alpha, Bound: ar.Alpha / eps})
	}
	if !o.NoKreiss {
		sh.budget = newBudget(o.Budget)
		if g.Kreiss, err = sh.kreiss(ctx); err != nil {
			g.Kreiss = nil
			var be *BudgetError
			if errors.As(err, &be) {
				g.KreissNeeds, g.KreissAtLeast = be.Estimate, be.AtLeast
			}
			if err := skip("Kreiss constant", err); err != nil {
				return nil, err
			}
		} else {
			g.Upper = math.E * float64(n) * g.Kreiss.K
		}
	}
	return g, nil
}

// parallelFor calls f(0..n−1) on GOMAXPROCS goroutines, stopping early
// when ctx is cancelled.
func parallelFor(ctx context.Context, n int, f func(i int)) {
	parallelEach(ctx, runtime.GOMAXPROCS(0), n, nil, func(int) func(int) { return f })
}

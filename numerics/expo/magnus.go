package expo

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"
	"time"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// Time-dependent generators: u' = A(t)u.
//
// The fourth-order commutator-free Magnus method (Blanes & Moan, Appl.
// Numer. Math. 56, 2006; Thalhammer, SIAM J. Numer. Anal. 44, 2006) takes a
// step of length h from t as
//
//	u ← e^{h(α₁A₁ + α₂A₂)} e^{h(α₂A₁ + α₁A₂)} u,   A_i = A(t + c_i h),
//
// the right factor first, with the Gauss–Legendre nodes c₁,₂ = 1/2 ∓ √3/6
// and α₁,₂ = (3 ∓ 2√3)/12. Derivation of the coefficients: the fourth-order
// Magnus expansion with Gauss nodes is Ω = (h/2)(A₁ + A₂) − (√3/12)h²[A₁, A₂]
// + O(h⁵) (Iserles & Nørsett, Phil. Trans. R. Soc. A 357, 1999), and
// e^X e^Y = e^{X + Y + [X, Y]/2 + …} with X = h(α₁A₁ + α₂A₂),
// Y = h(α₂A₁ + α₁A₂) gives X + Y = (h/2)(A₁ + A₂) because α₁ + α₂ = 1/2, and
// [X, Y]/2 = (h²/2)(α₁² − α₂²)[A₁, A₂] = −(√3/12)h²[A₁, A₂] because
// α₁² − α₂² = (α₁ − α₂)(α₁ + α₂) = −√3/6; the third-order terms cancel by
// the time symmetry of the scheme. TestMagnusOrder observes the order 4.
// For a constant A the step is e^{hA} exactly.
//
// Each exponential's action is computed by Propagate (any of its methods,
// with its own error estimate and escalation); the steps are chosen by
// step doubling (integrate, shared with ETDRK4).
//
// Error propagation: the step map Φ = e^{hB₂}e^{hB₁} is linear, so the
// error after a step is Φ times the error before it plus the step's own
// error, and ‖Φ‖∞ ≤ e^{h(μ∞(B₁) + μ∞(B₂))}, μ∞ the ∞-norm logarithmic norm
// (Dahlquist; Söderlind, BIT 46, 2006). The stepper reports that bound
// (growthStepper) and integrate carries the local estimates forward with
// it. For a non-normal A(t) the bound can exceed the true growth by
// orders of magnitude (μ∞ sees the transient growth at every step).

// Coefficients of the commutator-free Magnus step (see above).
var (
	magnusC1 = 0.5 - math.Sqrt(3)/6
	magnusC2 = 0.5 + math.Sqrt(3)/6
	magnusA1 = (3 - 2*math.Sqrt(3)) / 12
	magnusA2 = (3 + 2*math.Sqrt(3)) / 12
)

// OperatorAt returns the generator A(t) of a time-dependent problem. An
// error (a user function that fails, or an operator of the wrong size)
// stops the integration and is returned by PropagateMagnus unchanged.
type OperatorAt func(t float64) (linop.Operator, error)

// ErrOperatorSize is wrapped by the error PropagateMagnus returns when
// A(t) at some t is not of the order of u0.
var ErrOperatorSize = errors.New("expo: A(t) changed size")

// magnusStepper is the commutator-free Magnus step as a oneStepper.
type magnusStepper struct {
	ctx  context.Context
	at   OperatorAt
	n    int
	opts Options // for each exponential: its method and tolerance
	// lead is the order of the leading block whose errors can grow (n,
	// or the order of u in the augmented form of a forced problem, whose
	// last entry is carried exactly).
	lead     int
	sqrtLead float64

	// The last step: its length, its two exponents B₁, B₂ (the right
	// factor first) and their actions' error estimates.
	lastH                    float64
	lastB                    [2]linop.Operator
	lastEst                  [2]float64
	matvecs, solves, factors int
	exps                     int
	methods                  map[string]int
	escalations              int
}

func (m *magnusStepper) order() int   { return 4 }
func (m *magnusStepper) name() string { return "commutator-free Magnus" }

// diffStep carries the coarse–fine difference Δ = c0 − f0 across a step
// for integrate's cheaper error step (diffPropagator): Δ' = A(t)Δ exactly,
// the problem being linear, and the exponential midpoint rule
// e^{(h/2)(A₁ + A₂)}Δ (second order, A at the Gauss points) carries it
// with one exponential in place of the two of a third full step.
func (m *magnusStepper) diffStep(dst []float64, t, h float64, c0, f0, c1, f1 []float64, seg segment) error {
	for i := range dst {
		dst[i] = c0[i] - f0[i]
	}
	if normInf(dst) == 0 {
		return nil
	}
	a1, err := m.operator(seg.clamp(t + magnusC1*h))
	if err != nil {
		return err
	}
	a2, err := m.operator(seg.clamp(t + magnusC2*h))
	if err != nil {
		return err
	}
	s, err := Propagate(m.ctx, linComb(0.5, a1, 0.5, a2), dst, []float64{h}, m.opts)
	if err != nil {
		return err
	}
	copy(dst, s.Values[0])
	m.count(s)
	return nil
}

// count adds an exponential's work to the totals.
func (m *magnusStepper) count(s *Solution) {
	m.matvecs += s.MatVecs
	m.solves += s.Solves
	m.factors += s.Factors
	m.exps++
	m.methods[s.Method]++
	if s.Escalation != "" {
		m.escalations++
	}
}

// lastStep bounds the last step's growth by e^{h(μ(B₁) + μ(B₂))} in each
// norm, μ ≥ the logarithmic norm of B_i's leading block, and carries the
// first exponential's error through the second: e^{hμ∞(B₂)}ε₁ + ε₂.
func (m *magnusStepper) lastStep() stepGrowth {
	i1, t1, ok1 := logNormBounds(m.lastB[0], m.lead)
	i2, t2, ok2 := logNormBounds(m.lastB[1], m.lead)
	h := m.lastH
	return stepGrowth{logInf: h * (i1 + i2), log2: h * (t1 + t2),
		inner: math.Min(grown(m.lastEst[0], h*i2), grown(m.sqrtLead*m.lastEst[0], h*t2)) + m.lastEst[1], bounded: ok1 && ok2}
}

// twoNormFactor is √lead: ‖x‖₂ ≤ √lead·‖x‖∞ where errors live.
func (m *magnusStepper) twoNormFactor() float64 { return m.sqrtLead }

// symDenseMax is the largest order whose symmetric part's top eigenvalue
// logNormBounds computes exactly (a dense symmetric eigenproblem).
const symDenseMax = 64

// logNormBounds returns bounds on the ∞-norm and 2-norm logarithmic norms
// of the leading lead×lead block B₁₁ of B: μ∞ = max_i (b_ii + Σ_{j≠i}|b_ij|)
// and μ₂ = λ_max((B₁₁ + B₁₁ᵀ)/2) (Dahlquist; Söderlind, BIT 46, 2006),
// so that ‖e^{hB₁₁}‖ ≤ e^{hμ} in each norm. μ∞ is exact for a diagonal,
// dense or sparse form; μ₂ is exact for a diagonal form and for a dense one
// of order ≤ symDenseMax, and otherwise Gershgorin's bound on the
// symmetric part (which sees that a skew part makes nothing grow). A
// Kronecker sum adds its parts' values (exact: the rows' diagonal entries
// and off-diagonal sums add, and the symmetric part is the Kronecker sum
// of the parts'), αB has α times B's for α ≥ 0, and a sum without a
// sparse form the sum of its terms' (the norms are subadditive). An
// operator with no explicit form gets Hager's estimates of ‖B‖∞ and
// √(‖B‖₁‖B‖∞) ≥ ‖B‖₂, and bounded false.
func logNormBounds(B linop.Operator, lead int) (muInf, mu2 float64, bounded bool) {
	n, _ := B.Dims()
	if lead == n {
		switch b := B.(type) {
		case *linop.Diag:
			mu := math.Inf(-1)
			for _, d := range b.D {
				mu = math.Max(mu, d)
			}
			return mu, mu, true
		case *linop.Dense:
			if n <= symDenseMax {
				sym := mat.NewSymDense(n, nil)
				for i := 0; i < n; i++ {
					for j := i; j < n; j++ {
						sym.SetSym(i, j, (b.Mat().At(i, j)+b.Mat().At(j, i))/2)
					}
				}
				var es mat.EigenSym
				if es.Factorize(sym, false) {
					v := es.Values(nil)
					// The eigenvalues' rounding: a few units of ‖S‖.
					return logNormInf(b.Mat()), v[n-1] + 8*float64(n)*unitRoundoff*math.Max(math.Abs(v[0]), math.Abs(v[n-1])), true
				}
			}
		case *linop.KronSum:
			nx, _ := b.X.Dims()
			ny, _ := b.Y.Dims()
			ix, tx, okx := logNormBounds(b.X, nx)
			iy, ty, oky := logNormBounds(b.Y, ny)
			return ix + iy, tx + ty, okx && oky
		case *linop.Scaled:
			if b.Alpha >= 0 {
				i, t, ok := logNormBounds(b.A, n)
				return b.Alpha * i, b.Alpha * t, ok
			}
		}
	}
	if m, ok := sparseForm(B); ok {
		muInf, mu2 = sparseLogNorms(m, lead)
		return muInf, mu2, true
	}
	if s, ok := B.(*linop.Sum); ok && lead == n {
		bounded = true
		for _, term := range s.Terms {
			i, t, ok := logNormBounds(term, n)
			muInf, mu2, bounded = muInf+i, mu2+t, bounded && ok
		}
		return muInf, mu2, bounded
	}
	c := &counted{a: B}
	nInf := normEst1(n, c.applyT, c.apply)
	n1 := normEst1(n, c.apply, c.applyT)
	return nInf, math.Sqrt(n1 * nInf), false
}

// sparseLogNorms returns μ∞ of m's leading lead×lead block and
// Gershgorin's bound on the top eigenvalue of its symmetric part,
// max_i (b_ii + Σ_{j≠i}|b_ij + b_ji|/2).
func sparseLogNorms(m *linop.CSR, lead int) (muInf, mu2 float64) {
	mt := m.Transpose()
	acc := make([]float64, m.Cols)
	var touched []int
	muInf, mu2 = math.Inf(-1), math.Inf(-1)
	for i := 0; i < lead; i++ {
		r := 0.0
		touched = touched[:0]
		for p := m.RowPtr[i]; p < m.RowPtr[i+1]; p++ {
			j := m.ColIdx[p]
			switch {
			case j == i:
				r += m.Val[p]
			case j < lead:
				r += math.Abs(m.Val[p])
			}
			if j < lead {
				acc[j] += m.Val[p] / 2
				touched = append(touched, j)
			}
		}
		for p := mt.RowPtr[i]; p < mt.RowPtr[i+1]; p++ {
			if j := mt.ColIdx[p]; j < lead {
				acc[j] += mt.Val[p] / 2
				touched = append(touched, j)
			}
		}
		s := 0.0
		for _, j := range touched {
			if j == i {
				s += acc[j]
			} else {
				s += math.Abs(acc[j])
			}
			acc[j] = 0 // each j counted once
		}
		muInf, mu2 = math.Max(muInf, r), math.Max(mu2, s)
	}
	return muInf, mu2
}

func (m *magnusStepper) operator(t float64) (linop.Operator, error) {
	a, err := m.at(t)
	if err != nil {
		return nil, err
	}
	if r, c := a.Dims(); r != m.n || c != m.n {
		return nil, fmt.Errorf("%w: A(t) at t = %.9g is %d×%d, but A(0) and u0 have order %d", ErrOperatorSize, t, r, c, m.n)
	}
	return a, nil
}

func (m *magnusStepper) step(t, h float64, u []float64, seg segment) error {
	a1, err := m.operator(seg.clamp(t + magnusC1*h))
	if err != nil {
		return err
	}
	a2, err := m.operator(seg.clamp(t + magnusC2*h))
	if err != nil {
		return err
	}
	// The right factor first; lastStep carries the first factor's error
	// through the second.
	m.lastH = h
	for i, b := range []linop.Operator{linComb(magnusA2, a1, magnusA1, a2), linComb(magnusA1, a1, magnusA2, a2)} {
		s, err := Propagate(m.ctx, b, u, []float64{h}, m.opts)
		if err != nil {
			return err
		}
		copy(u, s.Values[0])
		m.lastB[i], m.lastEst[i] = b, s.ErrEst[0]
		m.count(s)
	}
	return nil
}

// linComb returns a·A + b·B, keeping the structure both share: one sparse
// matrix for two sparse ones, one dense for two dense, one diagonal for two
// diagonal, a Kronecker sum for two Kronecker sums (so a 2-D problem keeps
// its cheap exponential), one scaled operator for multiples of the same
// one; otherwise the sum of the two scaled operators.
func linComb(a float64, A linop.Operator, b float64, B linop.Operator) linop.Operator {
	sa, A0 := scaledParts(A)
	sb, B0 := scaledParts(B)
	if A0 == B0 {
		return scaleBy(a*sa+b*sb, A0)
	}
	switch x := A.(type) {
	case *linop.CSR:
		if y, ok := B.(*linop.CSR); ok {
			return linop.AddCSR(a, x, b, y)
		}
	case *linop.Dense:
		if y, ok := B.(*linop.Dense); ok {
			var m mat.Dense
			m.Scale(a, x.Mat())
			m.Apply(func(i, j int, v float64) float64 { return v + b*y.Mat().At(i, j) }, &m)
			return linop.NewDense(&m)
		}
	case *linop.Diag:
		if y, ok := B.(*linop.Diag); ok && len(x.D) == len(y.D) {
			d := make([]float64, len(x.D))
			for i := range d {
				d[i] = a*x.D[i] + b*y.D[i]
			}
			return &linop.Diag{D: d}
		}
	case *linop.KronSum:
		if y, ok := B.(*linop.KronSum); ok {
			xr, _ := x.X.Dims()
			yr, _ := y.X.Dims()
			if xr == yr {
				return linop.NewKronSum(linComb(a, x.X, b, y.X), linComb(a, x.Y, b, y.Y))
			}
		}
	}
	return &linop.Sum{Terms: []linop.Operator{scaleBy(a, A), scaleBy(b, B)}}
}

// scaledParts writes A as s·A₀ (s = 1 unless A is a linop.Scaled).
func scaledParts(A linop.Operator) (float64, linop.Operator) {
	if s, ok := A.(*linop.Scaled); ok {
		return s.Alpha, s.A
	}
	return 1, A
}

// scaleBy returns s·A, a Kronecker sum staying one.
func scaleBy(s float64, A linop.Operator) linop.Operator {
	if s == 1 {
		return A
	}
	if k, ok := A.(*linop.KronSum); ok {
		return linop.NewKronSum(scaleBy(s, k.X), scaleBy(s, k.Y))
	}
	return &linop.Scaled{Alpha: s, A: A}
}

// MagnusStats reports the work of PropagateMagnus.
type MagnusStats struct {
	StepStats
	Exponentials int            // actions e^{hB}v computed
	Methods      map[string]int // how many by each method
}

// magnusExpTol is the accuracy each exponential is asked for, relative to
// the tolerance of the whole integration: its error is summed over every
// step taken.
const magnusExpTol = 1e-3

// PropagateMagnus computes u(t) for u' = A(t)u, u(0) = u0, at each output
// time, by the fourth-order commutator-free Magnus method with steps chosen
// by step doubling to meet opts.Tol relative to the largest ‖u‖∞ met
// (ctl.Steps > 0 fixes the steps instead). ctl.Breaks are times where A
// jumps: no step straddles one, and A is sampled only inside each stretch,
// so a piecewise smooth A(t) is integrated to full order.
//
// The error estimate at each output time is the difference between the
// solution carried with half steps and with full steps (which bounds the
// half-step solution's error, propagation included, when the steps are in
// the asymptotic regime), or, if larger, the local estimates (step
// doubling's, plus the exponentials' own) carried forward step by step
// with a bound on each step's growth, e^{h(μ∞(B₁) + μ∞(B₂))}, plus a
// rounding term grown the same way. MagnusStats.Growth is the product of
// those bounds over the run. opts.Method chooses how each exponential's action is
// computed (default "auto", as in Propagate, per step); opts.Crosscheck
// recomputes by ETDRK4 with A frozen at T/2 (crossMagnus).
//
// It panics with ErrShape if n ≠ len(u0); an operator of another order
// returned by at is an error wrapping ErrOperatorSize.
func PropagateMagnus(ctx context.Context, at OperatorAt, u0 []float64, times []float64, ctl StepControl, opts Options) (*Solution, MagnusStats, error) {
	return propagateMagnus(ctx, at, u0, times, ctl, opts, len(u0))
}

// propagateMagnus is PropagateMagnus with errors able to grow only in the
// first lead entries (the rest carried exactly; see PropagateMagnusForced).
func propagateMagnus(ctx context.Context, at OperatorAt, u0 []float64, times []float64, ctl StepControl, opts Options, lead int) (*Solution, MagnusStats, error) {
	n := len(u0)
	if opts.Tol <= 0 {
		opts.Tol = 1e-10
	}
	start := time.Now()
	// Three trial solutions, the solution carried with full steps, and the
	// results; each exponential asks the guard for its own.
	if err := memguard.Vectors(4+len(times), n, memguard.RealBytes, "Magnus work vectors and results"); err != nil {
		return nil, MagnusStats{}, err
	}
	eo := opts
	eo.Tol = math.Max(opts.Tol*magnusExpTol, 4*unitRoundoff)
	eo.Progress, eo.Crosscheck = nil, false
	st := &magnusStepper{ctx: ctx, at: at, n: n, lead: lead, sqrtLead: math.Sqrt(float64(lead)), opts: eo, methods: map[string]int{}}
	if _, err := st.operator(0); err != nil {
		return nil, MagnusStats{}, err
	}
	r, err := integrate(ctx, st, u0, times, opts.Tol, ctl, opts.Progress)
	if err != nil {
		return nil, MagnusStats{}, err
	}
	stats := MagnusStats{StepStats: r.stats, Exponentials: st.exps, Methods: st.methods}
	sol := &Solution{Method: "magnus4", Tol: opts.Tol, Times: append([]float64(nil), times...),
		Values: r.vals, ErrEst: r.errs, MatVecs: st.matvecs, Solves: st.solves, Factors: st.factors}
	steps := fmt.Sprintf("steps chosen by step doubling, %d accepted and %d rejected (step %.3g to %.3g)", r.stats.Accepted, r.stats.Rejected, r.stats.HMin, r.stats.HMax)
	if ctl.Steps > 0 {
		steps = fmt.Sprintf("%d fixed steps (%d taken), error estimated by step doubling", ctl.Steps, r.stats.Accepted)
	}
	sol.Reason = fmt.Sprintf("time-dependent A(t): fourth-order commutator-free Magnus method (two exponentials per step at the Gauss points), %s; %d exponentials by %s, each at tol %.3g",
		steps, st.exps, methodCounts(st.methods), eo.Tol)
	if len(ctl.Breaks) > 0 {
		sol.Reason += fmt.Sprintf("; steps restart at the %d switching times", len(ctl.Breaks))
	}
	sol.Reason += "; " + growthNote(r.stats)
	if st.escalations > 0 {
		sol.Escalation = fmt.Sprintf("%d of the %d exponentials missed their tolerance at first and were escalated to a second method", st.escalations, st.exps)
	}
	if msg := roughNote(r.stats.Rough); msg != "" {
		sol.Reason += "; " + strings.Replace(msg, "N or the forcing", "A(t)", 1)
	}
	sol.Elapsed = time.Since(start)
	sol.checkTolMaxU(r.stats.Scale)
	if opts.Crosscheck {
		sol.Cross = crossMagnus(ctx, at, u0, times, ctl, opts, sol)
		if err := ctx.Err(); err != nil {
			return nil, MagnusStats{}, err
		}
	}
	return sol, stats, nil
}

// crossMagnus recomputes a time-dependent problem by an independent
// route: u' = Lu + (A(t) − L)u with L = A(T/2) frozen at the middle of
// the interval, by ETDRK4 (its own step control, φ-functions of L, the
// time dependence in the explicit term). It shares with the Magnus run
// only the user's A(t). A failure of A(t) inside stops it, and says so.
func crossMagnus(ctx context.Context, at OperatorAt, u0, times []float64, ctl StepControl, opts Options, sol *Solution) *Crosscheck {
	T := 0.0
	for _, t := range times {
		T = math.Max(T, t)
	}
	method := fmt.Sprintf("ETDRK4 on u' = Lu + (A(t) − L)u, L = A(%.6g)", T/2)
	L, err := at(T / 2)
	if err != nil {
		return &Crosscheck{Method: method, Skipped: fmt.Sprintf("A(T/2) failed: %v", err)}
	}
	if err := ETDRK4Check(L); err != nil {
		return &Crosscheck{Method: method, Skipped: err.Error()}
	}
	cctx, cancel := context.WithCancelCause(ctx)
	defer cancel(nil)
	n := len(u0)
	tmp := make([]float64, n)
	N := func(t float64, u, dst []float64) {
		a, err := at(t)
		if err == nil {
			if r, c := a.Dims(); r != n || c != n {
				err = fmt.Errorf("%w: A(t) at t = %.9g is %d×%d, not %d×%d", ErrOperatorSize, t, r, c, n, n)
			}
		}
		if err != nil {
			cancel(err)
			for i := range dst {
				dst[i] = 0
			}
			return
		}
		a.Apply(dst, u)
		L.Apply(tmp, u)
		for i := range dst {
			dst[i] -= tmp[i]
		}
	}
	o := opts
	o.Crosscheck, o.Progress = false, nil
	start := time.Now()
	s2, _, err := ETDRK4(cctx, L, N, u0, times, StepControl{Breaks: ctl.Breaks}, o)
	if err != nil {
		if cause := context.Cause(cctx); cause != nil && ctx.Err() == nil {
			err = cause
		}
		return &Crosscheck{Method: method, Skipped: fmt.Sprintf("the second method failed: %v", err)}
	}
	return &Crosscheck{Method: method, MaxDiff: maxDiffValues(sol.Values, s2.Values), ErrEst: s2.MaxErrEst(), Elapsed: time.Since(start)}
}

// growthNote says how the local errors were carried forward.
func growthNote(st StepStats) string {
	how := "a bound"
	if !st.GrowthBounded {
		how = "an estimate (A(t) has no explicit form; ‖B‖∞ by Hager's method)"
	}
	msg := fmt.Sprintf("local errors carried to later times with %s on each step's growth, e^{h(μ(B₁) + μ(B₂))} from the logarithmic norms of the exponents in the ∞-norm and the 2-norm (an error at the start may grow by at most %.3g by the end)", how, st.Growth)
	if st.Growth > 1e3 {
		msg += "; the logarithmic norm sees no decay of a diffusion in the ∞-norm and every transient of a non-normal A(t), so this bound, and the estimate with it, can exceed the true growth by orders of magnitude"
	}
	return msg
}

// methodCounts lists methods with their counts, most used first.
func methodCounts(m map[string]int) string {
	type kv struct {
		k string
		v int
	}
	var l []kv
	for k, v := range m {
		l = append(l, kv{k, v})
	}
	sort.Slice(l, func(i, j int) bool { return l[i].v > l[j].v || (l[i].v == l[j].v && l[i].k < l[j].k) })
	parts := make([]string, len(l))
	for i, p := range l {
		parts[i] = fmt.Sprintf("%s (%d)", p.k, p.v)
	}
	if len(parts) == 0 {
		return "none"
	}
	return strings.Join(parts, ", ")
}

// PropagatePiecewise computes u(t) for a piecewise-constant generator:
// u' = A_k u on [s_k, s_{k+1}), with s_0 = 0, s_k = switches[k−1] and the
// last piece open to the right, so u(t) = e^{(t−s_k)A_k} ⋯ e^{(s_2−s_1)A_1}
// e^{s_1 A_0} u0 exactly: each piece is one Propagate from the state at its
// start. len(ops) must be len(switches) + 1 and the switches strictly
// increasing and positive (an error otherwise).
//
// Error estimate: within piece k, the estimate of its own Propagate plus
// the error carried into it times M_k ≥ sup_{s ≤ τ_k}‖e^{sA_k}‖∞ (τ_k the
// longest offset into the piece needed; growthBound: 1 for a diagonally
// dominant A_k, otherwise a bound that can be pessimistic for a non-normal
// one). Each piece is asked for tol·‖u0‖∞/P relative to its own start
// value (P pieces used), so the estimates sum to at most tol·‖u0‖∞ when
// nothing grows.
//
// It panics with ErrShape if an operator is not square of order len(u0).
func PropagatePiecewise(ctx context.Context, ops []linop.Operator, switches []float64, u0, times []float64, opts Options) (*Solution, error) {
	return propagatePieces(ctx, ops, switches, nil, u0, times, opts)
}

// PropagatePiecewiseForced is PropagatePiecewise for u' = A_k u + f(t):
// each piece by PropagateForced with f shifted to the piece's start (a
// constant f, or f.Func with its Breaks; a polynomial f is refused). The
// tolerance is then relative to the largest ‖u‖∞ met.
func PropagatePiecewiseForced(ctx context.Context, ops []linop.Operator, switches []float64, f Forcing, u0, times []float64, opts Options) (*Solution, error) {
	if f.Poly != nil {
		return nil, fmt.Errorf("%w: a polynomial forcing is not shifted across switches; give it as a function of t", ErrMethod)
	}
	return propagatePieces(ctx, ops, switches, &f, u0, times, opts)
}

// shiftForcing is f seen from t0: f(t0 + s), its breaks moved by −t0.
func shiftForcing(f *Forcing, t0 float64) Forcing {
	if f.Func == nil {
		return Forcing{Const: f.Const}
	}
	g := *f
	g.Func = func(s float64, dst []float64) { f.Func(t0+s, dst) }
	g.Breaks = nil
	for _, b := range f.Breaks {
		if b > t0 {
			g.Breaks = append(g.Breaks, b-t0)
		}
	}
	return g
}

func propagatePieces(ctx context.Context, ops []linop.Operator, switches []float64, f *Forcing, u0, times []float64, opts Options) (*Solution, error) {
	n := len(u0)
	for _, a := range ops {
		if r, c := a.Dims(); r != n || c != n {
			panic(ErrShape)
		}
	}
	if len(ops) != len(switches)+1 {
		return nil, fmt.Errorf("expo: %d operators need %d switching times, not %d", len(ops), len(ops)-1, len(switches))
	}
	for k, s := range switches {
		if !(s > 0) || math.IsInf(s, 0) || (k > 0 && !(s > switches[k-1])) {
			return nil, fmt.Errorf("expo: switching times must be finite, positive and increasing; switch %d is %v", k, s)
		}
	}
	tmax := 0.0
	for _, t := range times {
		if t < 0 || math.IsNaN(t) || math.IsInf(t, 0) {
			return nil, fmt.Errorf("expo: output time %v: times must be finite and nonnegative", t)
		}
		tmax = math.Max(tmax, t)
	}
	if opts.Tol <= 0 {
		opts.Tol = 1e-10
	}
	start := time.Now()
	u0n := normInf(u0)
	// Pieces that start before the last output time.
	used := 1
	for used < len(ops) && switches[used-1] < tmax {
		used++
	}
	sol := &Solution{Method: "piecewise", Tol: opts.Tol, Times: append([]float64(nil), times...),
		Values: make([][]float64, len(times)), ErrEst: make([]float64, len(times))}
	u := append([]float64(nil), u0...)
	scale := u0n // the size the tolerance is relative to: ‖u0‖∞, or max‖u‖∞ with a forcing
	carried := 0.0
	var how, esc []string
	var cross *Crosscheck
	for k := 0; k < used; k++ {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		lo, hi := 0.0, math.Inf(1)
		if k > 0 {
			lo = switches[k-1]
		}
		if k < len(switches) {
			hi = switches[k]
		}
		// Offsets into the piece: the output times in [lo, hi] and, when a
		// later piece is needed, the piece's end.
		var offs []float64
		var idx []int
		for i, t := range times {
			if t >= lo && (t <= hi || k == used-1) {
				offs = append(offs, t-lo)
				idx = append(idx, i)
			}
		}
		last := k == used-1
		if !last {
			offs = append(offs, hi-lo)
		}
		if len(offs) == 0 {
			continue
		}
		o := opts
		o.Progress = nil
		un := normInf(u)
		o.Tol = opts.Tol / float64(used)
		if un > 0 && scale > 0 {
			o.Tol = math.Min(0.5, math.Max(o.Tol*scale/un, 4*unitRoundoff))
		}
		var s *Solution
		var err error
		if f == nil {
			s, err = Propagate(ctx, ops[k], u, offs, o)
		} else {
			s, err = PropagateForced(ctx, ops[k], u, shiftForcing(f, lo), offs, o)
		}
		if err != nil {
			return nil, fmt.Errorf("piece %d (t in [%g, %g)): %w", k, lo, hi, err)
		}
		tau := 0.0
		for _, x := range offs {
			tau = math.Max(tau, x)
		}
		M := 1.0
		if carried > 0 {
			if M, _, err = growthBound(ctx, ops[k], tau); err != nil {
				return nil, err
			}
		}
		for j, i := range idx {
			sol.Values[i] = s.Values[j]
			sol.ErrEst[i] = M*carried + s.ErrEst[j]
		}
		if f != nil {
			for _, v := range s.Values {
				scale = math.Max(scale, normInf(v))
			}
		}
		if !last {
			u = s.Values[len(offs)-1]
			carried = M*carried + s.ErrEst[len(offs)-1]
		}
		sol.MatVecs += s.MatVecs
		sol.Solves += s.Solves
		sol.Factors += s.Factors
		how = append(how, s.Method)
		if s.Escalation != "" {
			esc = append(esc, fmt.Sprintf("piece %d: %s", k, s.Escalation))
		}
		cross = mergeCross(cross, s.Cross, k)
		if opts.Progress != nil {
			opts.Progress(k+1, used)
		}
	}
	what := "piecewise-constant A"
	if f != nil {
		what += " with a forcing"
	}
	sol.Reason = fmt.Sprintf("%s: the product of the pieces' exponentials (%d of %d pieces up to t = %g), each piece by %s; errors carried across switches times a bound on the next piece's growth",
		what, used, len(ops), tmax, compactList(how))
	sol.Escalation = strings.Join(esc, "; ")
	sol.Elapsed = time.Since(start)
	if f == nil {
		sol.CheckTol(u0n)
	} else {
		sol.checkTolMaxU(scale)
	}
	sol.Cross = cross
	return sol, nil
}

// mergeCross folds piece k's cross-check into the one of the pieces
// before it: the largest difference and estimate, the methods named once,
// the first reason a piece could not be checked. Each piece's second
// method starts from the first method's state at the switch.
func mergeCross(acc, c *Crosscheck, k int) *Crosscheck {
	if c == nil {
		return acc
	}
	if acc == nil {
		acc = &Crosscheck{}
	}
	if c.Skipped != "" && acc.Skipped == "" {
		acc.Skipped = fmt.Sprintf("piece %d: %s", k, c.Skipped)
	}
	if !strings.Contains(acc.Method, c.Method) {
		if acc.Method != "" {
			acc.Method += ", "
		}
		acc.Method += c.Method
	}
	acc.MaxDiff = math.Max(acc.MaxDiff, c.MaxDiff)
	acc.ErrEst = math.Max(acc.ErrEst, c.ErrEst)
	acc.Elapsed += c.Elapsed
	return acc
}

// compactList joins names, runs of the same name written once with a count.
func compactList(names []string) string {
	var out []string
	for i := 0; i < len(names); {
		j := i
		for j < len(names) && names[j] == names[i] {
			j++
		}
		if j-i > 1 {
			out = append(out, fmt.Sprintf("%s (%d pieces)", names[i], j-i))
		} else {
			out = append(out, names[i])
		}
		i = j
	}
	return strings.Join(out, ", ")
}

// PropagateMagnusForced computes u(t) for u' = A(t)u + f(t), u(0) = u0, by
// PropagateMagnus on the augmented problem w' = Â(t)w, w = [u; σ],
//
//	Â(t) = [A(t)  f(t)/σ]
//	       [0     0     ],
//
// whose last entry stays σ, so that its first n entries solve the forced
// problem (the augmented-matrix identity, applied step by step). σ is
// ‖u0‖∞, or ‖f(0)‖∞ when u0 = 0 (or 1 when both vanish), a power of two
// so that the scaling is exact. f sets dst = f(t); an error stops the
// integration and is returned. The steps are chosen against the largest
// ‖[u; σ]‖∞ met; the verdict is restated for u alone: the estimates bound
// the error of u (the last entry is exact), and TolMet compares them with
// tol·max‖u‖∞ (so a σ above every ‖u‖ can leave the tolerance reported
// missed, never met silently).
func PropagateMagnusForced(ctx context.Context, at OperatorAt, f func(t float64, dst []float64) error, u0 []float64, times []float64, ctl StepControl, opts Options) (*Solution, MagnusStats, error) {
	n := len(u0)
	f0 := make([]float64, n)
	if err := f(0, f0); err != nil {
		return nil, MagnusStats{}, err
	}
	sigma := normInf(u0)
	if sigma == 0 {
		sigma = normInf(f0)
	}
	if sigma == 0 || math.IsInf(sigma, 0) || math.IsNaN(sigma) {
		sigma = 1
	}
	sigma = math.Ldexp(1, math.Ilogb(sigma)) // a power of two: exact scaling
	aug := func(t float64) (linop.Operator, error) {
		a, err := at(t)
		if err != nil {
			return nil, err
		}
		if r, c := a.Dims(); r != n || c != n {
			return nil, fmt.Errorf("%w: A(t) at t = %.9g is %d×%d, but u0 has order %d", ErrOperatorSize, t, r, c, n)
		}
		col := make([]float64, n)
		if err := f(t, col); err != nil {
			return nil, err
		}
		for i := range col {
			col[i] /= sigma
		}
		return linop.NewBlock([][]linop.Operator{{a, linop.NewDense(mat.NewDense(n, 1, col))}, {nil, nil}}, []int{n, 1}, []int{n, 1}), nil
	}
	w0 := append(append([]float64(nil), u0...), sigma)
	sol, stats, err := propagateMagnus(ctx, aug, w0, times, ctl, opts, n)
	if err != nil {
		return nil, stats, err
	}
	scale := normInf(u0)
	for i, w := range sol.Values {
		sol.Values[i] = w[:n]
		scale = math.Max(scale, normInf(sol.Values[i]))
	}
	sol.Reason = fmt.Sprintf("forced: u' = A(t)u + f(t) as [u; σ]' = [A(t), f(t)/σ; 0, 0][u; σ] with σ = %g; %s", sigma, sol.Reason)
	sol.checkTolMaxU(scale)
	return sol, stats, nil
}

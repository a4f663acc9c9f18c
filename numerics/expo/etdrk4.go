package expo

import (
	"context"
	"fmt"
	"math"
	"time"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// Nonlinear is the term N(t, u) of u' = Lu + N(t, u); it sets dst = N(t, u).
type Nonlinear func(t float64, u, dst []float64)

// etdCoeffs holds the ETDRK4 operators for one step length h, either as
// diagonals (L diagonal) or as dense matrices.
type etdCoeffs struct {
	diag                 bool
	e, e2, q, f1, f2, f3 []float64
	E, E2, Q, F1, F2, F3 *mat.Dense
}

// maxETDDense bounds the order of a non-diagonal L for ETDRK4 (its
// φ-functions are dense matrices of that order).
const maxETDDense = 1500

// newETDCoeffs computes, for step h,
//
//	E = e^{hL}, E2 = e^{hL/2}, Q = (h/2)φ_1(hL/2),
//	F1 = h(φ_1 − 3φ_2 + 4φ_3)(hL), F2 = h(φ_2 − 2φ_3)(hL), F3 = h(4φ_3 − φ_2)(hL),
//
// the coefficients of Cox & Matthews (J. Comput. Phys. 176, 2002, eq. (26))
// written with φ-functions. For diagonal L each scalar φ_k is evaluated by
// PhiScalar (contour means for small arguments, Kassam & Trefethen 2005);
// otherwise through the augmented-matrix identity (Phi).
func newETDCoeffs(L linop.Operator, h float64) (*etdCoeffs, error) {
	c := &etdCoeffs{}
	if d, ok := L.(*linop.Diag); ok {
		n := len(d.D)
		if err := memguard.Vectors(6, n, memguard.RealBytes, "ETDRK4 diagonal coefficients"); err != nil {
			return nil, err
		}
		c.diag = true
		c.e, c.e2, c.q = make([]float64, n), make([]float64, n), make([]float64, n)
		c.f1, c.f2, c.f3 = make([]float64, n), make([]float64, n), make([]float64, n)
		for i, l := range d.D {
			z := complex(h*l, 0)
			p1, p2, p3 := real(PhiScalar(1, z)), real(PhiScalar(2, z)), real(PhiScalar(3, z))
			c.e[i] = math.Exp(h * l)
			c.e2[i] = math.Exp(h * l / 2)
			c.q[i] = h / 2 * real(PhiScalar(1, z/2))
			c.f1[i] = h * (p1 - 3*p2 + 4*p3)
			c.f2[i] = h * (p2 - 2*p3)
			c.f3[i] = h * (4*p3 - p2)
		}
		return c, nil
	}
	n, _ := L.Dims()
	if n > maxETDDense {
		return nil, fmt.Errorf("expo: ETDRK4 with a non-diagonal operator of order %d needs dense φ-functions (limit %d)", n, maxETDDense)
	}
	// Six coefficient matrices, hL and hL/2, and the φ-functions' work
	// (augmented matrices of order n+3, about four of them), through the
	// memory guard before any is allocated.
	if err := memguard.Bytes(float64(memguard.RealBytes)*(8*float64(n)*float64(n)+4*float64(n+3)*float64(n+3)), fmt.Sprintf("ETDRK4 dense φ-coefficients of order %d", n)); err != nil {
		return nil, err
	}
	a, err := toDense(L)
	if err != nil {
		return nil, err
	}
	var ha, ha2 mat.Dense
	ha.Scale(h, a)
	ha2.Scale(h/2, a)
	ph := []*mat.Dense{new(mat.Dense), new(mat.Dense), new(mat.Dense)}
	if err := Phi(ph, &ha); err != nil {
		return nil, err
	}
	ph2 := []*mat.Dense{new(mat.Dense)}
	if err := Phi(ph2, &ha2); err != nil {
		return nil, err
	}
	c.E, c.E2 = new(mat.Dense), new(mat.Dense)
	if _, err := Exp(c.E, &ha); err != nil {
		return nil, err
	}
	if _, err := Exp(c.E2, &ha2); err != nil {
		return nil, err
	}
	comb := func(a1, a2, a3 float64) *mat.Dense {
		var m mat.Dense
		m.Scale(h*a1, ph[0])
		addScaled(&m, h*a2, ph[1])
		addScaled(&m, h*a3, ph[2])
		return &m
	}
	c.Q = new(mat.Dense)
	c.Q.Scale(h/2, ph2[0])
	c.F1, c.F2, c.F3 = comb(1, -3, 4), comb(0, 1, -2), comb(0, -1, 4)
	return c, nil
}

// mul sets dst = M x for the diagonal or dense coefficient.
func (c *etdCoeffs) mul(dst []float64, d []float64, M *mat.Dense, x []float64) {
	if c.diag {
		for i := range dst {
			dst[i] = d[i] * x[i]
		}
		return
	}
	gemv(M, false, dst, x)
}

// step advances u by one ETDRK4 step of length h from time t.
func (c *etdCoeffs) step(N Nonlinear, t, h float64, u []float64, tmp *etdWork) {
	n := len(u)
	Nu, Na, Nb, Nc := tmp.v[0], tmp.v[1], tmp.v[2], tmp.v[3]
	a, b, cc, eu, t1 := tmp.v[4], tmp.v[5], tmp.v[6], tmp.v[7], tmp.v[8]
	N(t, u, Nu)
	c.mul(eu, c.e2, c.E2, u)
	c.mul(t1, c.q, c.Q, Nu)
	for i := 0; i < n; i++ {
		a[i] = eu[i] + t1[i]
	}
	N(t+h/2, a, Na)
	c.mul(t1, c.q, c.Q, Na)
	for i := 0; i < n; i++ {
		b[i] = eu[i] + t1[i]
	}
	N(t+h/2, b, Nb)
	c.mul(eu, c.e2, c.E2, a)
	for i := 0; i < n; i++ {
		t1[i] = 2*Nb[i] - Nu[i]
	}
	c.mul(cc, c.q, c.Q, t1)
	for i := 0; i < n; i++ {
		cc[i] += eu[i]
	}
	N(t+h, cc, Nc)
	c.mul(eu, c.e, c.E, u)
	c.mul(t1, c.f1, c.F1, Nu)
	for i := 0; i < n; i++ {
		u[i] = eu[i] + t1[i]
		Na[i] += Nb[i]
	}
	c.mul(t1, c.f2, c.F2, Na)
	for i := 0; i < n; i++ {
		u[i] += 2 * t1[i]
	}
	c.mul(t1, c.f3, c.F3, Nc)
	for i := 0; i < n; i++ {
		u[i] += t1[i]
	}
}

type etdWork struct{ v [9][]float64 }

// etdStepper is ETDRK4 as a oneStepper, with its coefficients cached per
// step length (at most etdCacheBytes of them for a dense L).
type etdStepper struct {
	L     linop.Operator
	N     Nonlinear
	cache map[float64]*etdCoeffs
	keys  []float64
	limit int
	wk    etdWork
}

// etdCacheBytes bounds the memory of cached dense coefficient sets.
const etdCacheBytes = 256 << 20

func newETDStepper(L linop.Operator, N Nonlinear) *etdStepper {
	n, _ := L.Dims()
	s := &etdStepper{L: L, N: N, cache: map[float64]*etdCoeffs{}, limit: 64}
	if _, ok := L.(*linop.Diag); !ok {
		s.limit = max(3, etdCacheBytes/(6*8*n*n+1))
	}
	for i := range s.wk.v {
		s.wk.v[i] = make([]float64, n)
	}
	return s
}

func (s *etdStepper) order() int   { return 4 }
func (s *etdStepper) name() string { return "ETDRK4" }

func (s *etdStepper) coeffs(h float64) (*etdCoeffs, error) {
	if c, ok := s.cache[h]; ok {
		return c, nil
	}
	if _, ok := s.L.(*linop.Diag); !ok && len(s.keys) < s.limit {
		// The cache grows by one dense set: ask the guard for all of them.
		n, _ := s.L.Dims()
		if err := memguard.Bytes(float64(len(s.keys)+1)*6*float64(memguard.RealBytes)*float64(n)*float64(n), fmt.Sprintf("ETDRK4 coefficient cache (%d step lengths of order %d)", len(s.keys)+1, n)); err != nil {
			return nil, err
		}
	}
	c, err := newETDCoeffs(s.L, h)
	if err != nil {
		return nil, err
	}
	if len(s.keys) >= s.limit {
		delete(s.cache, s.keys[0])
		s.keys = s.keys[1:]
	}
	s.cache[h] = c
	s.keys = append(s.keys, h)
	return c, nil
}

func (s *etdStepper) step(t, h float64, u []float64, seg segment) error {
	c, err := s.coeffs(h)
	if err != nil {
		return err
	}
	N := s.N
	if seg.loBreak || seg.hiBreak {
		N = func(t float64, u, dst []float64) { s.N(seg.clamp(t), u, dst) }
	}
	c.step(N, t, h, u, &s.wk)
	return nil
}

// diffStep is the exponential trapezoidal rule for the difference of two
// solutions (see diffPropagator), with hφ1 = F1 + 4F2 + F3 and
// hφ2 = 2F2 + F3: dst = EΔ + F1 δ0 + F2(2δ0 + 2δ1) + F3 δ1.
func (s *etdStepper) diffStep(dst []float64, t, h float64, c0, f0, c1, f1 []float64, seg segment) error {
	c, err := s.coeffs(h)
	if err != nil {
		return err
	}
	N := func(t float64, u, dst []float64) { s.N(seg.clamp(t), u, dst) }
	d0, d1, x, y, tmp := s.wk.v[0], s.wk.v[1], s.wk.v[2], s.wk.v[3], s.wk.v[4]
	N(t, c0, x)
	N(t, f0, y)
	for i := range d0 {
		d0[i] = x[i] - y[i]
	}
	N(t+h, c1, x)
	N(t+h, f1, y)
	for i := range d1 {
		d1[i] = x[i] - y[i]
		x[i] = c0[i] - f0[i]
	}
	c.mul(dst, c.e, c.E, x)
	c.mul(tmp, c.f1, c.F1, d0)
	for i := range dst {
		dst[i] += tmp[i]
		x[i] = 2 * (d0[i] + d1[i])
	}
	c.mul(tmp, c.f2, c.F2, x)
	for i := range dst {
		dst[i] += tmp[i]
	}
	c.mul(tmp, c.f3, c.F3, d1)
	for i := range dst {
		dst[i] += tmp[i]
	}
	return nil
}

// ETDRK4Check returns nil when ETDRK4 takes L: a *linop.Diag, an operator
// of order ≤ 1500 (dense φ-functions), or a sparse symmetric one (contour
// combinations); otherwise an error saying so.
func ETDRK4Check(L linop.Operator) error {
	n, _ := L.Dims()
	if _, ok := L.(*linop.Diag); ok || n <= maxETDDense || sparseETDApplies(L) {
		return nil
	}
	return fmt.Errorf("%w: ETDRK4 takes a diagonal operator, one of order ≤ %d (dense φ-functions) or a sparse symmetric one (contour integrals); this one has order %d and is neither", ErrMethod, maxETDDense, n)
}

// ETDRK4 integrates the semilinear problem u' = Lu + N(t, u), u(0) = u0,
// with the fourth-order exponential time-differencing Runge–Kutta scheme of
// Cox & Matthews (J. Comput. Phys. 2002) in the stable form of Kassam &
// Trefethen (SIAM J. Sci. Comput. 2005). Steps are chosen by integrate's
// step-doubling control (see there) to meet opts.Tol relative to the
// largest ‖u‖∞ met, or fixed by ctl.Steps; they restart at every output
// time and at ctl.Breaks. The reported values are those of the half steps;
// the estimate is the coarse–fine difference, about 15 times their error
// in the asymptotic regime. Solution.TolMet says whether the estimate met
// the tolerance; the second result gives the accepted and rejected steps.
// With opts.Crosscheck, the problem is solved again by an implicit–explicit
// Runge–Kutta method (see crossSemilinear).
//
// L may be a *linop.Diag (any order) or an operator of order ≤ 1500. It
// panics with ErrShape on mismatched sizes and returns an error for a
// negative time, non-finite values, a step-size collapse, or when ctx is
// cancelled.
func ETDRK4(ctx context.Context, L linop.Operator, N Nonlinear, u0 []float64, times []float64, ctl StepControl, opts Options) (*Solution, StepStats, error) {
	n, c := L.Dims()
	if n != c || len(u0) != n {
		panic(ErrShape)
	}
	if opts.Tol <= 0 {
		opts.Tol = 1e-10
	}
	start := time.Now()
	if err := ETDRK4Check(L); err != nil {
		return nil, StepStats{}, err
	}
	// The stepper's nine work vectors, three trial steps, one set of six
	// coefficients and the results, through the memory guard.
	if err := memguard.Vectors(18+len(times), n, memguard.RealBytes, "ETDRK4 work vectors and results"); err != nil {
		return nil, StepStats{}, err
	}
	var st oneStepper
	how := ""
	if sparseETDApplies(L) {
		sp, err := newETDSparseStepper(ctx, L, N, opts.Tol)
		if err != nil {
			return nil, StepStats{}, err
		}
		st, how = sp, fmt.Sprintf(", each stage a φ-combination by a %d-node contour integral of the augmented resolvent", 2*len(sp.z))
	} else {
		st = newETDStepper(L, N)
	}
	r, err := integrate(ctx, st, u0, times, opts.Tol, ctl, opts.Progress)
	if err != nil {
		return nil, StepStats{}, err
	}
	sol := &Solution{Method: "etdrk4", Tol: opts.Tol, Times: append([]float64(nil), times...),
		Values: r.vals, ErrEst: r.errs}
	if ctl.Steps > 0 {
		sol.Reason = fmt.Sprintf("semilinear problem: ETDRK4 with %d fixed steps (%d taken)%s, error estimated by step doubling", ctl.Steps, r.stats.Accepted, how)
	} else {
		sol.Reason = fmt.Sprintf("semilinear problem: ETDRK4 with steps chosen by step doubling, %d accepted and %d rejected (step %.3g to %.3g)%s",
			r.stats.Accepted, r.stats.Rejected, r.stats.HMin, r.stats.HMax, how)
	}
	if sp, ok := st.(*etdSparseStepper); ok {
		sol.Solves, sol.Factors = sp.solves, sp.factors
	}
	if msg := roughNote(r.stats.Rough); msg != "" {
		sol.Reason += "; " + msg
	}
	sol.Elapsed = time.Since(start)
	sol.checkTolMaxU(r.stats.Scale)
	if opts.Crosscheck {
		crossSemilinear(ctx, sol, L, N, u0, times, ctl, opts)
	}
	return sol, r.stats, nil
}

package expo

import (
	"context"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
)

// switchedOff is u' = Lu + c·[t < ts], L = [[−1, 1], [0, −2]], u(0) = u0.
// By variation of constants (closed form, by hand): with the steady state
// u* = −L⁻¹c, u(t) = u* + e^{tL}(u0 − u*) for t ≤ ts and
// u(t) = e^{(t−ts)L}u(ts) after, where
// e^{tL} = [[e^{−t}, e^{−t} − e^{−2t}], [0, e^{−2t}]].
func switchedOff(ts float64) (L linop.Operator, u0 []float64, f func(float64, []float64), exact func(float64) []float64) {
	L = linop.NewDense(mat.NewDense(2, 2, []float64{-1, 1, 0, -2}))
	c := []float64{1, 2}
	u0 = []float64{0.5, -1}
	us := []float64{2, 1} // −L⁻¹c
	prop := func(tt float64, v []float64) []float64 {
		e1, e2 := math.Exp(-tt), math.Exp(-2*tt)
		return []float64{e1*v[0] + (e1-e2)*v[1], e2 * v[1]}
	}
	on := func(tt float64) []float64 {
		d := prop(tt, []float64{u0[0] - us[0], u0[1] - us[1]})
		return []float64{us[0] + d[0], us[1] + d[1]}
	}
	exact = func(tt float64) []float64 {
		if tt <= ts {
			return on(tt)
		}
		return prop(tt-ts, on(ts))
	}
	f = func(tt float64, d []float64) {
		if tt < ts {
			copy(d, c)
		} else {
			d[0], d[1] = 0, 0
		}
	}
	return L, u0, f, exact
}

func TestForcedSwitchedOff(t *testing.T) {
	ts := 0.7
	L, u0, f, exact := switchedOff(ts)
	times := []float64{0.5, 1, 3}
	for _, tol := range []float64{1e-6, 1e-10} {
		// With the switch given: integrated across exactly.
		s, err := PropagateForced(context.Background(), L, u0, Forcing{Func: f, Breaks: []float64{ts}}, times, Options{Tol: tol, Crosscheck: true})
		if err != nil {
			t.Fatal(err)
		}
		checkContract(t, "switch given", s, func(i int) []float64 { return exact(times[i]) }, maxNormOf(u0, s.Values))
		if !s.TolMet {
			t.Errorf("tol %g with the switch given: %s", tol, s.Shortfall)
		}
		if strings.Contains(s.Reason, "jumps") {
			t.Errorf("a jump reported although it was given: %s", s.Reason)
		}
		if c := s.Cross; c == nil || c.Skipped != "" || c.MaxDiff > s.MaxErrEst()+c.ErrEst {
			t.Errorf("cross-check %+v against estimate %.3g", c, s.MaxErrEst())
		}
		// Without it: found, resolved, and reported near ts.
		s2, err := PropagateForced(context.Background(), L, u0, Forcing{Func: f}, times, Options{Tol: tol})
		if err != nil {
			t.Fatal(err)
		}
		for i, tt := range times {
			if e := maxAbsDiff(s2.Values[i], exact(tt)); e > math.Max(s2.ErrEst[i], 1e-15) {
				t.Errorf("tol %g, switch not given, t=%g: error %.3g above estimate %.3g", tol, tt, e, s2.ErrEst[i])
			}
		}
		if !strings.Contains(s2.Reason, "jumps or has a kink near t ≈ 0.7") {
			t.Errorf("the jump at 0.7 was not reported: %s", s2.Reason)
		}
		if s2.TolMet != (s2.MaxErrEst() <= tol*maxNormOf(u0, s2.Values)) {
			t.Errorf("TolMet %v with estimate %.3g", s2.TolMet, s2.MaxErrEst())
		}
		t.Logf("tol %g: given %.3g (%s); found: estimate %.3g, met %v", tol, s.MaxErrEst(), s.Reason, s2.MaxErrEst(), s2.TolMet)
	}
}

func TestETDRK4Switch(t *testing.T) {
	// The same switched-off forcing as a time-dependent term of ETDRK4,
	// with the switch given and without it.
	ts := 0.7
	L, u0, f, exact := switchedOff(ts)
	N := func(tt float64, _, dst []float64) { f(tt, dst) }
	times := []float64{0.5, 1, 3}
	s, st, err := ETDRK4(context.Background(), L, N, u0, times, StepControl{Breaks: []float64{ts}}, Options{Tol: 1e-9, Crosscheck: true})
	if err != nil {
		t.Fatal(err)
	}
	checkContract(t, "ETDRK4 switch given", s, func(i int) []float64 { return exact(times[i]) }, st.Scale)
	if !s.TolMet {
		t.Errorf("switch given: %s", s.Shortfall)
	}
	if c := s.Cross; c == nil || c.Skipped != "" || c.MaxDiff > s.MaxErrEst()+c.ErrEst {
		t.Errorf("cross-check %+v against estimate %.3g", c, s.MaxErrEst())
	}
	s2, _, err := ETDRK4(context.Background(), L, N, u0, times, StepControl{}, Options{Tol: 1e-9})
	if err != nil {
		t.Fatal(err)
	}
	for i, tt := range times {
		if e := maxAbsDiff(s2.Values[i], exact(tt)); e > math.Max(s2.ErrEst[i], 1e-15) {
			t.Errorf("switch not given, t=%g: error %.3g above estimate %.3g", tt, e, s2.ErrEst[i])
		}
	}
	if !strings.Contains(s2.Reason, "near t ≈ 0.7") {
		t.Errorf("the jump at 0.7 was not reported: %s", s2.Reason)
	}
	t.Logf("given: %s; not given: %s, estimate %.3g, met %v", s.Reason, s2.Reason, s2.MaxErrEst(), s2.TolMet)
}

func maxNormOf(u0 []float64, vs [][]float64) float64 {
	m := normInf(u0)
	for _, v := range vs {
		m = math.Max(m, normInf(v))
	}
	return m
}

func TestForcedSwitchedOff2D(t *testing.T) {
	// A 2-D heat operator Δ_h = X ⊕ X (X the Dirichlet second difference on
	// 20 points) with a source g·[t < 0.05], g = sin(πx)sin(πy) sampled: g
	// is an eigenvector with λ = −(8/h²)sin²(πh/2) (closed form), so by
	// variation of constants u(t) = g(e^{λt} − 1)/λ for t ≤ 0.05 and
	// u(0.05)e^{λ(t − 0.05)} after.
	m := 20
	X, x := etdLaplacian(m, 1)
	A := linop.NewKronSum(X, X)
	h := 1 / float64(m+1)
	lam := -8 / (h * h) * math.Pow(math.Sin(math.Pi*h/2), 2)
	g := make([]float64, m*m)
	for i := range x {
		for j := range x {
			g[i*m+j] = math.Sin(math.Pi*x[i]) * math.Sin(math.Pi*x[j])
		}
	}
	ts := 0.05
	f := func(tt float64, d []float64) {
		for k := range d {
			d[k] = 0
			if tt < ts {
				d[k] = g[k]
			}
		}
	}
	exact := func(tt float64) []float64 {
		c := (math.Exp(lam*math.Min(tt, ts)) - 1) / lam
		if tt > ts {
			c *= math.Exp(lam * (tt - ts))
		}
		u := make([]float64, len(g))
		for k := range u {
			u[k] = c * g[k]
		}
		return u
	}
	times := []float64{0.03, 0.1}
	u0 := make([]float64, m*m)
	for _, br := range [][]float64{{ts}, nil} {
		s, err := PropagateForced(context.Background(), A, u0, Forcing{Func: f, Breaks: br}, times, Options{Tol: 1e-8})
		if err != nil {
			t.Fatal(err)
		}
		checkContract(t, "2-D switched source", s, func(i int) []float64 { return exact(times[i]) }, maxNormOf(u0, s.Values))
		if !s.TolMet {
			t.Errorf("breaks %v: %s", br, s.Shortfall)
		}
		if found := strings.Contains(s.Reason, "near t ≈ 0.05"); found != (br == nil) {
			t.Errorf("breaks %v: jump reported %v: %s", br, found, s.Reason)
		}
		t.Logf("breaks %v: estimate %.3g, true %.3g", br, s.MaxErrEst(), maxAbsDiff(s.Values[1], exact(0.1)))
	}
}

func TestForcedConstantDamped(t *testing.T) {
	// closed form: u' = λu + 1, u(0) = 0 has u(t) = (e^{λt} − 1)/λ, of size
	// 1/|λ| ≪ 1 for λ = −100, −200: the tolerance, relative to max‖u‖,
	// must still be met (the augmented vector is rebalanced).
	lams := []float64{-100, -200}
	A := linop.NewDense(mat.NewDense(2, 2, []float64{lams[0], 0, 0, lams[1]}))
	times := []float64{0.005, 1}
	exact := func(tt float64) []float64 {
		return []float64{(math.Exp(lams[0]*tt) - 1) / lams[0], (math.Exp(lams[1]*tt) - 1) / lams[1]}
	}
	for _, m := range []string{MethodTaylor, MethodDense, MethodKrylov} {
		s, err := PropagateForced(context.Background(), A, []float64{0, 0}, Forcing{Const: []float64{1, 1}}, times, Options{Method: m, Tol: 1e-8})
		if err != nil {
			t.Fatal(err)
		}
		checkContract(t, m, s, func(i int) []float64 { return exact(times[i]) }, maxNormOf([]float64{0, 0}, s.Values))
		if !s.TolMet {
			t.Errorf("%s: %s", m, s.Shortfall)
		}
	}
}

package expo

import (
	"context"
	"math"
	"math/cmplx"
	"testing"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
)

func TestPhiScalarClosedForms(t *testing.T) {
	// closed form: φ1(−1) = 1 − e^{−1}; φ1(z) = (e^z − 1)/z, φ2(z) = (e^z − 1 − z)/z²,
	// φ3(z) = (e^z − 1 − z − z²/2)/z³, and φ_k(0) = 1/k!.
	if got, want := real(PhiScalar(1, -1)), 1-math.Exp(-1); math.Abs(got-want) > 2e-16 {
		t.Errorf("φ1(−1) = %v, want %v", got, want)
	}
	for k, want := range []float64{1, 1, 0.5, 1.0 / 6} {
		if got := PhiScalar(k, 0); cmplx.Abs(got-complex(want, 0)) > 1e-15 {
			t.Errorf("φ%d(0) = %v, want %v", k, got, want)
		}
	}
	// Small arguments by their Taylor series φ_k(z) = Σ z^j/(j+k)! (closed form).
	for _, z := range []complex128{1e-8, -1e-3, 0.3 + 0.4i, -0.9} {
		for k := 1; k <= 3; k++ {
			var s complex128
			term := complex(1, 0)
			fact := 1.0
			for j := 1; j <= k; j++ {
				fact *= float64(j)
			}
			term = complex(1/fact, 0)
			for j := 0; j < 30; j++ {
				s += term
				term *= z / complex(float64(j+k+1), 0)
			}
			if got := PhiScalar(k, z); cmplx.Abs(got-s) > 1e-15*cmplx.Abs(s) {
				t.Errorf("φ%d(%v) = %v, series %v", k, z, got, s)
			}
		}
	}
}

func TestPhiMatrix(t *testing.T) {
	// For symmetric A = Q diag(λ) Qᵀ, φ_k(A) = Q diag(φ_k(λ)) Qᵀ (closed form
	// from the eigen-decomposition, including λ = 0 and λ near 0).
	n := 6
	a := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			a.SetSym(i, j, math.Sin(float64(3*i+j))*2)
		}
	}
	var eig mat.EigenSym
	if !eig.Factorize(a, true) {
		t.Fatal("eigen-decomposition failed")
	}
	lam := eig.Values(nil)
	var q mat.Dense
	eig.VectorsTo(&q)
	ph := []*mat.Dense{new(mat.Dense), new(mat.Dense), new(mat.Dense)}
	if err := Phi(ph, a); err != nil {
		t.Fatal(err)
	}
	for k := 1; k <= 3; k++ {
		d := mat.NewDiagDense(n, nil)
		for i, l := range lam {
			d.SetDiag(i, real(PhiScalar(k, complex(l, 0))))
		}
		var w, tmp mat.Dense
		tmp.Mul(&q, d)
		w.Mul(&tmp, q.T())
		if e := relErr(ph[k-1], &w); e > 1e-14 {
			t.Errorf("φ%d(A): rel err %g", k, e)
		}
	}
	// A singular, nilpotent A: φ1(N) = I + N/2 for N² = 0.
	nil2 := mat.NewDense(2, 2, []float64{0, 5, 0, 0})
	p1 := []*mat.Dense{new(mat.Dense)}
	if err := Phi(p1, nil2); err != nil {
		t.Fatal(err)
	}
	if e := relErr(p1[0], mat.NewDense(2, 2, []float64{1, 2.5, 0, 1})); e > 1e-16 {
		t.Errorf("φ1 of a nilpotent matrix: rel err %g", e)
	}
}

func TestForcedConstant(t *testing.T) {
	// closed form: u' = Lu + c with L = [[−1, 1],[0, −2]] has the steady state
	// u* = −L⁻¹c and u(t) = u* + e^{tL}(u0 − u*), with
	// e^{tL} = [[e^{−t}, e^{−t} − e^{−2t}],[0, e^{−2t}]].
	L := linop.NewDense(mat.NewDense(2, 2, []float64{-1, 1, 0, -2}))
	c := []float64{1, 2}
	u0 := []float64{0.5, -1}
	us := []float64{2, 1} // −L⁻¹c
	times := []float64{0.3, 2, 7}
	exact := func(tt float64) []float64 {
		e1, e2 := math.Exp(-tt), math.Exp(-2*tt)
		d0, d1 := u0[0]-us[0], u0[1]-us[1]
		return []float64{us[0] + e1*d0 + (e1-e2)*d1, us[1] + e2*d1}
	}
	for _, m := range []string{MethodDense, MethodTaylor, MethodKrylov} {
		s, err := PropagateForced(context.Background(), L, u0, Forcing{Const: c}, times, Options{Method: m, Tol: 1e-14})
		if err != nil {
			t.Fatal(err)
		}
		for i, tt := range times {
			e := maxDiff(s.Values[i], exact(tt))
			if e > 1e-13 || e > math.Max(s.ErrEst[i], 1e-15) {
				t.Errorf("%s t=%g: error %.3g, estimate %.3g", m, tt, e, s.ErrEst[i])
			}
		}
	}
	// The same forcing given as a function goes through interpolation.
	s, err := PropagateForced(context.Background(), L, u0, Forcing{Func: func(_ float64, d []float64) { copy(d, c) }}, times, Options{})
	if err != nil {
		t.Fatal(err)
	}
	for i, tt := range times {
		if e := maxDiff(s.Values[i], exact(tt)); e > 1e-12 {
			t.Errorf("func forcing t=%g: error %.3g", tt, e)
		}
	}
}

func TestForcedOscillating(t *testing.T) {
	// closed form: u' = −k u + sin(ωt), u(0) = 0 has
	// u(t) = (k sin ωt − ω cos ωt + ω e^{−kt})/(k² + ω²).
	k, w := 2.0, 5.0
	L := &linop.Diag{D: []float64{-k}}
	times := []float64{0.5, 1, 3}
	s, err := PropagateForced(context.Background(), L, []float64{0}, Forcing{Func: func(tt float64, d []float64) { d[0] = math.Sin(w * tt) }}, times, Options{})
	if err != nil {
		t.Fatal(err)
	}
	for i, tt := range times {
		want := (k*math.Sin(w*tt) - w*math.Cos(w*tt) + w*math.Exp(-k*tt)) / (k*k + w*w)
		e := math.Abs(s.Values[i][0] - want)
		checkBound(t, "oscillating forcing", e, s.ErrEst[i], 1)
		if e > 1e-7 {
			t.Errorf("t=%g: error %.3g", tt, e)
		}
	}
	// A quadratic forcing f(t) = 1 + 2t + 3t² as a polynomial is exact:
	// u' = −k u + f, u(0)=0 ⇒ u = p(t) − p(0)e^{−kt} with the particular
	// polynomial p = a + bt + ct², c = 3/k, b = (2 − 2c)/k, a = (1 − b)/k.
	c := 3 / k
	b := (2 - 2*c) / k
	a := (1 - b) / k
	sp, err := PropagateForced(context.Background(), L, []float64{0}, Forcing{Poly: [][]float64{{1}, {2}, {6}}}, times, Options{Method: MethodTaylor, Tol: 1e-14})
	if err != nil {
		t.Fatal(err)
	}
	for i, tt := range times {
		want := a + b*tt + c*tt*tt - a*math.Exp(-k*tt)
		if e := math.Abs(sp.Values[i][0] - want); e > 1e-13*math.Max(1, math.Abs(want)) {
			t.Errorf("quadratic forcing t=%g: %v want %v", tt, sp.Values[i][0], want)
		}
	}
}

func TestETDRK4Bernoulli(t *testing.T) {
	// closed form: u' = λu − u² (a Bernoulli equation) has
	// u(t) = λu0 e^{λt}/(λ + u0(e^{λt} − 1)); with L = diag(λ) and N(u) = −u²
	// each component is one such equation. λ = −100 makes the problem stiff.
	lams := []float64{-100, -10, -1, 0.5}
	u0 := []float64{1, 0.5, 2, 0.1}
	N := func(_ float64, u, dst []float64) {
		for i, v := range u {
			dst[i] = -v * v
		}
	}
	exact := func(tt float64) []float64 {
		w := make([]float64, len(lams))
		for i, l := range lams {
			e := math.Exp(l * tt)
			w[i] = l * u0[i] * e / (l + u0[i]*(e-1))
		}
		return w
	}
	times := []float64{0.5, 2}
	var prevErr float64
	dense := mat.NewDense(4, 4, nil)
	for i, l := range lams {
		dense.Set(i, i, l)
	}
	for _, L := range []linop.Operator{&linop.Diag{D: lams}, linop.NewDense(dense)} {
		prevErr = 0
		for _, steps := range []int{20, 40, 80} { // h = 0.1, 0.05, 0.025 over [0, 2]
			s, _, err := ETDRK4(context.Background(), L, N, u0, times, StepControl{Steps: steps}, Options{})
			if err != nil {
				t.Fatal(err)
			}
			worst := 0.0
			for i, tt := range times {
				e := maxDiff(s.Values[i], exact(tt))
				checkBound(t, "ETDRK4", e, s.ErrEst[i], 1)
				worst = math.Max(worst, e)
			}
			if prevErr > 0 {
				// Fourth order: halving h divides the error by about 16.
				if r := prevErr / worst; r < 10 || r > 24 {
					t.Errorf("%T steps=%d: error ratio %.3g, want ≈ 16", L, steps, r)
				}
			}
			prevErr = worst
		}
		if prevErr > 1e-7 {
			t.Errorf("%T: error %.3g at h = 0.025", L, prevErr)
		}
	}
}

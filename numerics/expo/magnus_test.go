package expo

import (
	"context"
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"testing"
	"time"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
)

func dense2(a, b, c, d float64) *linop.Dense {
	return linop.NewDense(mat.NewDense(2, 2, []float64{a, b, c, d}))
}

// exp2x2 is the closed form of the exponential of a real 2×2 matrix M:
// with m = tr M/2 and D = M − mI (traceless, D² = −det(D)·I),
// e^M = e^m (cosh s·I + (sinh s/s)·D), s² = −det D; for s² < 0 the cosh and
// sinh become cos and sin of |s|.
func exp2x2(M [4]float64) [4]float64 {
	m := (M[0] + M[3]) / 2
	D := [4]float64{M[0] - m, M[1], M[2], M[3] - m}
	s2 := -(D[0]*D[3] - D[1]*D[2])
	var c, sh float64
	switch {
	case s2 > 0:
		s := math.Sqrt(s2)
		c, sh = math.Cosh(s), math.Sinh(s)/s
	case s2 < 0:
		s := math.Sqrt(-s2)
		c, sh = math.Cos(s), math.Sin(s)/s
	default:
		c, sh = 1, 1
	}
	e := math.Exp(m)
	return [4]float64{e * (c + sh*D[0]), e * sh * D[1], e * sh * D[2], e * (c + sh*D[3])}
}

func mul2(M [4]float64, v []float64) []float64 {
	return []float64{M[0]*v[0] + M[1]*v[1], M[2]*v[0] + M[3]*v[1]}
}

// checkMagnus asserts checkContract (etd_test.go) against a closed form
// of t, and that the tolerance was met.
func checkMagnus(t *testing.T, sol *Solution, exact func(float64) []float64, scale float64) {
	t.Helper()
	checkContract(t, t.Name(), sol, func(i int) []float64 { return exact(sol.Times[i]) }, scale)
	if !sol.TolMet {
		t.Errorf("tolerance not met: %s", sol.Shortfall)
	}
}

func TestMagnusScalarAndDiagonal(t *testing.T) {
	times := []float64{0.5, 1.5, 3}
	t.Run("scalar", func(t *testing.T) {
		// u' = (cos t − 1/2)u: u = u0·exp(sin t − t/2) (closed form).
		at := func(s float64) (linop.Operator, error) {
			return linop.NewDense(mat.NewDense(1, 1, []float64{math.Cos(s) - 0.5})), nil
		}
		sol, st, err := PropagateMagnus(context.Background(), at, []float64{2}, times, StepControl{}, Options{Tol: 1e-9})
		if err != nil {
			t.Fatal(err)
		}
		checkMagnus(t, sol, func(s float64) []float64 { return []float64{2 * math.Exp(math.Sin(s)-s/2)} }, 2)
		t.Logf("%s; %d exponentials", sol.Reason, st.Exponentials)
	})
	t.Run("diagonal", func(t *testing.T) {
		// u_1' = (−1 + sin 2t)u_1, u_2' = −t u_2: u_1 = exp(−t + (1 − cos 2t)/2),
		// u_2 = exp(−t²/2) (closed form).
		at := func(s float64) (linop.Operator, error) {
			return &linop.Diag{D: []float64{-1 + math.Sin(2*s), -s}}, nil
		}
		sol, _, err := PropagateMagnus(context.Background(), at, []float64{1, 1}, times, StepControl{}, Options{Tol: 1e-10})
		if err != nil {
			t.Fatal(err)
		}
		checkMagnus(t, sol, func(s float64) []float64 {
			return []float64{math.Exp(-s + (1-math.Cos(2*s))/2), math.Exp(-s * s / 2)}
		}, 1)
	})
}

// rotatingFrame is A(t) = R(ωt) B R(ωt)ᵀ with R(θ) = e^{θJ}, J = {0, −1 | 1, 0}:
// v = R(ωt)ᵀu solves v' = (B − ωJ)v, so u(t) = R(ωt) e^{t(B − ωJ)} u0
// (closed form; the values A(t) do not commute).
type rotatingFrame struct {
	B [4]float64
	w float64
}

func rot(th float64) [4]float64 {
	return [4]float64{math.Cos(th), -math.Sin(th), math.Sin(th), math.Cos(th)}
}

func mul22(X, Y [4]float64) [4]float64 {
	return [4]float64{X[0]*Y[0] + X[1]*Y[2], X[0]*Y[1] + X[1]*Y[3], X[2]*Y[0] + X[3]*Y[2], X[2]*Y[1] + X[3]*Y[3]}
}

func (r rotatingFrame) at(s float64) (linop.Operator, error) {
	R := rot(r.w * s)
	Rt := [4]float64{R[0], R[2], R[1], R[3]}
	M := mul22(mul22(R, r.B), Rt)
	return dense2(M[0], M[1], M[2], M[3]), nil
}

func (r rotatingFrame) exact(u0 []float64) func(float64) []float64 {
	return func(s float64) []float64 {
		M := [4]float64{s * r.B[0], s * (r.B[1] + r.w), s * (r.B[2] - r.w), s * r.B[3]}
		return mul2(rot(r.w*s), mul2(exp2x2(M), u0))
	}
}

func TestMagnusTwoByTwo(t *testing.T) {
	u0 := []float64{1, -0.5}
	times := []float64{0.25, 1, 2.5}
	t.Run("commuting", func(t *testing.T) {
		// A(t) = (1 + t²)N, N = {−0.1, 1 | −1, −0.1}: u(t) = e^{θN}u0 with
		// θ = t + t³/3 and e^{θN} = e^{−0.1θ}{cos θ, sin θ | −sin θ, cos θ}
		// (closed form).
		N := dense2(-0.1, 1, -1, -0.1)
		at := func(s float64) (linop.Operator, error) { return &linop.Scaled{Alpha: 1 + s*s, A: N}, nil }
		sol, _, err := PropagateMagnus(context.Background(), at, u0, times, StepControl{}, Options{Tol: 1e-10})
		if err != nil {
			t.Fatal(err)
		}
		checkMagnus(t, sol, func(s float64) []float64 {
			th := s + s*s*s/3
			e := math.Exp(-0.1 * th)
			return mul2([4]float64{e * math.Cos(th), e * math.Sin(th), -e * math.Sin(th), e * math.Cos(th)}, u0)
		}, 1)
	})
	t.Run("rotating frame", func(t *testing.T) {
		r := rotatingFrame{B: [4]float64{-1, 2, 0, -0.3}, w: 1.5}
		sol, st, err := PropagateMagnus(context.Background(), r.at, u0, times, StepControl{}, Options{Tol: 1e-10})
		if err != nil {
			t.Fatal(err)
		}
		checkMagnus(t, sol, r.exact(u0), 1)
		t.Logf("%s; accepted %d rejected %d", sol.Reason, st.Accepted, st.Rejected)
	})
	t.Run("cross-check", func(t *testing.T) {
		// The second method (ETDRK4 with A frozen at T/2) agrees within
		// the two estimates, and with the closed form within its own.
		r := rotatingFrame{B: [4]float64{-1, 2, 0, -0.3}, w: 1.5}
		sol, _, err := PropagateMagnus(context.Background(), r.at, u0, times, StepControl{}, Options{Tol: 1e-9, Crosscheck: true})
		if err != nil {
			t.Fatal(err)
		}
		c := sol.Cross
		if c == nil || c.Skipped != "" {
			t.Fatalf("no cross-check: %+v", c)
		}
		if c.MaxDiff > sol.MaxErrEst()+c.ErrEst {
			t.Errorf("the methods differ by %.3g, more than their estimates %.3g + %.3g", c.MaxDiff, sol.MaxErrEst(), c.ErrEst)
		}
		t.Logf("%s: difference %.3g, estimates %.3g and %.3g", c.Method, c.MaxDiff, sol.MaxErrEst(), c.ErrEst)
	})
}

func TestMagnusOrder(t *testing.T) {
	// Observed order on the rotating frame (closed form above): the error
	// at T = 2 with 8, 16, 32, 64 fixed steps falls by 2⁴ = 16 per halving.
	r := rotatingFrame{B: [4]float64{-1, 2, 0, -0.3}, w: 1.5}
	u0 := []float64{1, -0.5}
	want := r.exact(u0)(2)
	var errs []float64
	for _, steps := range []int{8, 16, 32, 64} {
		sol, _, err := PropagateMagnus(context.Background(), r.at, u0, []float64{2}, StepControl{Steps: steps}, Options{Tol: 1e-12, Method: MethodDense})
		if err != nil {
			t.Fatal(err)
		}
		errs = append(errs, maxAbsDiff(sol.Values[0], want))
	}
	for k := 1; k < len(errs); k++ {
		p := math.Log2(errs[k-1] / errs[k])
		t.Logf("steps %d → %d: error %.3g → %.3g, observed order %.2f", 8<<(k-1), 8<<k, errs[k-1], errs[k], p)
		if p < 3.7 || p > 4.5 {
			t.Errorf("observed order %.2f, want 4", p)
		}
	}
}

// heatLaplacian is tridiag(1, −2, 1)/h² on n interior points of (0, 1).
func heatLaplacian(n int) (*linop.CSR, []float64) {
	h := 1 / float64(n+1)
	var is, js []int
	var vs []float64
	x := make([]float64, n)
	for i := 0; i < n; i++ {
		x[i] = float64(i+1) * h
		is, js, vs = append(is, i), append(js, i), append(vs, -2/(h*h))
		if i > 0 {
			is, js, vs = append(is, i), append(js, i-1), append(vs, 1/(h*h))
		}
		if i < n-1 {
			is, js, vs = append(is, i), append(js, i+1), append(vs, 1/(h*h))
		}
	}
	return linop.NewCSRFromTriplets(n, n, is, js, vs), x
}

func TestMagnusHeatVaryingDiffusivity(t *testing.T) {
	// u' = D(t)Lu, D(t) = 1 + 0.5 sin(2πt), L the second difference on
	// n = 60 interior points: sin(kπx_j) is an eigenvector of L with
	// λ_k = −(4/h²) sin²(kπh/2) (closed form), so the mode amplitudes are
	// c_k·exp(λ_k ∫₀ᵗ D), ∫₀ᵗ D = t + (1 − cos 2πt)/(4π).
	n := 60
	L, x := heatLaplacian(n)
	h := 1 / float64(n+1)
	D := func(s float64) float64 { return 1 + 0.5*math.Sin(2*math.Pi*s) }
	intD := func(s float64) float64 { return s + (1-math.Cos(2*math.Pi*s))/(4*math.Pi) }
	modes := []struct {
		k int
		c float64
	}{{1, 1}, {3, 0.5}, {7, 0.2}}
	u0 := make([]float64, n)
	for _, m := range modes {
		for j := range u0 {
			u0[j] += m.c * math.Sin(float64(m.k)*math.Pi*x[j])
		}
	}
	exact := func(s float64) []float64 {
		u := make([]float64, n)
		for _, m := range modes {
			sk := math.Sin(float64(m.k) * math.Pi * h / 2)
			amp := m.c * math.Exp(-4/(h*h)*sk*sk*intD(s))
			for j := range u {
				u[j] += amp * math.Sin(float64(m.k)*math.Pi*x[j])
			}
		}
		return u
	}
	at := func(s float64) (linop.Operator, error) { return &linop.Scaled{Alpha: D(s), A: L}, nil }
	sol, _, err := PropagateMagnus(context.Background(), at, u0, []float64{0.01, 0.05, 0.2}, StepControl{}, Options{Tol: 1e-8})
	if err != nil {
		t.Fatal(err)
	}
	checkMagnus(t, sol, exact, normInf(u0))
	t.Log(sol.Reason)
}

// magnusRef is testdata/expo/magnus_ref.json, written by
// testdata/expo/make_magnus_ref.py: scipy's solve_ivp (DOP853 and Radau,
// rtol 1e-12, atol 1e-14) on a drift–diffusion problem with a drift that
// reverses direction.
type magnusRef struct {
	Cases map[string]struct {
		N      int         `json:"n"`
		Nu     float64     `json:"nu"`
		U0     []float64   `json:"u0"`
		Times  []float64   `json:"times"`
		Values [][]float64 `json:"values"`
		Spread float64     `json:"spread"`
	} `json:"cases"`
}

func TestMagnusAgainstScipy(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "expo", "magnus_ref.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref magnusRef
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	c := ref.Cases["drift_diffusion"]
	n := c.N
	L, x := heatLaplacian(n)
	h := 1 / float64(n+1)
	var is, js []int
	var vs []float64
	for i := 0; i < n; i++ {
		if i > 0 {
			is, js, vs = append(is, i), append(js, i-1), append(vs, -1/(2*h))
		}
		if i < n-1 {
			is, js, vs = append(is, i), append(js, i+1), append(vs, 1/(2*h))
		}
	}
	G := linop.NewCSRFromTriplets(n, n, is, js, vs)
	at := func(s float64) (linop.Operator, error) {
		d := make([]float64, n)
		for i := range d {
			d[i] = -(0.5 + 0.5*math.Sin(s)) * x[i]
		}
		return &linop.Sum{Terms: []linop.Operator{&linop.Scaled{Alpha: c.Nu, A: L}, &linop.Scaled{Alpha: math.Cos(2 * s), A: G}, &linop.Diag{D: d}}}, nil
	}
	sol, st, err := PropagateMagnus(context.Background(), at, c.U0, c.Times, StepControl{}, Options{Tol: 1e-9})
	if err != nil {
		t.Fatal(err)
	}
	if !sol.TolMet {
		t.Errorf("tolerance not met: %s", sol.Shortfall)
	}
	for i, tt := range c.Times {
		e := maxAbsDiff(sol.Values[i], c.Values[i])
		// The reference's own error: its DOP853–Radau spread, at least 1e-11.
		refErr := math.Max(c.Spread, 1e-11)
		if e > sol.ErrEst[i]+refErr {
			t.Errorf("t = %g: difference from scipy %.3g exceeds the estimate %.3g + the reference's error %.3g", tt, e, sol.ErrEst[i], refErr)
		}
		if e > sol.Tol*normInf(c.U0)+refErr {
			t.Errorf("t = %g: difference from scipy %.3g exceeds tol", tt, e)
		}
		t.Logf("t = %g: |Magnus − scipy| = %.3g, estimate %.3g", tt, e, sol.ErrEst[i])
	}
	t.Logf("%s; %d exponentials", sol.Reason, st.Exponentials)
}

func TestMagnusSwitchesAndPiecewise(t *testing.T) {
	// A = A0 = {−1, 1 | 0, −2} on [0, 1), A1 = {0, 1 | −1, 0} after: for
	// t ≥ 1, u(t) = e^{(t−1)A1} e^{A0} u0, with e^{sA0} = {e^{−s}, e^{−s} − e^{−2s}
	// | 0, e^{−2s}} and e^{sA1} the rotation {cos s, sin s | −sin s, cos s}
	// (closed forms).
	A0, A1 := dense2(-1, 1, 0, -2), dense2(0, 1, -1, 0)
	u0 := []float64{1, 2}
	exact := func(s float64) []float64 {
		e0 := func(s float64) [4]float64 {
			return [4]float64{math.Exp(-s), math.Exp(-s) - math.Exp(-2*s), 0, math.Exp(-2 * s)}
		}
		if s < 1 {
			return mul2(e0(s), u0)
		}
		r := s - 1
		return mul2([4]float64{math.Cos(r), math.Sin(r), -math.Sin(r), math.Cos(r)}, mul2(e0(1), u0))
	}
	times := []float64{0.5, 1, 2, 4}
	t.Run("piecewise", func(t *testing.T) {
		sol, err := PropagatePiecewise(context.Background(), []linop.Operator{A0, A1}, []float64{1}, u0, times, Options{Tol: 1e-10})
		if err != nil {
			t.Fatal(err)
		}
		checkMagnus(t, sol, exact, 2)
		t.Log(sol.Reason)
	})
	t.Run("magnus with a switch", func(t *testing.T) {
		at := func(s float64) (linop.Operator, error) {
			if s < 1 {
				return A0, nil
			}
			return A1, nil
		}
		sol, st, err := PropagateMagnus(context.Background(), at, u0, times, StepControl{Breaks: []float64{1}}, Options{Tol: 1e-10})
		if err != nil {
			t.Fatal(err)
		}
		checkMagnus(t, sol, exact, 2)
		// Constant on each piece: the step is e^{hA} exactly, so few steps.
		if st.Accepted > 40 {
			t.Errorf("%d steps for a piecewise-constant A", st.Accepted)
		}
	})
	t.Run("bad switches", func(t *testing.T) {
		if _, err := PropagatePiecewise(context.Background(), []linop.Operator{A0, A1}, []float64{1, 2}, u0, times, Options{}); err == nil {
			t.Error("two switches for two operators accepted")
		}
		if _, err := PropagatePiecewise(context.Background(), []linop.Operator{A0, A1, A0}, []float64{2, 1}, u0, times, Options{}); err == nil {
			t.Error("decreasing switches accepted")
		}
	})
}

func TestMagnusErrors(t *testing.T) {
	t.Run("wrong size", func(t *testing.T) {
		at := func(s float64) (linop.Operator, error) {
			if s > 0.5 {
				return &linop.Diag{D: []float64{-1, -1, -1}}, nil
			}
			return &linop.Diag{D: []float64{-1, -1}}, nil
		}
		_, _, err := PropagateMagnus(context.Background(), at, []float64{1, 1}, []float64{1}, StepControl{}, Options{})
		if !errors.Is(err, ErrOperatorSize) {
			t.Fatalf("got %v, want ErrOperatorSize", err)
		}
		t.Log(err)
	})
	t.Run("interrupt", func(t *testing.T) {
		// A long integration (rapid oscillation at a tight tolerance)
		// stops within 0.5 s of the cancellation.
		n := 200
		L, _ := heatLaplacian(n)
		at := func(s float64) (linop.Operator, error) {
			return &linop.Scaled{Alpha: 1 + 0.9*math.Sin(200*s), A: L}, nil
		}
		u0 := make([]float64, n)
		for i := range u0 {
			u0[i] = 1
		}
		ctx, cancel := context.WithCancel(context.Background())
		time.AfterFunc(100*time.Millisecond, cancel)
		start := time.Now()
		_, _, err := PropagateMagnus(ctx, at, u0, []float64{100}, StepControl{}, Options{Tol: 1e-12})
		if el := time.Since(start); el > 600*time.Millisecond {
			t.Errorf("returned %v after the cancellation", el-100*time.Millisecond)
		}
		if !errors.Is(err, context.Canceled) {
			t.Errorf("got %v, want context.Canceled", err)
		}
	})
}

// BenchmarkMagnusHeat: u' = D(t)Lu on 200 interior points of (0, 1),
// D(t) = 1 + sin(2πt)/2, to t = 0.1 at tol 1e-8 (the steps chosen by
// step doubling, each exponential by Propagate's automatic choice).
func BenchmarkMagnusHeat(b *testing.B) {
	n := 200
	L, x := heatLaplacian(n)
	u0 := make([]float64, n)
	for i := range u0 {
		u0[i] = math.Sin(math.Pi*x[i]) + 0.3*math.Sin(5*math.Pi*x[i])
	}
	at := func(s float64) (linop.Operator, error) {
		return &linop.Scaled{Alpha: 1 + 0.5*math.Sin(2*math.Pi*s), A: L}, nil
	}
	for b.Loop() {
		_, st, err := PropagateMagnus(context.Background(), at, u0, []float64{0.1}, StepControl{}, Options{Tol: 1e-8})
		if err != nil {
			b.Fatal(err)
		}
		b.ReportMetric(float64(st.Exponentials), "exponentials")
		b.ReportMetric(float64(st.Accepted), "steps")
	}
}

func TestMagnusForced(t *testing.T) {
	// u' = −2t·u + 2t from u = 0: u = 1 − e^{−t²}; and v' = −v + cos t from
	// v = 1: v = (cos t + sin t)/2 + e^{−t}/2 (closed forms).
	at := func(s float64) (linop.Operator, error) { return &linop.Diag{D: []float64{-2 * s, -1}}, nil }
	f := func(s float64, dst []float64) error {
		dst[0], dst[1] = 2*s, math.Cos(s)
		return nil
	}
	exact := func(s float64) []float64 {
		return []float64{1 - math.Exp(-s*s), (math.Cos(s)+math.Sin(s))/2 + math.Exp(-s)/2}
	}
	sol, _, err := PropagateMagnusForced(context.Background(), at, f, []float64{0, 1}, []float64{0.5, 1, 2}, StepControl{}, Options{Tol: 1e-9})
	if err != nil {
		t.Fatal(err)
	}
	scale := 0.0
	for _, s := range sol.Times {
		scale = math.Max(scale, normInf(exact(s)))
	}
	checkMagnus(t, sol, exact, math.Max(1, scale))
	t.Log(sol.Reason)
	t.Run("failing source", func(t *testing.T) {
		bad := errors.New("source failed")
		g := func(s float64, dst []float64) error {
			if s > 0.3 {
				return bad
			}
			return f(s, dst)
		}
		if _, _, err := PropagateMagnusForced(context.Background(), at, g, []float64{0, 1}, []float64{1}, StepControl{}, Options{}); !errors.Is(err, bad) {
			t.Errorf("got %v, want the source's error", err)
		}
	})
}

func TestPiecewiseForced(t *testing.T) {
	// u' = −u + 1 on [0, 1), u' = −2u + 1 after, u(0) = 0: u = 1 − e^{−t}
	// before 1, then 1/2 + (1/2 − e^{−1})e^{−2(t−1)} (closed forms).
	ops := []linop.Operator{&linop.Diag{D: []float64{-1}}, &linop.Diag{D: []float64{-2}}}
	exact := func(s float64) []float64 {
		if s < 1 {
			return []float64{1 - math.Exp(-s)}
		}
		return []float64{0.5 + (0.5-math.Exp(-1))*math.Exp(-2*(s-1))}
	}
	times := []float64{0.5, 1, 1.5, 3}
	for name, f := range map[string]Forcing{
		"constant": {Const: []float64{1}},
		"function": {Func: func(_ float64, dst []float64) { dst[0] = 1 }},
	} {
		t.Run(name, func(t *testing.T) {
			sol, err := PropagatePiecewiseForced(context.Background(), ops, []float64{1}, f, []float64{0}, times, Options{Tol: 1e-10})
			if err != nil {
				t.Fatal(err)
			}
			checkMagnus(t, sol, exact, 0.64)
		})
	}
}

// TestMagnusGrowth checks the estimate where the solution grows, so that an
// error made early is amplified later: the local errors are carried forward
// with each step's bound on its growth.
func TestMagnusGrowth(t *testing.T) {
	t.Run("scalar", func(t *testing.T) {
		// u' = (2 + sin 5t)u: u = exp(2t + (1 − cos 5t)/5) (closed form),
		// growing by e^{10} over [0, 5].
		at := func(s float64) (linop.Operator, error) {
			return linop.NewDense(mat.NewDense(1, 1, []float64{2 + math.Sin(5*s)})), nil
		}
		exact := func(s float64) []float64 { return []float64{math.Exp(2*s + (1-math.Cos(5*s))/5)} }
		sol, st, err := PropagateMagnus(context.Background(), at, []float64{1}, []float64{0.5, 1, 2, 5}, StepControl{}, Options{Tol: 1e-9})
		if err != nil {
			t.Fatal(err)
		}
		checkMagnus(t, sol, exact, exact(5)[0])
		// μ(a) = a exactly for a scalar: the bound is the growth itself.
		if g := math.Exp(10 + (1-math.Cos(25))/5); math.Abs(st.Growth-g) > 1e-6*g {
			t.Errorf("growth bound %.6g, want exp(∫a) = %.6g", st.Growth, g)
		}
		for i, s := range sol.Times {
			t.Logf("t = %g: error %.3g, estimate %.3g", s, math.Abs(sol.Values[i][0]-exact(s)[0]), sol.ErrEst[i])
		}
	})
	t.Run("reaction-diffusion by Krylov", func(t *testing.T) {
		// u' = (L + 30t²)u on 100 interior points, L the second
		// difference: the values commute, so u = e^{10t³} e^{tL} u0, and
		// sin(kπx_j) is an eigenvector of L with λ_k = −(4/h²)sin²(kπh/2)
		// (closed form); u grows by 1e8 from t = 1 to 1.5. Here the
		// exponentials' own errors dominate, and the estimate that summed
		// them without the growth after them was 0.3 to 0.6 times the
		// true error at t = 1.5 (measured, December 2026).
		n := 100
		L, x := heatLaplacian(n)
		hh := 1 / float64(n+1)
		idx := make([]int, n)
		for i := range idx {
			idx[i] = i
		}
		at := func(s float64) (linop.Operator, error) {
			d := make([]float64, n)
			for i := range d {
				d[i] = 30 * s * s
			}
			return linop.AddCSR(1, L, 1, linop.NewCSRFromTriplets(n, n, idx, idx, d)), nil
		}
		modes := []struct{ k, c float64 }{{1, 1}, {3, 0.5}}
		u0 := make([]float64, n)
		for j := range u0 {
			for _, m := range modes {
				u0[j] += m.c * math.Sin(m.k*math.Pi*x[j])
			}
		}
		exact := func(s float64) []float64 {
			u := make([]float64, n)
			for j := range u {
				for _, m := range modes {
					sk := math.Sin(m.k * math.Pi * hh / 2)
					u[j] += m.c * math.Exp(-4/(hh*hh)*sk*sk*s+10*s*s*s) * math.Sin(m.k*math.Pi*x[j])
				}
			}
			return u
		}
		times := []float64{0.2, 0.5, 1, 1.5}
		sol, st, err := PropagateMagnus(context.Background(), at, u0, times, StepControl{}, Options{Tol: 1e-7, Method: MethodKrylov})
		if err != nil {
			t.Fatal(err)
		}
		for i, s := range times {
			e := maxAbsDiff(sol.Values[i], exact(s))
			floor := unitRoundoff * normInf(exact(s))
			if e > sol.ErrEst[i] {
				t.Errorf("t = %g: true error %.3g exceeds the estimate %.3g", s, e, sol.ErrEst[i])
			}
			// Loose by design: μ∞(L) = 0 and Gershgorin's bound on μ₂(L) is
			// 0, so the bound misses the decay e^{−π²t} of the diffusion
			// (README, limits).
			if sol.ErrEst[i] > 1e7*math.Max(e, floor) {
				t.Errorf("t = %g: estimate %.3g more than 1e7 times the true error %.3g", s, sol.ErrEst[i], e)
			}
			t.Logf("t = %g: ‖u‖ %.3g, error %.3g, estimate %.3g (ratio %.3g)", s, normInf(exact(s)), e, sol.ErrEst[i], sol.ErrEst[i]/math.Max(e, floor))
		}
		t.Logf("growth bound %.3g, %d steps", st.Growth, st.Accepted)
	})
	t.Run("non-normal against scipy", func(t *testing.T) {
		b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "expo", "magnus_ref.json"))
		if err != nil {
			t.Fatal(err)
		}
		var ref magnusRef
		if err := json.Unmarshal(b, &ref); err != nil {
			t.Fatal(err)
		}
		c := ref.Cases["nonnormal_growth"]
		// The generator of make_magnus_ref.py's "nonnormal_growth".
		at := func(s float64) (linop.Operator, error) {
			return dense2(0.1, 3+2*math.Sin(3*s), -0.02-0.01*s, -1+0.5*math.Cos(2*s)), nil
		}
		for _, tol := range []float64{1e-6, 1e-9} {
			sol, st, err := PropagateMagnus(context.Background(), at, c.U0, c.Times, StepControl{}, Options{Tol: tol})
			if err != nil {
				t.Fatal(err)
			}
			// The reference's own error: its DOP853–Radau spread, at least 1e-11.
			refErr := math.Max(c.Spread, 1e-11)
			for i, s := range c.Times {
				e := maxAbsDiff(sol.Values[i], c.Values[i])
				if e > sol.ErrEst[i]+refErr {
					t.Errorf("tol %g, t = %g: difference from scipy %.3g exceeds the estimate %.3g + the reference's error %.3g", tol, s, e, sol.ErrEst[i], refErr)
				}
				if sol.ErrEst[i] > 1000*math.Max(e, refErr) {
					t.Errorf("tol %g, t = %g: estimate %.3g more than 1000 times the difference %.3g (or the reference's error)", tol, s, sol.ErrEst[i], e)
				}
				t.Logf("tol %g, t = %g: ‖u‖ %.3g, |Magnus − scipy| %.3g, estimate %.3g", tol, s, normInf(c.Values[i]), e, sol.ErrEst[i])
			}
			t.Logf("tol %g: growth bound %.3g, %d steps; %s", tol, st.Growth, st.Accepted, sol.Reason)
		}
	})
}

func TestMagnusLogNormBounds(t *testing.T) {
	// Each structured form gives what its dense form gives, and the bounds
	// hold: ‖e^{hB}‖∞ ≤ e^{hμ∞} and ‖e^{hB}‖₂ ≤ e^{hμ₂}, with e^{hB} by
	// gonum's mat.Exp and the 2-norm by gonum's SVD (outside this package).
	x := dense2(-1, 3, -0.5, 0.2)
	y := linop.NewDense(mat.NewDense(3, 3, []float64{-2, 1, 0, 4, -1, 0.5, 0, -3, 0.1}))
	k := linop.NewKronSum(x, y)
	forms := map[string]linop.Operator{
		"dense":           x,
		"kronecker sum":   k,
		"scaled":          &linop.Scaled{Alpha: 0.7, A: k},
		"negative scaled": &linop.Scaled{Alpha: -0.7, A: k},
		"sum":             &linop.Sum{Terms: []linop.Operator{k, &linop.Diag{D: []float64{1, -2, 0, 3, 1, -1}}}},
		"skew":            dense2(0, 5, -5, 0),
	}
	for name, B := range forms {
		t.Run(name, func(t *testing.T) {
			n, _ := B.Dims()
			d, err := toDense(B)
			if err != nil {
				t.Fatal(err)
			}
			muInf, mu2, ok := logNormBounds(B, n)
			if !ok {
				t.Fatal("no bound for an explicit form")
			}
			if want := logNormInf(d); math.Abs(muInf-want) > 1e-12*math.Max(1, math.Abs(want)) {
				t.Errorf("μ∞ %.15g, the dense form's %.15g", muInf, want)
			}
			for _, h := range []float64{0.01, 0.1, 1} {
				var hb, e mat.Dense
				hb.Scale(h, d)
				e.Exp(&hb)
				var svd mat.SVD
				if !svd.Factorize(&e, mat.SVDNone) {
					t.Fatal("SVD failed")
				}
				n2 := svd.Values(nil)[0]
				nInf := mat.Norm(&e, math.Inf(1))
				if nInf > math.Exp(h*muInf)*(1+1e-12) || n2 > math.Exp(h*mu2)*(1+1e-12) {
					t.Errorf("h = %g: ‖e^{hB}‖∞ = %.6g > e^{hμ∞} = %.6g or ‖e^{hB}‖₂ = %.6g > e^{hμ₂} = %.6g", h, nInf, math.Exp(h*muInf), n2, math.Exp(h*mu2))
				}
			}
			if name == "skew" && math.Abs(mu2) > 1e-12 {
				t.Errorf("μ₂ of a skew matrix %.3g, want 0 (closed form)", mu2)
			}
		})
	}
	t.Run("leading block", func(t *testing.T) {
		// [A f; 0 0] with A = {−1, 2 | 0.5, −3}: μ∞(A) = max(−1 + 2, −3 + 0.5) = 1,
		// μ₂(A) = λmax{−1, 1.25 | 1.25, −3} = −2 + √(1 + 1.5625) (closed forms);
		// the column f does not count.
		B := linop.NewBlock([][]linop.Operator{{dense2(-1, 2, 0.5, -3), linop.NewDense(mat.NewDense(2, 1, []float64{100, -50}))}, {nil, nil}}, []int{2, 1}, []int{2, 1})
		muInf, mu2, _ := logNormBounds(B, 2)
		if math.Abs(muInf-1) > 1e-14 {
			t.Errorf("μ∞ %.15g, want 1", muInf)
		}
		// Gershgorin on the symmetric part: max(−1 + 1.25, −3 + 1.25) = 0.25 ≥ μ₂.
		if want := -2 + math.Sqrt(1+1.5625); mu2 < want-1e-14 || mu2 > 0.25+1e-14 {
			t.Errorf("μ₂ bound %.15g, want in [%.15g, 0.25]", mu2, want)
		}
	})
}

package expo

import (
	"context"
	"errors"
	"math"
	"testing"
	"time"

	"semiflow/numerics/linop"
)

// heat1D returns the Dirichlet second difference (1/h²)tridiag(1, −2, 1) on
// n interior points of (0, 1), h = 1/(n+1).
func heat1D(n int) *linop.CSR {
	h := 1 / float64(n+1)
	var is, js []int
	var vs []float64
	for i := 0; i < n; i++ {
		is, js, vs = append(is, i), append(js, i), append(vs, -2/(h*h))
		if i > 0 {
			is, js, vs = append(is, i), append(js, i-1), append(vs, 1/(h*h))
			is, js, vs = append(is, i-1), append(js, i), append(vs, 1/(h*h))
		}
	}
	return linop.NewCSRFromTriplets(n, n, is, js, vs)
}

// sineModes returns u0 = Σ_k a_k s_k and e^{tD}u0 = Σ_k a_k e^{tλ_k} s_k with
// s_k(j) = sin(kπ(j+1)h) and, in closed form, λ_k = −4/h² sin²(kπh/2), the
// eigenpairs of the Dirichlet second difference.
func sineModes(n int, t float64, modes []int, amps []float64) (u0, ut []float64) {
	h := 1 / float64(n+1)
	u0 = make([]float64, n)
	ut = make([]float64, n)
	for q, k := range modes {
		lam := -4 / (h * h) * math.Pow(math.Sin(float64(k)*math.Pi*h/2), 2)
		g := math.Exp(t * lam)
		for j := 0; j < n; j++ {
			s := math.Sin(float64(k) * math.Pi * float64(j+1) * h)
			u0[j] += amps[q] * s
			ut[j] += amps[q] * g * s
		}
	}
	return u0, ut
}

func maxDiff(x, y []float64) float64 {
	m := 0.0
	for i := range x {
		m = math.Max(m, math.Abs(x[i]-y[i]))
	}
	return m
}

func propagate(t *testing.T, a linop.Operator, u0, times []float64, o Options) *Solution {
	t.Helper()
	s, err := Propagate(context.Background(), a, u0, times, o)
	if err != nil {
		t.Fatalf("%s: %v", o.Method, err)
	}
	return s
}

// checkBound fails unless the estimate bounds the true error (allowing
// the estimate to sit below a floor of 1e-15 times the solution scale).
func checkBound(t *testing.T, label string, trueErr, est, scale float64) {
	t.Helper()
	if trueErr > math.Max(est, 1e-15*scale) {
		t.Errorf("%s: true error %.3g exceeds the estimate %.3g", label, trueErr, est)
	}
}

var allVectorMethods = []string{MethodTaylor, MethodKrylov, MethodDense, MethodContour, MethodResolvent}

func TestHeatSineModesAllMethods(t *testing.T) {
	// closed form: eigenvalues of the Dirichlet second difference are
	// −4/h² sin²(kπh/2) with sine eigenvectors.
	n := 120
	a := heat1D(n)
	times := []float64{0, 1e-4, 1e-3, 0.01, 0.05}
	modes, amps := []int{1, 2, 5, 17, 60}, []float64{1, -0.5, 0.25, 0.1, 0.05}
	for _, m := range allVectorMethods {
		o := Options{Method: m, Tol: 1e-10}
		if m == MethodResolvent {
			o.Tol = 1e-6
		}
		s := propagate(t, a, mustU0(n, modes, amps), times, o)
		for i, tt := range times {
			_, want := sineModes(n, tt, modes, amps)
			e := maxDiff(s.Values[i], want)
			checkBound(t, m, e, s.ErrEst[i], 1)
			if e > 100*o.Tol {
				t.Errorf("%s t=%g: error %.3g", m, tt, e)
			}
		}
		t.Logf("%s: max est %.2g, matvecs %d, solves %d", m, s.MaxErrEst(), s.MatVecs, s.Solves)
	}
}

func mustU0(n int, modes []int, amps []float64) []float64 {
	u0, _ := sineModes(n, 0, modes, amps)
	return u0
}

func TestContourConvergence(t *testing.T) {
	// Trefethen, Weideman & Schmelzer (BIT 2006): errors ≈ ρ^{-N} with
	// ρ = 2.85 (parabola), 3.20 (hyperbola), 3.89 (cotangent). On the heat
	// operator the hyperbola reaches 1e-10 with 20 nodes and the cotangent
	// contour with 16 once the spectrum of tA reaches far into the left
	// half-plane (t ≥ 0.1); at t = 1e-3 the cotangent rule needs 18, as the
	// a priori bound 3.89^{-16} = 3.6e-10 allows (closed form from sine modes).
	n := 200
	a := heat1D(n)
	modes, amps := []int{1, 3, 10, 40, 150}, []float64{1, 1, 1, 1, 1}
	u0 := mustU0(n, modes, amps)
	for _, c := range []struct {
		shape string
		nodes int
		times []float64
	}{
		{ContourHyperbolic, 20, []float64{1e-3, 0.1, 1}},
		{ContourCotangent, 16, []float64{0.1, 1}},
		{ContourCotangent, 18, []float64{1e-3}},
		{ContourParabolic, 24, []float64{1e-3, 0.1, 1}},
	} {
		for _, tt := range c.times {
			_, want := sineModes(n, tt, modes, amps)
			s := propagate(t, a, u0, []float64{tt}, Options{Method: MethodContour, Contour: c.shape, Nodes: c.nodes})
			e := maxDiff(s.Values[0], want) / normInf(u0)
			if e > 1e-10 {
				t.Errorf("%s N=%d t=%g: rel error %.3g > 1e-10", c.shape, c.nodes, tt, e)
			}
			checkBound(t, c.shape, e*normInf(u0), s.ErrEst[0], 1)
			// N/2 nodes by conjugate symmetry, and one refinement solve
			// of the rounding probe.
			if s.Solves != c.nodes/2+1 || s.Factors != c.nodes/2 {
				t.Errorf("%s: %d solves, %d factorisations, want N/2 = %d (+1 probe)", c.shape, s.Solves, s.Factors, c.nodes/2)
			}
		}
	}
}

func TestExpmvScipyReference(t *testing.T) {
	// Reference: on seeded random sparse non-normal matrices
	// (testdata/expo/make_ref.py), the Taylor series summed in 80-bit long
	// double ("exact"); scipy.sparse.linalg.expm_multiply and
	// scipy.linalg.expm(tA) @ b must agree to their own accuracy.
	ref := loadRef(t)
	for _, c := range ref.Expmv {
		a := linop.NewCSRFromTriplets(c.N, c.N, c.Rows, c.Cols, c.Vals)
		for _, m := range []string{MethodTaylor, MethodKrylov, MethodDense} {
			s := propagate(t, a, c.B, c.Times, Options{Method: m, Tol: 1e-12})
			for i := range c.Times {
				scale := normInf(c.Exact[i])
				e := maxDiff(s.Values[i], c.Exact[i])
				checkBound(t, c.Name+" "+m, e, s.ErrEst[i], scale)
				if e > 1e-9*scale {
					t.Errorf("%s %s t=%g: rel error %.3g", c.Name, m, c.Times[i], e/scale)
				}
				// scipy's expm_multiply agrees to its own accuracy.
				for _, r := range [][]float64{c.Scipy[i], c.Dense[i]} {
					if d := maxDiff(s.Values[i], r); d > 1e-8*scale {
						t.Errorf("%s %s t=%g: differs from scipy by %.3g", c.Name, m, c.Times[i], d/scale)
					}
				}
			}
			t.Logf("%s %s: est %.2g matvecs %d", c.Name, m, s.MaxErrEst(), s.MatVecs)
		}
	}
}

func TestPoissonBirthChain(t *testing.T) {
	// closed form: a pure birth chain with rate λ started in state 0 has
	// P(k, t) = e^{−λt}(λt)^k/k!. The forward equation p' = Qᵀp is truncated
	// at K states with the last one absorbing, which leaves P(k), k < K−1, exact.
	K, lam := 80, 2.0
	var is, js []int
	var vs []float64
	for k := 0; k < K-1; k++ {
		is, js, vs = append(is, k), append(js, k), append(vs, -lam)
		is, js, vs = append(is, k+1), append(js, k), append(vs, lam)
	}
	qt := linop.NewCSRFromTriplets(K, K, is, js, vs)
	p0 := make([]float64, K)
	p0[0] = 1
	times := []float64{0.5, 3, 10}
	for _, m := range []string{MethodTaylor, MethodKrylov, MethodDense, MethodResolvent} {
		s := propagate(t, qt, p0, times, Options{Method: m})
		for i, tt := range times {
			worst := 0.0
			for k := 0; k < K-1; k++ {
				lg, _ := math.Lgamma(float64(k + 1))
				want := math.Exp(-lam*tt + float64(k)*math.Log(lam*tt) - lg)
				worst = math.Max(worst, math.Abs(s.Values[i][k]-want))
			}
			checkBound(t, "birth "+m, worst, s.ErrEst[i], 1)
			if worst > 1e-9 {
				t.Errorf("%s t=%g: Poisson error %.3g", m, tt, worst)
			}
		}
	}
}

func TestTwoStateChainPropagate(t *testing.T) {
	// closed form: p' = Qᵀp with Q = [[−a, a],[b, −b]] from p0 = (1, 0) gives
	// p1(t) = (b + a e^{−(a+b)t})/(a+b).
	a, b := 3.0, 0.5
	qt := linop.NewCSRFromTriplets(2, 2, []int{0, 0, 1, 1}, []int{0, 1, 0, 1}, []float64{-a, b, a, -b})
	times := []float64{0.1, 1, 4}
	for _, m := range allVectorMethods[:3] {
		s := propagate(t, qt, []float64{1, 0}, times, Options{Method: m})
		for i, tt := range times {
			want := (b + a*math.Exp(-(a+b)*tt)) / (a + b)
			if e := math.Abs(s.Values[i][0] - want); e > 1e-12 || e > math.Max(s.ErrEst[i], 1e-15) {
				t.Errorf("%s t=%g: error %.3g, estimate %.3g", m, tt, e, s.ErrEst[i])
			}
		}
	}
}

func TestAdvectionDiffusionGaussian(t *testing.T) {
	// closed form: u_t = −c u_x + ν u_xx on ℝ carries the Gaussian
	// G(x, τ) = exp(−(x − x0 − cτ)²/(4ντ))/√(4πντ) from τ = τ0 to τ0 + t.
	// On a periodic grid of [0, L) far wider than the Gaussian, central
	// differences have error O(h²): doubling n must cut the error by ≈ 4.
	c, nu, L, tau0, tt := 1.0, 0.05, 10.0, 0.1, 1.0
	errAt := func(n int) float64 {
		h := L / float64(n)
		var is, js []int
		var vs []float64
		for i := 0; i < n; i++ {
			l, r := (i+n-1)%n, (i+1)%n
			is, js, vs = append(is, i, i, i), append(js, l, i, r),
				append(vs, nu/(h*h)+c/(2*h), -2*nu/(h*h), nu/(h*h)-c/(2*h))
		}
		a := linop.NewCSRFromTriplets(n, n, is, js, vs)
		g := func(x, tau float64) float64 {
			return math.Exp(-math.Pow(x-3-c*(tau-tau0), 2)/(4*nu*tau)) / math.Sqrt(4*math.Pi*nu*tau)
		}
		u0 := make([]float64, n)
		want := make([]float64, n)
		for i := range u0 {
			u0[i] = g(float64(i)*h, tau0)
			want[i] = g(float64(i)*h, tau0+tt)
		}
		s := propagate(t, a, u0, []float64{tt}, Options{Method: MethodTaylor})
		return maxDiff(s.Values[0], want)
	}
	e1, e2 := errAt(400), errAt(800)
	ratio := e1 / e2
	if ratio < 3.5 || ratio > 4.5 {
		t.Errorf("advection–diffusion: errors %.3g, %.3g, ratio %.3g, want ≈ 4 (second order)", e1, e2, ratio)
	}
	if e2 > 5e-3 {
		t.Errorf("advection–diffusion: error %.3g at n = 800", e2)
	}
}

func TestKroneckerHeat2D(t *testing.T) {
	// closed form: e^{t(D⊕D)} maps the product mode s_k(x)s_l(y) to
	// e^{t(λ_k+λ_l)} times itself (λ as in sineModes); the CSR form of the
	// same operator (Kron) must give the same answer by another method.
	n := 30
	d := heat1D(n)
	k := linop.NewKronSum(d, d)
	u0 := make([]float64, n*n)
	want := make([]float64, n*n)
	tt := 0.005
	ax, wx := sineModes(n, tt, []int{1, 4}, []float64{1, 0.5})
	ay, wy := sineModes(n, tt, []int{2}, []float64{1})
	for ix := 0; ix < n; ix++ {
		for iy := 0; iy < n; iy++ {
			u0[ix*n+iy] = ax[ix] * ay[iy]
			want[ix*n+iy] = wx[ix] * wy[iy]
		}
	}
	s := propagate(t, k, u0, []float64{tt}, Options{})
	if s.Method != MethodKronecker {
		t.Errorf("auto chose %q for a KronSum (%s)", s.Method, s.Reason)
	}
	e := maxDiff(s.Values[0], want)
	checkBound(t, "kronecker", e, s.ErrEst[0], 1)
	if e > 1e-13 {
		t.Errorf("kronecker: error %.3g", e)
	}
	csr, err := k.ToCSR()
	if err != nil {
		t.Fatal(err)
	}
	s2 := propagate(t, csr, u0, []float64{tt}, Options{Method: MethodTaylor})
	checkBound(t, "taylor on CSR", maxDiff(s2.Values[0], want), s2.ErrEst[0], 1)
	if e := maxDiff(s2.Values[0], want); e > 1e-10 {
		t.Errorf("taylor on the CSR form: error %.3g", e)
	}
}

func TestAutoChoiceAndCrosscheck(t *testing.T) {
	small := heat1D(50)
	u0, _ := sineModes(50, 0, []int{1}, []float64{1})
	s := propagate(t, small, u0, []float64{0.01}, Options{Crosscheck: true})
	if s.Method != MethodDense || s.Reason == "" {
		t.Errorf("small operator: method %q reason %q", s.Method, s.Reason)
	}
	if s.Cross == nil || s.Cross.Method == s.Method || s.Cross.MaxDiff > 1e-10 {
		t.Errorf("cross-check: %+v", s.Cross)
	}
	calls := 0
	s = propagate(t, small, u0, []float64{0.01, 0.02}, Options{Method: MethodTaylor, Progress: func(done, total int) {
		if done > total {
			t.Errorf("progress %d of %d", done, total)
		}
		calls++
	}})
	if calls == 0 {
		t.Error("progress callback never called")
	}
	big := heat1D(2000)
	u0, _ = sineModes(2000, 0, []int{1, 7}, []float64{1, 1})
	s = propagate(t, big, u0, []float64{0.1}, Options{})
	if s.Method != MethodShiftInv {
		t.Errorf("stiff symmetric operator: auto chose %q (%s)", s.Method, s.Reason)
	}
	s = propagate(t, big, u0, []float64{0.1}, Options{Crosscheck: true})
	if s.Cross == nil || s.Cross.Method != MethodContour || s.Cross.MaxDiff > 1e-8 {
		t.Errorf("stiff symmetric cross-check: %+v", s.Cross)
	}
	s = propagate(t, big, u0, []float64{1e-7}, Options{})
	if s.Method != MethodTaylor {
		t.Errorf("short time: auto chose %q (%s)", s.Method, s.Reason)
	}
}

func TestCancellation(t *testing.T) {
	// A 2-D operator whose banded factorisations take over a second each.
	d := heat1D(150)
	a, err := linop.NewKronSum(d, d).ToCSR()
	if err != nil {
		t.Fatal(err)
	}
	u0 := make([]float64, 150*150)
	for i := range u0 {
		u0[i] = math.Sin(float64(i))
	}
	for _, m := range []string{MethodTaylor, MethodKrylov, MethodContour, MethodResolvent} {
		ctx, cancel := context.WithCancel(context.Background())
		go func() { time.Sleep(20 * time.Millisecond); cancel() }()
		start := time.Now()
		_, err := Propagate(ctx, a, u0, []float64{10}, Options{Method: m, Tol: 1e-14})
		if !errors.Is(err, context.Canceled) {
			t.Errorf("%s: err = %v, want context.Canceled", m, err)
		}
		if d := time.Since(start); d > 2*time.Second {
			t.Errorf("%s: stopped after %v", m, d)
		}
		cancel()
	}
	// Dense products: a Kronecker sum of non-symmetric 600×600 factors.
	x := linop.NewDense(benchDense(600))
	k := linop.NewKronSum(x, x)
	ctx, cancel := context.WithCancel(context.Background())
	go func() { time.Sleep(20 * time.Millisecond); cancel() }()
	start := time.Now()
	if _, err := Propagate(ctx, k, make([]float64, 600*600), []float64{50}, Options{}); !errors.Is(err, context.Canceled) {
		t.Errorf("kronecker: err = %v, want context.Canceled", err)
	}
	if d := time.Since(start); d > 2*time.Second {
		t.Errorf("kronecker: stopped after %v", d)
	}
	cancel()
}

func TestPropagateMisuse(t *testing.T) {
	a := heat1D(5)
	if _, err := Propagate(context.Background(), a, make([]float64, 5), []float64{-1}, Options{}); err == nil {
		t.Error("negative time: want error")
	}
	if _, err := Propagate(context.Background(), a, make([]float64, 5), []float64{1}, Options{Method: "nonsense"}); !errors.Is(err, ErrMethod) {
		t.Errorf("unknown method: err = %v", err)
	}
	defer func() {
		if r := recover(); r != ErrShape {
			t.Fatalf("recover() = %v, want ErrShape", r)
		}
	}()
	Propagate(context.Background(), a, make([]float64, 4), []float64{1}, Options{})
}

package expo

import (
	"math"
	"testing"

	"semiflow/numerics/linop"
)

// convDiff1D returns (1/h²)tridiag(1, −2, 1) − c(1/(2h))tridiag(−1, 0, 1)
// on n interior points of (0, 1), h = 1/(n+1): sub-diagonal d + e, diagonal
// −2d, super-diagonal d − e with d = 1/h², e = c/(2h).
func convDiff1D(n int, c float64) *linop.CSR {
	h := 1 / float64(n+1)
	d, e := 1/(h*h), c/(2*h)
	var is, js []int
	var vs []float64
	for i := 0; i < n; i++ {
		is, js, vs = append(is, i), append(js, i), append(vs, -2*d)
		if i > 0 {
			is, js, vs = append(is, i), append(js, i-1), append(vs, d+e)
			is, js, vs = append(is, i-1), append(js, i), append(vs, d-e)
		}
	}
	return linop.NewCSRFromTriplets(n, n, is, js, vs)
}

// convDiffModes returns u0 = Σ_k a_k x_k and e^{tA}u0 for the conv-diff
// matrix above, from the closed-form eigenpairs of a tridiagonal Toeplitz
// matrix with sub-diagonal p, diagonal q, super-diagonal r (pr > 0):
// λ_k = q + 2√(pr) cos(kπh), x_k(j) = (p/r)^{j/2} sin(kπjh), j = 1…n.
func convDiffModes(n int, c, t float64, modes []int, amps []float64) (u0, ut []float64) {
	h := 1 / float64(n+1)
	d, e := 1/(h*h), c/(2*h)
	p, q, r := d+e, -2*d, d-e
	u0 = make([]float64, n)
	ut = make([]float64, n)
	for m, k := range modes {
		lam := q + 2*math.Sqrt(p*r)*math.Cos(float64(k)*math.Pi*h)
		g := math.Exp(t * lam)
		for j := 1; j <= n; j++ {
			// Scale so that the largest component is about 1.
			x := math.Pow(p/r, float64(j-n)/2) * math.Sin(float64(k)*math.Pi*float64(j)*h)
			u0[j-1] += amps[m] * x
			ut[j-1] += amps[m] * g * x
		}
	}
	return u0, ut
}

func TestShiftInvertHeatClosedForm(t *testing.T) {
	// closed form: sine eigenpairs of the Dirichlet second difference.
	n := 2000
	a := heat1D(n)
	modes, amps := []int{1, 2, 5, 17, 60, 400}, []float64{1, -0.5, 0.25, 0.1, 0.05, 0.02}
	// Uniform times reuse one factorisation; 1e-5 and 1 are far apart.
	times := []float64{0.3, 0, 1e-5, 0.1, 0.2, 1}
	s := propagate(t, a, mustU0(n, modes, amps), times, Options{Method: MethodShiftInv, Tol: 1e-12})
	for i, tt := range times {
		_, want := sineModes(n, tt, modes, amps)
		e := maxDiff(s.Values[i], want)
		checkBound(t, "heat", e, s.ErrEst[i], 1)
		if e > 1e-10 {
			t.Errorf("t=%g: error %.3g", tt, e)
		}
	}
	if s.Factors > 4 {
		t.Errorf("uniform steps 0.1, 0.2, 0.3 should share a factorisation: %d factorisations", s.Factors)
	}
	t.Logf("heat n=%d: est %.2g, solves %d, factorisations %d", n, s.MaxErrEst(), s.Solves, s.Factors)
}

func TestShiftInvertConvDiffClosedForm(t *testing.T) {
	// closed form: eigenpairs of the tridiagonal Toeplitz conv-diff matrix;
	// with c = 20 the eigenvector basis has condition number ≈ e^{10}, a
	// strongly non-normal test.
	n, c := 3000, 20.0
	a := convDiff1D(n, c)
	modes, amps := []int{1, 3, 10, 50, 300}, []float64{1, 0.5, -0.3, 0.2, 0.1}
	times := []float64{1e-4, 0.01, 0.05}
	u0, _ := convDiffModes(n, c, 0, modes, amps)
	s := propagate(t, a, u0, times, Options{Tol: 1e-12})
	if s.Method != MethodShiftInv {
		t.Errorf("auto chose %q for stiff conv-diff (%s)", s.Method, s.Reason)
	}
	scale := normInf(u0)
	for i, tt := range times {
		_, want := convDiffModes(n, c, tt, modes, amps)
		e := maxDiff(s.Values[i], want)
		checkBound(t, "conv-diff", e, s.ErrEst[i], scale)
		if e > 1e-10*scale {
			t.Errorf("t=%g: error %.3g (scale %.3g)", tt, e, scale)
		}
	}
	t.Logf("conv-diff n=%d: est %.2g, solves %d, factorisations %d", n, s.MaxErrEst(), s.Solves, s.Factors)
}

func TestShiftInvertKronSum(t *testing.T) {
	// closed form: on X ⊕ Y the product of eigenvectors x_k ⊗ y_l is an
	// eigenvector with eigenvalue λ_k + μ_l. The sparse-LU path.
	m := 40
	X, Y := convDiff1D(m, 20), convDiff1D(m, 10)
	a := linop.NewKronSum(X, Y)
	tt := 0.02
	xk, xt := convDiffModes(m, 20, tt, []int{2}, []float64{1})
	yl, yt := convDiffModes(m, 10, tt, []int{3}, []float64{1})
	u0 := make([]float64, m*m)
	want := make([]float64, m*m)
	for i := 0; i < m; i++ {
		for j := 0; j < m; j++ {
			u0[i*m+j] = xk[i] * yl[j]
			want[i*m+j] = xt[i] * yt[j]
		}
	}
	s := propagate(t, a, u0, []float64{tt}, Options{Method: MethodShiftInv, Tol: 1e-12})
	e := maxDiff(s.Values[0], want)
	checkBound(t, "kron", e, s.ErrEst[0], normInf(u0))
	if e > 1e-10*normInf(u0) {
		t.Errorf("error %.3g", e)
	}
	s2 := propagate(t, a, u0, []float64{tt}, Options{Method: MethodShiftInv, Tol: 1e-12, Crosscheck: true})
	if s2.Cross == nil || s2.Cross.Method != MethodResolvent {
		t.Errorf("cross-check %+v", s2.Cross)
	}
}

func TestAbscissaBound(t *testing.T) {
	// The symmetric part of the conv-diff matrix is the heat matrix (the
	// central convection matrix is skew): Gershgorin gives ω ≤ 0.
	if g, ok := abscissaBound(convDiff1D(50, 20)); !ok || math.Abs(g) > 1e-6 {
		t.Errorf("conv-diff: bound %v %v, want 0", g, ok)
	}
	a := linop.NewCSRFromTriplets(2, 2, []int{0, 0, 1}, []int{0, 1, 1}, []float64{-1, 4, -1})
	// (A + Aᵀ)/2 = [−1 2; 2 −1] has λ_max = 1; Gershgorin gives exactly 1.
	if g, _ := abscissaBound(a); g != 1 {
		t.Errorf("2×2: bound %v, want 1", g)
	}
}

func TestShiftInvertRoughData(t *testing.T) {
	// closed form: all n sine modes with amplitudes 1/k (data that does not
	// vanish at the boundary, like sin πx + x), so the basis never becomes
	// invariant and rounding sets the floor of the estimate; the step
	// control must stop there rather than halve the step without end.
	n := 4000
	a := heat1D(n)
	modes := make([]int, n)
	amps := make([]float64, n)
	for k := range modes {
		modes[k], amps[k] = k+1, 1/float64(k+1)
	}
	u0 := mustU0(n, modes, amps)
	for _, tt := range []float64{0.01, 1} {
		s := propagate(t, a, u0, []float64{tt}, Options{Method: MethodShiftInv, Tol: 1e-12})
		_, want := sineModes(n, tt, modes, amps)
		e := maxDiff(s.Values[0], want)
		checkBound(t, "rough", e, s.ErrEst[0], normInf(u0))
		if e > 1e-8*normInf(u0) || s.Solves > 200 {
			t.Errorf("t=%g: error %.3g, %d solves", tt, e, s.Solves)
		}
		t.Logf("rough t=%g: error %.2g est %.2g solves %d", tt, e, s.ErrEst[0], s.Solves)
	}
}

func TestSameOperator(t *testing.T) {
	x, y, z := heat1D(30), heat1D(30), convDiff1D(30, 1)
	if !sameOperator(x, y) || !sameOperator(x, x) || sameOperator(x, z) || sameOperator(x, heat1D(31)) {
		t.Error("sameOperator")
	}
}

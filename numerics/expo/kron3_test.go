package expo

import (
	"context"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
)

// tridiag returns the n×n sparse matrix with sub, main and super diagonals.
func tridiag3(n int, lo, mid, up float64) *linop.CSR {
	var is, js []int
	var vs []float64
	for i := 0; i < n; i++ {
		for j, v := range map[int]float64{i - 1: lo, i: mid, i + 1: up} {
			if j >= 0 && j < n {
				is, js, vs = append(is, i), append(js, j), append(vs, v)
			}
		}
	}
	return linop.NewCSRFromTriplets(n, n, is, js, vs)
}

// Three-factor Kronecker propagation. Closed form: on the Dirichlet grid
// with h = 1/(m+1), sin(aπx) sin(bπy) sin(cπz) sampled at the unknowns is
// an eigenvector of D2 ⊕ D2 ⊕ D2 with eigenvalue the sum of the 1-D
// eigenvalues −4/h² sin²(kπh/2), so e^{tA}u0 = e^{tλ}u0 exactly.
func TestKroneckerThreeFactorsHeat(t *testing.T) {
	sizes := []int{9, 14, 19}
	modes := []int{1, 2, 3}
	var factors []linop.Operator
	lam := 0.0
	vecs := make([][]float64, 3)
	for i, m := range sizes {
		h := 1 / float64(m+1)
		factors = append(factors, tridiag3(m, 1/(h*h), -2/(h*h), 1/(h*h)))
		s := math.Sin(float64(modes[i]) * math.Pi * h / 2)
		lam += -4 / (h * h) * s * s
		vecs[i] = make([]float64, m)
		for j := range vecs[i] {
			vecs[i][j] = math.Sin(float64(modes[i]) * math.Pi * float64(j+1) * h)
		}
	}
	A := linop.NewKronSum(factors[0], linop.NewKronSum(factors[1], factors[2]))
	N := sizes[0] * sizes[1] * sizes[2]
	u0 := make([]float64, 0, N)
	for _, a := range vecs[0] {
		for _, b := range vecs[1] {
			for _, c := range vecs[2] {
				u0 = append(u0, a*b*c)
			}
		}
	}
	times := []float64{0.001, 0.01, 0.05}
	sol, err := Propagate(context.Background(), A, u0, times, Options{Tol: 1e-10})
	if err != nil {
		t.Fatal(err)
	}
	if sol.Method != MethodKronecker {
		t.Fatalf("auto chose %s (%s)", sol.Method, sol.Reason)
	}
	for i, tt := range times {
		trueErr := 0.0
		for k, v := range sol.Values[i] {
			trueErr = math.Max(trueErr, math.Abs(v-math.Exp(lam*tt)*u0[k]))
		}
		est := sol.ErrEst[i]
		floor := unitRoundoff * normInf(u0)
		t.Logf("t = %g: error %.3g, estimate %.3g", tt, trueErr, est)
		if trueErr > est || est > 1000*math.Max(trueErr, floor) {
			t.Errorf("t = %g: error %.3g, estimate %.3g (want error ≤ estimate ≤ 1000·max(error, u‖u0‖))", tt, trueErr, est)
		}
	}
}

// Non-symmetric factors, nested the other way: the mode products agree
// with the dense exponential of the assembled operator.
func TestKroneckerThreeFactorsDense(t *testing.T) {
	X, Y, Z := tridiag3(3, 0.5, -2, 1.5), tridiag3(4, -1, 0.3, 2), tridiag3(5, 0.2, -1, -0.7)
	A := linop.NewKronSum(linop.NewKronSum(X, Y), Z)
	a, err := linop.ToDense(A)
	if err != nil {
		t.Fatal(err)
	}
	u0 := make([]float64, 60)
	for i := range u0 {
		u0[i] = math.Cos(float64(i))
	}
	const tt = 0.7
	var ta, e mat.Dense
	ta.Scale(tt, a)
	if _, err := ExpContext(context.Background(), &e, &ta); err != nil {
		t.Fatal(err)
	}
	var want mat.VecDense
	want.MulVec(&e, mat.NewVecDense(60, u0))
	sol, err := Propagate(context.Background(), A, u0, []float64{tt}, Options{Tol: 1e-12, Method: MethodKronecker})
	if err != nil {
		t.Fatal(err)
	}
	d := 0.0
	for i, v := range sol.Values[0] {
		d = math.Max(d, math.Abs(v-want.AtVec(i)))
	}
	if d > 1e-12*normInf(want.RawVector().Data) || d > sol.ErrEst[0]+1e-12 {
		t.Errorf("mode products differ from the dense exponential by %.3g (estimate %.3g)", d, sol.ErrEst[0])
	}
}

// BenchmarkKronecker3D propagates the 3-D heat operator on 40³ = 64000
// unknowns (three 40×40 factors) to one time along the Kronecker path.
func BenchmarkKronecker3D(b *testing.B) {
	const m = 40
	h := 1 / float64(m+1)
	D := tridiag3(m, 1/(h*h), -2/(h*h), 1/(h*h))
	A := linop.NewKronSum(D, linop.NewKronSum(D, D))
	u0 := make([]float64, m*m*m)
	for i := range u0 {
		u0[i] = math.Sin(float64(i))
	}
	b.ResetTimer()
	for range b.N {
		if _, err := Propagate(context.Background(), A, u0, []float64{0.01}, Options{Tol: 1e-8, Method: MethodKronecker}); err != nil {
			b.Fatal(err)
		}
	}
}

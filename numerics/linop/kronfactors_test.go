package linop

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// A Kronecker sum of three factors, nested either way, applies as the
// dense X ⊗ I ⊗ I + I ⊗ Y ⊗ I + I ⊗ I ⊗ Z formed with gonum's Kronecker
// product (an independent construction), and its factors flatten in order.
func TestKronSumThreeFactors(t *testing.T) {
	x := mat.NewDense(2, 2, []float64{1, 2, 3, 4})
	y := mat.NewDense(3, 3, []float64{0, 1, 0, -1, 2, 5, 0.5, 0, -3})
	z := mat.NewDense(2, 2, []float64{-2, 7, 1, 0.25})
	eye := func(n int) *mat.Dense {
		d := mat.NewDense(n, n, nil)
		for i := 0; i < n; i++ {
			d.Set(i, i, 1)
		}
		return d
	}
	kron3 := func(a, b, c mat.Matrix) *mat.Dense {
		var ab, abc mat.Dense
		ab.Kronecker(a, b)
		abc.Kronecker(&ab, c)
		return &abc
	}
	var want mat.Dense
	want.Add(kron3(x, eye(3), eye(2)), kron3(eye(2), y, eye(2)))
	want.Add(&want, kron3(eye(2), eye(3), z))
	X, Y, Z := NewDense(x), NewDense(y), NewDense(z)
	for name, k := range map[string]*KronSum{
		"X ⊕ (Y ⊕ Z)": NewKronSum(X, NewKronSum(Y, Z)),
		"(X ⊕ Y) ⊕ Z": NewKronSum(NewKronSum(X, Y), Z),
	} {
		f := KronFactors(k)
		if len(f) != 3 || f[0] != Operator(X) || f[1] != Operator(Y) || f[2] != Operator(Z) {
			t.Fatalf("%s: factors %v", name, f)
		}
		got, err := ToDense(k)
		if err != nil {
			t.Fatal(err)
		}
		if !mat.EqualApprox(got, &want, 1e-14) {
			t.Errorf("%s: dense form differs from the Kronecker products", name)
		}
		u := []float64{1, -2, 0.5, 3, 0, 1, 2, -1, 4, 0.25, -3, 1}
		dst, dstT := make([]float64, 12), make([]float64, 12)
		k.Apply(dst, u)
		k.ApplyT(dstT, u)
		var w, wT mat.VecDense
		w.MulVec(&want, mat.NewVecDense(12, u))
		wT.MulVec(want.T(), mat.NewVecDense(12, u))
		for i := range dst {
			if math.Abs(dst[i]-w.AtVec(i)) > 1e-13 || math.Abs(dstT[i]-wT.AtVec(i)) > 1e-13 {
				t.Fatalf("%s: product %d: %g, %g; want %g, %g", name, i, dst[i], dstT[i], w.AtVec(i), wT.AtVec(i))
			}
		}
	}
}

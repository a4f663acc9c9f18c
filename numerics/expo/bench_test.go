package expo

import (
	"context"
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
)

// The benchmark problems; testdata/expo/bench_scipy.py builds the same ones.
//
// 2-D heat: A = D ⊕ D with D the Dirichlet second difference (1/h²)
// tridiag(1, −2, 1) on m interior points, h = 1/(m+1), N = m², and
// u0[ix*m+iy] = sin(π x) sin(2π y) + x y at x = (ix+1)h, y = (iy+1)h.
func benchHeat(m int) (*linop.KronSum, []float64) {
	d := heat1D(m)
	h := 1 / float64(m+1)
	u0 := make([]float64, m*m)
	for ix := 0; ix < m; ix++ {
		x := float64(ix+1) * h
		for iy := 0; iy < m; iy++ {
			y := float64(iy+1) * h
			u0[ix*m+iy] = math.Sin(math.Pi*x)*math.Sin(2*math.Pi*y) + x*y
		}
	}
	return linop.NewKronSum(d, d), u0
}

// benchDense is the n×n matrix a_ij = 4 sin(0.7 i + 0.013 j² + 1)·(2 if j > i else 1)/√n.
func benchDense(n int) *mat.Dense {
	a := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			w := 1.0
			if j > i {
				w = 2
			}
			a.Set(i, j, 4*math.Sin(0.7*float64(i)+0.013*float64(j*j)+1)*w/math.Sqrt(float64(n)))
		}
	}
	return a
}

func benchPropagate(b *testing.B, a linop.Operator, u0 []float64, t float64, method string) {
	b.Helper()
	var s *Solution
	for i := 0; i < b.N; i++ {
		var err error
		s, err = Propagate(context.Background(), a, u0, []float64{t}, Options{Method: method})
		if err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(s.MatVecs), "matvecs")
	b.ReportMetric(float64(s.Solves), "solves")
	b.ReportMetric(s.ErrEst[0], "errest")
	b.ReportMetric(norm2(s.Values[0]), "norm2")
}

func BenchmarkHeat2D(b *testing.B) {
	for _, c := range []struct {
		m      int
		t      float64
		method string
		csr    bool
	}{
		{100, 1, MethodKronecker, false},
		{100, 1, MethodTaylor, true},
		{100, 1, MethodContour, true},
		{100, 1, MethodKrylov, true},
		{1000, 0.01, MethodKronecker, false},
		// At N = 1e6 the polynomial methods need ~1e5 products for t = 0.01;
		// the slice t = 1e-4 is timed and its cost scales linearly in t.
		{1000, 1e-4, MethodTaylor, true},
		{1000, 0.01, MethodKrylov, true},
	} {
		form := "kronsum"
		if c.csr {
			form = "csr"
		}
		b.Run(fmt.Sprintf("N=%d/t=%g/%s/%s", c.m*c.m, c.t, form, c.method), func(b *testing.B) {
			k, u0 := benchHeat(c.m)
			var a linop.Operator = k
			if c.csr {
				csr, err := k.ToCSR()
				if err != nil {
					b.Fatal(err)
				}
				a = csr
			}
			b.ResetTimer()
			benchPropagate(b, a, u0, c.t, c.method)
		})
	}
}

func BenchmarkDenseExp500(b *testing.B) {
	a := benchDense(500)
	var e mat.Dense
	for i := 0; i < b.N; i++ {
		if _, err := Exp(&e, a); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(mat.Norm(&e, 1), "norm1")
}

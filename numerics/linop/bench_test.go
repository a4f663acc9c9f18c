package linop

import (
	"runtime"
	"sync"
	"testing"
)

// diff2 returns the second-difference matrix tridiag(1, −2, 1) of order k
// (unscaled, Dirichlet ends).
func diff2(k int) *CSR {
	var is, js []int
	var vs []float64
	for i := 0; i < k; i++ {
		is, js, vs = append(is, i), append(js, i), append(vs, -2)
		if i > 0 {
			is, js, vs = append(is, i, i-1), append(js, i-1, i), append(vs, 1, 1)
		}
	}
	return NewCSRFromTriplets(k, k, is, js, vs)
}

// lap5 returns the 5-point Laplacian (unscaled) on a k×k Dirichlet grid.
func lap5(k int) *CSR {
	d := diff2(k)
	a, _ := NewKronSum(d, d).ToCSR()
	return a
}

// BenchmarkCSRMatvec5pt measures y = A x for the 5-point operator with
// N = 10⁶ unknowns. Bytes counted per product: values and column indices
// (16 B per entry), row pointers (8 B per row), x and y (16 B per row).
func BenchmarkCSRMatvec5pt(b *testing.B) {
	a := lap5(1000)
	x := make([]float64, a.Cols)
	for i := range x {
		x[i] = float64(i % 7)
	}
	y := make([]float64, a.Rows)
	bytes := int64(a.NNZ()*16 + a.Rows*24)
	b.SetBytes(bytes)
	b.ResetTimer()
	for b.Loop() {
		a.Apply(y, x)
	}
}

// BenchmarkCSRMatvecT5pt measures y = Aᵀ x for the same matrix.
func BenchmarkCSRMatvecT5pt(b *testing.B) {
	a := lap5(1000)
	x := make([]float64, a.Rows)
	for i := range x {
		x[i] = float64(i%7) + 1
	}
	y := make([]float64, a.Cols)
	b.SetBytes(int64(a.NNZ()*16 + a.Rows*24))
	for b.Loop() {
		a.ApplyT(y, x)
	}
}

// BenchmarkKronSumApply5pt is the same product without assembling the
// matrix: X ⊕ Y applied factor by factor.
func BenchmarkKronSumApply5pt(b *testing.B) {
	var is, js []int
	var vs []float64
	k := 1000
	for i := 0; i < k; i++ {
		is, js, vs = append(is, i), append(js, i), append(vs, -2)
		if i > 0 {
			is, js, vs = append(is, i, i-1), append(js, i-1, i), append(vs, 1, 1)
		}
	}
	d := NewCSRFromTriplets(k, k, is, js, vs)
	op := NewKronSum(d, d)
	x := make([]float64, k*k)
	y := make([]float64, k*k)
	b.SetBytes(int64(k * k * 16))
	for b.Loop() {
		op.Apply(y, x)
	}
}

// BenchmarkVectorAdd measures c = a + b on vectors of 10⁶ and 10⁷ entries
// (24 B per entry), serially and split over the cores as CSR.Apply is: the
// memory bandwidth the matrix–vector product is compared with.
func BenchmarkVectorAdd(b *testing.B) {
	for _, n := range []int{1_000_000, 10_000_000} {
		x, y, z := make([]float64, n), make([]float64, n), make([]float64, n)
		for i := range x {
			x[i], y[i] = float64(i), 1
		}
		name := map[int]string{1_000_000: "1e6", 10_000_000: "1e7"}[n]
		b.Run("serial-"+name, func(b *testing.B) {
			b.SetBytes(int64(24 * n))
			for b.Loop() {
				add(z, x, y)
			}
		})
		b.Run("parallel-"+name, func(b *testing.B) {
			b.SetBytes(int64(24 * n))
			w := runtime.GOMAXPROCS(0)
			for b.Loop() {
				var wg sync.WaitGroup
				for k := 0; k < w; k++ {
					lo, hi := n*k/w, n*(k+1)/w
					wg.Add(1)
					go func() {
						defer wg.Done()
						add(z[lo:hi], x[lo:hi], y[lo:hi])
					}()
				}
				wg.Wait()
			}
		})
	}
}

func add(z, x, y []float64) {
	y = y[:len(x)]
	z = z[:len(x)]
	for i, v := range x {
		z[i] = v + y[i]
	}
}

package gemm

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/blas/gonum"
)

// The reference is gonum's native Dgemm, a general-purpose library
// implementation independent of this package's packing and kernel.
func TestDgemmAgainstGonum(t *testing.T) {
	if !haveKernel {
		t.Skip("no AVX2/FMA kernel on this CPU: Dgemm is gonum's own")
	}
	rng := rand.New(rand.NewPCG(1, 2))
	sizes := []int{1, 5, 6, 7, 8, 9, 13, 31, 64, 121, 257, 300}
	trans := []blas.Transpose{blas.NoTrans, blas.Trans}
	for trial := 0; trial < 300; trial++ {
		m := sizes[rng.IntN(len(sizes))]
		n := sizes[rng.IntN(len(sizes))]
		k := sizes[rng.IntN(len(sizes))]
		if trial < 8 { // products big enough for the parallel path and several kc blocks
			m, n, k = 300+trial, 290+3*trial, 520+trial
		}
		tA, tB := trans[rng.IntN(2)], trans[rng.IntN(2)]
		alpha := []float64{1, -0.7, 2.5}[rng.IntN(3)]
		beta := []float64{0, 1, 0.3}[rng.IntN(3)]
		ra, ca := m, k
		if tA == blas.Trans {
			ra, ca = k, m
		}
		rb, cb := k, n
		if tB == blas.Trans {
			rb, cb = n, k
		}
		lda, ldb, ldc := ca+rng.IntN(3), cb+rng.IntN(3), n+rng.IntN(3)
		a, b := randSlice(rng, ra*lda), randSlice(rng, rb*ldb)
		c := randSlice(rng, m*ldc)
		if beta == 0 {
			c[0] = math.NaN() // β = 0 must ignore C's contents
		}
		want := append([]float64(nil), c...)
		if beta == 0 {
			want[0] = 0
		}
		gonum.Implementation{}.Dgemm(tA, tB, m, n, k, alpha, a, lda, b, ldb, beta, want, ldc)
		got := append([]float64(nil), c...)
		Implementation{}.Dgemm(tA, tB, m, n, k, alpha, a, lda, b, ldb, beta, got, ldc)
		name := fmt.Sprintf("m=%d n=%d k=%d tA=%c tB=%c α=%g β=%g", m, n, k, tA, tB, alpha, beta)
		for i := 0; i < m; i++ {
			for j := 0; j < ldc; j++ {
				g, w := got[i*ldc+j], want[i*ldc+j]
				if j >= n {
					if g != c[i*ldc+j] {
						t.Fatalf("%s: padding (%d,%d) changed", name, i, j)
					}
					continue
				}
				// Each entry is a sum of k products of numbers in [-1, 1]:
				// rounding differences stay below k·ε·|α| in absolute terms.
				if d := math.Abs(g - w); d > 4*float64(k+1)*0x1p-52*math.Max(1, math.Abs(alpha)) {
					t.Fatalf("%s: C(%d,%d) = %v, gonum %v", name, i, j, g, w)
				}
			}
		}
	}
}

// α = 0 with β = 0 must leave exact zeros, whatever C held.
func TestDgemmZeroAlpha(t *testing.T) {
	const n = 40 // large enough for the packed path
	a := make([]float64, n*n)
	c := make([]float64, n*n)
	for i := range c {
		a[i], c[i] = math.Inf(1), math.NaN()
	}
	Implementation{}.Dgemm(blas.NoTrans, blas.NoTrans, n, n, n, 0, a, n, a, n, 0, c, n)
	for i, v := range c {
		if v != 0 {
			t.Fatalf("α = 0, β = 0: c[%d] = %v", i, v)
		}
	}
	defer func() {
		if recover() == nil {
			t.Fatal("a short C must panic as gonum's Dgemm does")
		}
	}()
	Implementation{}.Dgemm(blas.NoTrans, blas.NoTrans, 40, 40, 40, 1, a[:n*n], n, a, n, 0, make([]float64, 10), 40)
}

func TestBackendRegistered(t *testing.T) {
	if Backend == "pure Go" {
		if _, ok := blas64.Implementation().(Implementation); !ok {
			t.Fatalf("blas64 uses %T, want gemm.Implementation", blas64.Implementation())
		}
	}
}

func randSlice(rng *rand.Rand, n int) []float64 {
	s := make([]float64, n)
	for i := range s {
		s[i] = 2*rng.Float64() - 1
	}
	return s
}

func BenchmarkDgemm(b *testing.B) {
	for _, n := range []int{100, 200, 500, 1000} {
		rng := rand.New(rand.NewPCG(3, 4))
		x, y, z := randSlice(rng, n*n), randSlice(rng, n*n), make([]float64, n*n)
		for _, impl := range []struct {
			name string
			f    blas.Float64
		}{{"backend", blas64.Implementation()}, {"gonum", gonum.Implementation{}}} {
			b.Run(fmt.Sprintf("n=%d/%s", n, impl.name), func(b *testing.B) {
				for i := 0; i < b.N; i++ {
					impl.f.Dgemm(blas.NoTrans, blas.NoTrans, n, n, n, 1, x, n, y, n, 0, z, n)
				}
				b.ReportMetric(2*float64(n)*float64(n)*float64(n)*float64(b.N)/b.Elapsed().Seconds()/1e9, "GFlop/s")
			})
		}
	}
}

package pencil

import (
	"math"
	"testing"

	"semiflow/numerics/expo"
	"semiflow/numerics/spectra"
)

// BenchmarkStringPencil times, on the Rayleigh-damped linear-element string
// of TestLargeStringStaysSparse (n = 20000 nodes, a 40000-state system with
// a tridiagonal consistent mass): setting up G (the band LU of M), the four
// eigenvalues nearest 0 by shift-and-invert through the quadratic pencil,
// and a stiff propagation to t = 0.7 at tol 1e-6 (auto: shift-and-invert).
func BenchmarkStringPencil(b *testing.B) {
	n := 20000
	M, C, K, _ := rayleighString(n, 0.05, 1e-7)
	h := 1 / float64(n+1)
	x0 := make([]float64, 2*n)
	for j := 0; j < n; j++ {
		x0[j] = math.Sin(math.Pi * float64(j+1) * h)
	}
	b.Run("setup", func(b *testing.B) {
		for i := 0; i < b.N; i++ {
			if _, err := NewSecond(ctx, M, C, K); err != nil {
				b.Fatal(err)
			}
		}
	})
	g, err := NewSecond(ctx, M, C, K)
	if err != nil {
		b.Fatal(err)
	}
	b.Run("lowest-modes", func(b *testing.B) {
		for i := 0; i < b.N; i++ {
			if _, err := spectra.Rightmost(ctx, g, &spectra.EigsOptions{Count: 4, ShiftInvert: true}); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("propagate", func(b *testing.B) {
		for i := 0; i < b.N; i++ {
			if _, err := expo.Propagate(ctx, g, x0, []float64{0.7}, expo.Options{Tol: 1e-6}); err != nil {
				b.Fatal(err)
			}
		}
	})
}

package solve

import (
	"context"
	"fmt"
	"math/rand/v2"
	"testing"

	"semiflow/numerics/linop"
)

// Factorisation and solve of zI − A for the 5-point Laplacian on k×k grids
// (N = 10⁴, 10⁵) by sparse LU with nested dissection, the 1-D second
// difference with N = 10⁶ by band LU, and a dense operator by dense LU.
func BenchmarkShifted(b *testing.B) {
	z := complex(0.5, 3)
	for _, k := range []int{100, 316} {
		lap := linop.NewKronSum(secondDiff(k, false, false), secondDiff(k, false, false))
		name := fmt.Sprintf("sparse-2D-N=%d", k*k)
		b.Run(name+"/factor", func(b *testing.B) {
			for b.Loop() {
				f, err := NewSparseShifted(context.Background(), lap, z)
				if err != nil {
					b.Fatal(err)
				}
				l, u := f.(interface{ NNZ() (int, int) }).NNZ()
				b.ReportMetric(float64(l+u)/float64(k*k), "nnzLU/N")
			}
		})
		f, _ := NewSparseShifted(context.Background(), lap, z)
		benchSolve(b, name, f, k*k)
		// A real shift inside the spectrum (eigenvalues in (−8, 0)):
		// zI − A is indefinite and fronts delay pivots.
		b.Run(name+"/factor-indefinite", func(b *testing.B) {
			for b.Loop() {
				f, err := NewSparseShifted(context.Background(), lap, -3.3)
				if err != nil {
					b.Fatal(err)
				}
				if mf, ok := f.(*Multifrontal); ok {
					b.ReportMetric(float64(mf.Delayed), "delayed")
				}
			}
		})
	}
	for _, n := range []int{1_000_000} {
		a := secondDiff(n, false, false)
		name := fmt.Sprintf("band-1D-N=%d", n)
		b.Run(name+"/factor", func(b *testing.B) {
			for b.Loop() {
				if _, err := NewZBandShifted(a, z); err != nil {
					b.Fatal(err)
				}
			}
		})
		f, _ := NewZBandShifted(a, z)
		benchSolve(b, name, f, n)
		a4 := secondDiff(n, false, true)
		name = fmt.Sprintf("band-1D-order4-N=%d", n)
		b.Run(name+"/factor", func(b *testing.B) {
			for b.Loop() {
				if _, err := NewZBandShifted(a4, z); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
	for _, n := range []int{500, 1000} {
		rng := rand.New(rand.NewPCG(1, 1))
		data := make([]float64, n*n)
		for i := range data {
			data[i] = rng.NormFloat64()
		}
		name := fmt.Sprintf("dense-N=%d", n)
		b.Run(name+"/factor", func(b *testing.B) {
			for b.Loop() {
				if _, err := NewZDenseShifted(n, data, z); err != nil {
					b.Fatal(err)
				}
			}
		})
		f, _ := NewZDenseShifted(n, data, z)
		benchSolve(b, name, f, n)
	}
}

func benchSolve(b *testing.B, name string, s ShiftedSolver, n int) {
	rhs := make([]complex128, n)
	for i := range rhs {
		rhs[i] = complex(float64(i%5), 1)
	}
	x := make([]complex128, n)
	b.Run(name+"/solve", func(b *testing.B) {
		for b.Loop() {
			s.Solve(x, rhs)
		}
	})
}

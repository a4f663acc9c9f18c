package solve

import (
	"context"
	"fmt"
	"math"
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

// advDiff2D is κ·Δ_h − β·D_x on the m×m interior points of (0, 1)² with
// κ = 1 + ½ sin(2πx) sin(πy) and β = 20(1 + y) (numerics/compare AdvDiff),
// assembled: no Kronecker structure for the ordering to find.
func advDiff2D(m int) *linop.CSR {
	h := 1 / float64(m+1)
	var is, js []int
	var vs []float64
	for ix := 0; ix < m; ix++ {
		for iy := 0; iy < m; iy++ {
			x, y := float64(ix+1)*h, float64(iy+1)*h
			k := 1 + 0.5*math.Sin(2*math.Pi*x)*math.Sin(math.Pi*y)
			b := 20 * (1 + y)
			i := ix*m + iy
			add := func(j int, v float64) { is, js, vs = append(is, i), append(js, j), append(vs, v) }
			add(i, -4*k/(h*h))
			if ix > 0 {
				add(i-m, k/(h*h)+b/(2*h))
			}
			if ix < m-1 {
				add(i+m, k/(h*h)-b/(2*h))
			}
			if iy > 0 {
				add(i-1, k/(h*h))
			}
			if iy < m-1 {
				add(i+1, k/(h*h))
			}
		}
	}
	return linop.NewCSRFromTriplets(m*m, m*m, is, js, vs)
}

// The supernodal factorisation of zI − A for the 2-D variable-coefficient
// advection–diffusion operator: orderings (AMD, nested dissection) with
// their predicted fill, the first factorisation (ordering included) and
// later ones (analysis cached) for a real and a complex shift, and solves
// with 1 and 8 right-hand sides.
func BenchmarkSupernodal(b *testing.B) {
	for _, m := range []int{100, 316} {
		a := advDiff2D(m)
		name := fmt.Sprintf("advdiff2d-N=%d", m*m)
		g := symGraph(a)
		for _, o := range []struct {
			name  string
			order func(*graph) []int
		}{{"amd", func(g *graph) []int { q, _ := amdGraph(context.Background(), g); return q }},
			{"nd", func(g *graph) []int { q, _ := ndGraph(context.Background(), g); return q }}} {
			b.Run(name+"/order-"+o.name, func(b *testing.B) {
				var q []int
				for b.Loop() {
					q = o.order(g)
				}
				nnz, flops, _ := fillCount(context.Background(), g, q)
				b.ReportMetric(nnz, "nnzL")
				b.ReportMetric(flops, "flops")
			})
		}
		for _, z := range []complex128{1000, 1000 + 1000i} {
			kind := "real"
			if imag(z) != 0 {
				kind = "complex"
			}
			b.Run(name+"/first-factor-"+kind, func(b *testing.B) {
				for b.Loop() {
					ForgetAnalyses()
					if _, err := NewSupernodal(context.Background(), a, z, Options{}); err != nil {
						b.Fatal(err)
					}
				}
			})
			b.Run(name+"/factor-"+kind, func(b *testing.B) {
				for b.Loop() {
					if _, err := NewSupernodal(context.Background(), a, z, Options{}); err != nil {
						b.Fatal(err)
					}
				}
			})
			s, err := NewSupernodal(context.Background(), a, z, Options{})
			if err != nil {
				b.Fatal(err)
			}
			for _, nrhs := range []int{1, 8} {
				rhs := make([][]complex128, nrhs)
				xs := make([][]complex128, nrhs)
				for c := range rhs {
					rhs[c] = make([]complex128, m*m)
					xs[c] = make([]complex128, m*m)
					for i := range rhs[c] {
						rhs[c][i] = complex(float64((i+c)%5), 1)
					}
				}
				b.Run(fmt.Sprintf("%s/solve-%s-%drhs", name, kind, nrhs), func(b *testing.B) {
					for b.Loop() {
						s.SolveMany(xs, rhs)
					}
				})
			}
		}
	}
}

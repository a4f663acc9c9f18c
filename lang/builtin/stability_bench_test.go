package builtin_test

import (
	"context"
	"testing"

	"semiflow/lang/run"
)

// Benchmarks of the stability builtins through the language, on a
// convection–diffusion operator 0.01 d²u/dx² − du/dx (Dirichlet, second order) of
// order 100 made dense, and on the sparse Dirichlet Laplacian of order
// 9999. Run with
//
//	go test ./lang/builtin -run '^$' -bench Stability -benchtime 3x
func benchStability(b *testing.B, setup, src string) {
	s := run.NewSession()
	if _, _, err := s.Execute(context.Background(), setup, nil); err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, _, err := s.Execute(context.Background(), src, nil); err != nil {
			b.Fatal(err)
		}
	}
}

const benchDense = "g = interval(0, 1, 102)\nA = dense(0.01*laplacian(g) - deriv(g))"

func BenchmarkStabilitySpectrum100(b *testing.B) {
	benchStability(b, benchDense, "x = spectrum(A)")
}

func BenchmarkStabilityPseudospectrum100Grid60(b *testing.B) {
	benchStability(b, benchDense, "x = pseudospectrum(A, re=[-500, 50], im=[-200, 200], levels=[1e-1, 1e-3], n=60)")
}

func BenchmarkStabilityGrowth100Fast(b *testing.B) {
	benchStability(b, benchDense, `x = growth(A, t=0 .. 2 by 0.02, bounds="fast")`)
}

func BenchmarkStabilityGenerator100(b *testing.B) {
	benchStability(b, benchDense, "x = generator(A)")
}

func BenchmarkStabilityNumrange100(b *testing.B) {
	benchStability(b, benchDense, "x = numrange(A)")
}

const benchSparse = "L = laplacian(interval(0, 1, 10001))"

func BenchmarkStabilityRightmost6Sparse9999(b *testing.B) {
	benchStability(b, benchSparse, "x = spectrum(L, count=6)")
}

func BenchmarkStabilityAbscissaSparse9999(b *testing.B) {
	benchStability(b, benchSparse, "x = abscissa(L)")
}

func BenchmarkStabilityGrowth100None(b *testing.B) {
	benchStability(b, benchDense, `x = growth(A, t=0 .. 2 by 0.02, bounds="none")`)
}

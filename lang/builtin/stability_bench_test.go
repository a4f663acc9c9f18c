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
	benchStability(b, benchDense, "x = wellposed(A)")
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

// Benchmarks of the default calls whose budgets the reports of 2026-12-02
// questioned, each as a user types it, with the CPU seconds of the process
// per operation beside the wall time (a busy machine inflates the wall
// time, less the CPU time):
//
//	go test ./lang/builtin -run '^$' -bench 'Defaults' -benchtime 1x
//
// growth at order 300 took 38 s before its curve had a budget; kreiss at
// order 100 stops in its refinement at the budget (search="full" beside it), numabscissa of
// a skew-symmetric operator of order 10⁴ failed before; growth at order
// 1000 is refused at once (even three times exceed ten budgets).
const benchDense300 = "g = interval(0, 1, 302)\nA = dense(0.01*laplacian(g) - deriv(g))"

func benchDefault(b *testing.B, setup, src string, wantErr bool) {
	s := run.NewSession()
	if _, _, err := s.Execute(context.Background(), setup, nil); err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	c0 := cpuSeconds()
	for i := 0; i < b.N; i++ {
		if _, _, err := s.Execute(context.Background(), src, nil); (err != nil) != wantErr {
			b.Fatalf("%s: error %v, want one: %v", src, err, wantErr)
		}
	}
	b.ReportMetric((cpuSeconds()-c0)/float64(b.N), "cpu-s/op")
}

func BenchmarkDefaultsGrowth100(b *testing.B) { benchDefault(b, benchDense, "x = growth(A)", false) }
func BenchmarkDefaultsGrowth300(b *testing.B) { benchDefault(b, benchDense300, "x = growth(A)", false) }
func BenchmarkDefaultsGrowth300All(b *testing.B) {
	benchDefault(b, benchDense300, `x = growth(A, bounds="none", samples="all")`, false)
}
func BenchmarkDefaultsGrowthRefused1000(b *testing.B) {
	benchDefault(b, "A = dense(laplacian(interval(0, 1, 1002)))", "x = growth(A)", true)
}

// kreiss at order 100 runs out of the interactive budget in its
// refinement: the call gives the scan's best value, a lower bound.
func BenchmarkDefaultsKreiss100(b *testing.B) { benchDefault(b, benchDense, "x = kreiss(A)", false) }
func BenchmarkDefaultsKreiss100Full(b *testing.B) {
	benchDefault(b, benchDense, `x = kreiss(A, search="full")`, false)
}
func BenchmarkDefaultsNumabscissaSkew10000(b *testing.B) {
	benchDefault(b, `D = deriv(interval(0, 1, 10000, ends="periodic"))`, "x = numabscissa(D)", false)
}
func BenchmarkDefaultsNumabscissa300(b *testing.B) {
	benchDefault(b, benchDense300, "x = numabscissa(A)", false)
}

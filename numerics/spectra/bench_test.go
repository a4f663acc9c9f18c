package spectra

import (
	"fmt"
	"math"
	"runtime"
	"sync"
	"syscall"
	"testing"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/expo"
	"semiflow/numerics/linop"
)

var benchRegion = Region{Re0: -1, Re1: 3, Im0: -3.5, Im1: 3.5, NRe: 100, NIm: 100}

// BenchmarkPseudoGrid400 is the full pseudospectra computation (Schur form
// plus inverse Lanczos at 100×100 points) for the 400×400 Grcar matrix.
func BenchmarkPseudoGrid400(b *testing.B) {
	a := grcar(400)
	for i := 0; i < b.N; i++ {
		p, err := Pseudo(bg, a, benchRegion, &GridOptions{Levels: []float64{1e-2, 1e-4, 1e-6}})
		if err != nil {
			b.Fatal(err)
		}
		b.ReportMetric(float64(p.MaxIter), "maxLanczos")
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/1e4, "ns/point")
}

// BenchmarkPseudoSVDPerPoint400 is the direct method a user would write:
// σ_min(zI − A) from a dense SVD of the real 2n×2n embedding
// [Re −Im; Im Re] of zI − A, on all cores. It times 16 grid points and
// reports the cost per point; multiply by 10⁴ for the 100×100 grid.
func BenchmarkPseudoSVDPerPoint400(b *testing.B) {
	n := 400
	a := grcar(n)
	re, im := benchRegion.Points()
	const pts = 16
	workers := runtime.GOMAXPROCS(0)
	for it := 0; it < b.N; it++ {
		var wg sync.WaitGroup
		for w := 0; w < workers; w++ {
			wg.Add(1)
			go func(w int) {
				defer wg.Done()
				e := mat.NewDense(2*n, 2*n, nil)
				var svd mat.SVD
				for k := w; k < pts; k += workers {
					z := complex(re[(k*37)%len(re)], im[(k*53)%len(im)])
					for i := 0; i < n; i++ {
						for j := 0; j < n; j++ {
							v := -a.m.At(i, j)
							if i == j {
								v += real(z)
							}
							e.Set(i, j, v)
							e.Set(n+i, n+j, v)
						}
						e.Set(i, n+i, -imag(z))
						e.Set(n+i, i, imag(z))
					}
					if !svd.Factorize(e, mat.SVDNone) {
						b.Error("SVD failed")
					}
					_ = svd.Values(nil)[2*n-1]
				}
			}(w)
		}
		wg.Wait()
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/pts, "ns/point")
}

// BenchmarkRightmostConvDiff1e5 finds the 6 rightmost eigenvalues of a 2-D
// convection–diffusion operator on a 316×316 grid (N = 99 856) by
// shift-and-invert Krylov–Schur about σ = 0 (factorisation included).
func BenchmarkRightmostConvDiff1e5(b *testing.B) {
	x, lx, dx, ux := convDiff1D(316, 0.05, 1)
	y, ly, dy, uy := convDiff1D(316, 0.05, 0.3)
	a := linop.NewKronSum(x, y)
	want := convDiffEigs(316, 316, lx, dx, ux, ly, dy, uy)[:6]
	for i := 0; i < b.N; i++ {
		sp, err := Rightmost(bg, a, &EigsOptions{Count: 6, ShiftInvert: true})
		if err != nil {
			b.Fatal(err)
		}
		for k := range want {
			if math.Abs(real(sp.Values[k])-want[k]) > 1e-8*math.Abs(want[k]) {
				b.Errorf("λ_%d = %v, closed form %g", k, sp.Values[k], want[k])
			}
		}
		if i == 0 {
			b.Logf("λ = %v; residuals %v; %s", sp.Values, sp.Residual, sp.Method)
		}
	}
}

// BenchmarkGrowthKreiss100 is GrowthCurve with the Kreiss constant and two
// α_ε bounds for the stable, strongly non-normal G − 2I (α ≈ −0.32, ω ≈ 0.99) (G the 100×100
// Grcar matrix) at 61 times.
func BenchmarkGrowthKreiss100(b *testing.B) {
	a := grcar(100)
	for i := 0; i < 100; i++ {
		a.m.Set(i, i, a.m.At(i, i)-2)
	}
	for i := 0; i < b.N; i++ {
		g, err := GrowthCurve(bg, a, linspace(0, 30, 61), &GrowthOptions{Eps: []float64{1e-2, 1e-4}})
		if err != nil {
			b.Fatal(err)
		}
		if i == 0 {
			b.Logf("peak %.4g at t = %.3g, K = %.4g, eNK = %.4g, α_ε/ε = %.4g, %.4g", g.Peak, g.PeakTime, g.Kreiss.K, g.Upper, g.EpsBounds[0].Bound, g.EpsBounds[1].Bound)
		}
	}
}

// BenchmarkPseudoKrylov1e5 is the Krylov-projection pseudospectra (m = 60,
// 50×50 grid) of the N = 99 856 convection–diffusion operator.
func BenchmarkPseudoKrylov1e5(b *testing.B) {
	x, _, _, _ := convDiff1D(316, 0.05, 1)
	y, _, _, _ := convDiff1D(316, 0.05, 0.3)
	a := linop.NewKronSum(x, y)
	for i := 0; i < b.N; i++ {
		_, err := PseudoKrylov(bg, a, Region{-4e5, 1e4, -2e5, 2e5, 50, 50}, 60, &GridOptions{Levels: []float64{1e2, 1e3}})
		if err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkKreiss200 is the Kreiss constant alone of G − 2I, G the 200×200
// Grcar matrix (K ≈ 1.697e12).
func BenchmarkKreiss200(b *testing.B) {
	a := grcar(200)
	for i := 0; i < 200; i++ {
		a.m.Set(i, i, a.m.At(i, i)-2)
	}
	for i := 0; i < b.N; i++ {
		k, err := Kreiss(bg, a)
		if err != nil {
			b.Fatal(err)
		}
		if i == 0 {
			b.Logf("K = %.12g at z = %.6g", k.K, k.Z)
		}
	}
}

// BenchmarkGrowthEval times one value ‖e^{tA}‖₂ (scaling-and-squaring
// exponential and SVD) of the 300×300 Grcar matrix at t = 1 and t = 8
// (1 and 4 squarings), and reports the measured work per n³ in the units
// of InteractiveWork (wall seconds × 2·WorkRate), beside the prediction
// GrowthEvalWork/n³ that the curve's budget uses.
func BenchmarkGrowthEval(b *testing.B) {
	for _, t := range []float64{1, 8} {
		b.Run(fmt.Sprintf("t=%g", t), func(b *testing.B) {
			a := grcar(300)
			g, err := GrowthCurve(bg, a, []float64{t}, &GrowthOptions{Eps: nil, NoKreiss: true})
			if err != nil {
				b.Fatal(err)
			}
			n3 := 300.0 * 300 * 300
			b.ResetTimer()
			c0 := cpuSeconds()
			for i := 0; i < b.N; i++ {
				var ta, e mat.Dense
				ta.Scale(t, a.m)
				if _, err := expo.Exp(&e, &ta); err != nil {
					b.Fatal(err)
				}
				var svd mat.SVD
				if !svd.Factorize(&e, mat.SVDNone) {
					b.Fatal("SVD failed")
				}
			}
			reportUnits(b, c0, n3)
			b.ReportMetric(GrowthEvalWork(300, t*mat.Norm(a.m, 1))/n3, "predicted/n³")
			b.ReportMetric(float64(g.ExpSquaring[0]), "squarings")
		})
	}
}

// BenchmarkShape times the dense shape (Schur form, numerical abscissae of
// A and −A, spread of W(A)) of the Grcar matrix at orders 300 and 600, in
// work units per n³ beside ShapeWork's prediction.
func BenchmarkShape(b *testing.B) {
	for _, n := range []int{300, 600} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			a := grcar(n)
			c0 := cpuSeconds()
			for i := 0; i < b.N; i++ {
				if _, err := newShape(bg, a.m); err != nil {
					b.Fatal(err)
				}
			}
			reportUnits(b, c0, float64(n)*float64(n)*float64(n))
			b.ReportMetric(ShapeWork(n)/(float64(n)*float64(n)*float64(n)), "predicted/n³")
		})
	}
}

// reportUnits reports the work per n³ of one operation in the units of
// InteractiveWork two ways: from the wall time (units/n³, wall seconds ×
// 2·WorkRate, what the development machine gives with both cores free)
// and from the CPU time of the process since c0 (cpu-units/n³, CPU
// seconds × WorkRate), which a machine busy with other work inflates less.
func reportUnits(b *testing.B, c0, n3 float64) {
	op := float64(b.N)
	b.ReportMetric(b.Elapsed().Seconds()/op*2*WorkRate/n3, "units/n³")
	b.ReportMetric((cpuSeconds()-c0)/op*WorkRate/n3, "cpu-units/n³")
}

// cpuSeconds is the user and system CPU time of this process.
func cpuSeconds() float64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return math.NaN()
	}
	return float64(ru.Utime.Nano()+ru.Stime.Nano()) / 1e9
}

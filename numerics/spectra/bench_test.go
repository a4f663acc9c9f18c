package spectra

import (
	"math"
	"runtime"
	"sync"
	"testing"

	"gonum.org/v1/gonum/mat"

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

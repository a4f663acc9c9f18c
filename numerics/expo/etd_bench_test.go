package expo

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"testing"

	"semiflow/numerics/linop"
)

// fisherKPP is the benchmark problem of testdata/bench/etd_scipy.py:
// u_t = D u_xx + u(1 − u) on (0, 1) with Dirichlet ends, n interior points,
// second differences, D = 0.01, u0 = 0.8·exp(−100(x − 0.5)²), to T = 2.
func fisherKPP(n int) (L *linop.CSR, u0 []float64, N Nonlinear) {
	csr, x := etdLaplacian(n, 0.01)
	u0 = make([]float64, n)
	for i, xi := range x {
		u0[i] = 0.8 * math.Exp(-100*(xi-0.5)*(xi-0.5))
	}
	N = func(_ float64, u, dst []float64) {
		for i, v := range u {
			dst[i] = v * (1 - v)
		}
	}
	return csr, u0, N
}

// BenchmarkETDFisherKPP times adaptive ETDRK4 at N = 1000 (the contour
// path) for the scipy comparison (testdata/bench/etd_scipy.py, which runs
// it with -benchtime 1x -count R and takes the best). Besides ns/op it
// reports the CPU seconds per run (cpu-s, both cores together: steadier
// than wall time on a shared machine), the steps, the estimate and the
// shifted solves and factorisations. With SEMIFLOW_ETD_OUT set to a folder
// it writes the solution at T and the work done there as JSON.
//
// Figures in the README (2026-12-03). Before the fused kernels and the
// cheaper local estimate, on the machine at rest: 0.124–0.220 s (tol 1e-6)
// and 0.306–0.577 s (tol 1e-8), 4.3–4.5× and 5.7–6.4× scipy's Radau. After,
// under a load of 21: 0.042 s and 0.097 s of CPU, 0.85× and 1.35× BDF's,
// 0.61× and 0.73× Radau's.
func BenchmarkETDFisherKPP(b *testing.B) {
	for _, tol := range []float64{1e-6, 1e-8} {
		b.Run(fmt.Sprintf("N1000_tol%g", tol), func(b *testing.B) {
			L, u0, N := fisherKPP(1000)
			var s *Solution
			var st StepStats
			cpu0 := cpuSeconds()
			for i := 0; i < b.N; i++ {
				var err error
				s, st, err = ETDRK4(context.Background(), L, N, u0, []float64{2}, StepControl{}, Options{Tol: tol})
				if err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric((cpuSeconds()-cpu0)/float64(b.N), "cpu-s")
			b.ReportMetric(float64(st.Accepted), "accepted")
			b.ReportMetric(float64(st.Rejected), "rejected")
			b.ReportMetric(s.MaxErrEst()*1e9, "errest·1e9")
			b.ReportMetric(float64(s.Solves), "solves")
			b.ReportMetric(float64(s.Factors), "factors")
			if !s.TolMet {
				b.Errorf("tol %g: %s", tol, s.Shortfall)
			}
			if dir := os.Getenv("SEMIFLOW_ETD_OUT"); dir != "" {
				out, _ := json.Marshal(map[string]any{"tol": tol, "u": s.Values[0], "errest": s.MaxErrEst(),
					"accepted": st.Accepted, "rejected": st.Rejected, "reason": s.Reason})
				if err := os.WriteFile(filepath.Join(dir, fmt.Sprintf("etd_tol%g.json", tol)), out, 0o644); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

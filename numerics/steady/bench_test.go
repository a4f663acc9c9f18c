package steady

import (
	"context"
	"testing"
)

// BenchmarkBratuBanded: Bratu's problem u” + e^u = 0 on 10⁵ unknowns from
// u = 0, each Newton step one banded LU of the tridiagonal Jacobian and one
// complex-step evaluation of the term.
func BenchmarkBratuBanded(b *testing.B) {
	n := 100000
	a, _ := laplacian(b, n)
	term := bratuTerm(1)
	u0 := make([]float64, n)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		res, err := Solve(context.Background(), a, nil, term, u0, Options{Tol: 1e-8})
		if err != nil {
			b.Fatal(err)
		}
		b.ReportMetric(float64(len(res.Steps)), "newton-steps")
		b.ReportMetric(res.ErrEst, "errest")
	}
}

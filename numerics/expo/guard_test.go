package expo

import (
	"errors"
	"strings"
	"testing"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// TestWorkVectorsGuarded: every method asks the memory guard for its work
// vectors and results before making them. Under a limit of 8 MiB, the
// Kronecker sum of two 1000-point convection–diffusion operators (order
// 10⁶: 8 MB a vector) is refused by each method with the guard's error,
// naming the vectors, instead of allocating past the limit; at order 10¹⁰
// the same check is what stands between a request and an 80 GB vector.
func TestWorkVectorsGuarded(t *testing.T) {
	x := convDiff1D(1000, 1)
	k := linop.NewKronSum(x, x)
	u0 := make([]float64, 1000*1000)
	for i := range u0 {
		u0[i] = 1
	}
	old := memguard.SetLimit(8 << 20)
	defer memguard.SetLimit(old)
	for _, m := range []string{MethodKronecker, MethodKrylov, MethodTaylor, MethodContour, MethodResolvent, MethodShiftInv, MethodAuto} {
		t.Run(m, func(t *testing.T) {
			_, err := Propagate(t.Context(), k, u0, []float64{0.001}, Options{Method: m, Tol: 1e-6})
			if !errors.Is(err, memguard.ErrTooLarge) || !strings.Contains(err.Error(), "order 1000000") {
				t.Errorf("%s: error %v, want the memory guard's refusal of vectors of order 1000000", m, err)
			}
		})
	}
}

// TestETDRK4Guarded: ETDRK4 on a diagonal operator of order 10⁶ under a
// limit of 8 MiB is refused by the memory guard before its work vectors
// (nineteen of 8 MB with one output time) are made.
func TestETDRK4Guarded(t *testing.T) {
	d := make([]float64, 1000*1000)
	for i := range d {
		d[i] = -float64(i % 100)
	}
	u0 := make([]float64, len(d))
	old := memguard.SetLimit(8 << 20)
	defer memguard.SetLimit(old)
	_, _, err := ETDRK4(t.Context(), &linop.Diag{D: d}, func(_ float64, u, dst []float64) { copy(dst, u) }, u0, []float64{0.1}, StepControl{}, Options{})
	if !errors.Is(err, memguard.ErrTooLarge) || !strings.Contains(err.Error(), "(19 vectors of order 1000000)") {
		t.Errorf("error %v, want the memory guard's refusal of 19 vectors of order 1000000", err)
	}
}

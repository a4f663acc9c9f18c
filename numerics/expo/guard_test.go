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

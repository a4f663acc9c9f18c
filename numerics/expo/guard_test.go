package expo

import (
	"errors"
	"runtime"
	"strings"
	"testing"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// TestWorkVectorsGuarded: every method asks the memory guard for its work
// vectors and results before making them. Under a limit of 8 MiB, the
// Kronecker sum of two 1000-point convection–diffusion operators (order
// 10⁶: 8 MB a vector) is refused with the guard's error, naming the
// vectors, instead of allocating past the limit; at order 10¹⁰ the same
// check is what stands between a request and an 80 GB vector. Propagate's
// own three setup vectors (23 MiB) fit under 28 MiB, so there each
// method's request is the one refused (not the Kronecker method's few
// vectors of order 10⁶, which fit).
func TestWorkVectorsGuarded(t *testing.T) {
	all := []string{MethodKronecker, MethodKrylov, MethodTaylor, MethodContour, MethodResolvent, MethodShiftInv, MethodAuto}
	t.Run("8 MiB", func(t *testing.T) { workVectorsGuarded(t, 8<<20, all) })
	t.Run("28 MiB", func(t *testing.T) { workVectorsGuarded(t, 28<<20, all[1:6]) })
}

func workVectorsGuarded(t *testing.T, limit int64, methods []string) {
	x := convDiff1D(1000, 1)
	k := linop.NewKronSum(x, x)
	u0 := make([]float64, 1000*1000)
	for i := range u0 {
		u0[i] = 1
	}
	old := memguard.SetLimit(limit)
	defer memguard.SetLimit(old)
	for _, m := range methods {
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

// TestSetupGuarded: choosing a method estimates ‖A‖₁ with three work
// vectors of order n, and a sum's products hold one more; Propagate asks
// the guard for the four (31 MiB at order 10⁶, by arithmetic) before the
// estimate, so a refusal allocates nothing of that order (the vectors were
// once made unguarded, then a later request refused).
func TestSetupGuarded(t *testing.T) {
	x := convDiff1D(1000, 1)
	a := &linop.Sum{Terms: []linop.Operator{linop.NewKronSum(x, x), &linop.Diag{D: make([]float64, 1e6)}}}
	u0 := make([]float64, 1e6)
	old := memguard.SetLimit(24 << 20)
	defer memguard.SetLimit(old)
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	_, err := Propagate(t.Context(), a, u0, []float64{0.5}, Options{Tol: 1e-6})
	runtime.ReadMemStats(&after)
	if !errors.Is(err, memguard.ErrTooLarge) || !strings.Contains(err.Error(), "norm-estimate work vectors (4 vectors of order 1000000) needs 31 MiB") {
		t.Errorf("error %v, want the guard's refusal of 4 vectors needing 31 MiB", err)
	}
	if got := after.TotalAlloc - before.TotalAlloc; got >= 8e6 {
		t.Errorf("the refusal allocated %d bytes, at least one vector of order 10⁶", got)
	}
}

// TestETDRK4DenseCoeffsGuarded: a dense L of order 1200 (11.5 MB a matrix)
// under a limit of 40 MiB passes the work-vector check (19 vectors, 0.2 MB)
// but its coefficient cache (six matrices a step length, 66 MiB) is
// refused by the memory guard before any is allocated.
func TestETDRK4DenseCoeffsGuarded(t *testing.T) {
	n := 1200
	L := convDiff1D(n, 1)
	u0 := make([]float64, n)
	old := memguard.SetLimit(40 << 20)
	defer memguard.SetLimit(old)
	_, _, err := ETDRK4(t.Context(), L, func(_ float64, u, dst []float64) { copy(dst, u) }, u0, []float64{0.1}, StepControl{Steps: 4}, Options{})
	if !errors.Is(err, memguard.ErrTooLarge) || !strings.Contains(err.Error(), "ETDRK4 coefficient cache (1 step lengths of order 1200)") {
		t.Errorf("error %v, want the memory guard's refusal of the coefficient cache of order 1200", err)
	}
}

// TestForcingGuarded: a general forcing on order 10⁶ under 8 MiB is refused
// by the guard, naming the interpolation vectors, before they are made.
func TestForcingGuarded(t *testing.T) {
	n := 1000 * 1000
	old := memguard.SetLimit(8 << 20)
	defer memguard.SetLimit(old)
	f := Forcing{Func: func(_ float64, dst []float64) {}}
	_, err := PropagateForced(t.Context(), &linop.Diag{D: make([]float64, n)}, make([]float64, n), f, []float64{1}, Options{})
	if !errors.Is(err, memguard.ErrTooLarge) || !strings.Contains(err.Error(), "forcing interpolation") {
		t.Errorf("error %v, want the memory guard's refusal of the forcing interpolation vectors", err)
	}
}

package expo

import (
	"math"
	"testing"
)

// TestTaylorTail checks taylorTail against the series it bounds summed
// term by term (Σ_{k≥1} Π_{i≤k} x/(j+i), to convergence): never below it,
// and within 0.2% of it.
func TestTaylorTail(t *testing.T) {
	for _, c := range []struct {
		x float64
		j int
	}{{9.9, 23}, {9.9, 41}, {0.5, 3}, {30, 31}, {1e-3, 1}} {
		sum, p := 0.0, 1.0
		for k := 1; k < 10000 && p > 1e-300; k++ {
			p *= c.x / float64(c.j+k)
			sum += p
		}
		got := taylorTail(0, 1, c.x, c.j)
		if got < sum || got > sum*1.002 {
			t.Errorf("x = %g, j = %d: tail %.6g, series %.6g", c.x, c.j, got, sum)
		}
		// The bound is never above the cruder r/(1 − r).
		if r := c.x / float64(c.j+1); got > r/(1-r)*(1+1e-12) {
			t.Errorf("x = %g, j = %d: tail %.6g above r/(1−r) = %.6g", c.x, c.j, got, r/(1-r))
		}
	}
	if got := taylorTail(2, 3, 10, 5); got != 5 {
		t.Errorf("x ≥ j+1: want c1 + c2 = 5, got %g", got)
	}
	if math.IsNaN(taylorTail(0, 1, 0, 4)) {
		t.Error("x = 0 gives NaN")
	}
}

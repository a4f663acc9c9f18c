package expo

import (
	"context"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
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

// jordanLike is A = [[−1, b], [0, −1]]: e^{sA} = e^{−s}[[1, bs], [0, 1]],
// so ‖e^{sA}‖∞ = e^{−s}(1 + bs), largest at s = 1 − 1/b: b·e^{1/b − 1}
// (37.2 for b = 100), while the ∞-norm log-norm is b − 1 (closed form).
func jordanLike(b float64) *linop.Dense {
	return linop.NewDense(mat.NewDense(2, 2, []float64{-1, b, 0, -1}))
}

func TestGrowthBoundJordanLike(t *testing.T) {
	// closed form: sup_s ‖e^{sA}‖∞ = 100e^{−0.99} for T ≥ 0.99.
	want := 100 * math.Exp(-0.99)
	M, note, err := growthBound(context.Background(), jordanLike(100), 5)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("M = %.4g (%s)", M, note)
	if M < want || M > 1.15*want {
		t.Errorf("M = %.4g, want in [%.4g, 1.15·%.4g] (%s)", M, want, want, note)
	}
	// A diagonally dominant A with a nonpositive diagonal: M = 1.
	if M, _, _ := growthBound(context.Background(), heat1D(50), 1); M != 1 {
		t.Errorf("heat operator: M = %g, want 1", M)
	}
}

// TestForcedGrowthJordanLike integrates u' = Au + [0, sin t], u(0) = 0, for
// the Jordan-like A, whose transient growth (3.7e3× for b = 1e4) carries an
// error in u₂ into u₁. Closed form by variation of constants:
// u₂ = (sin t − cos t + e^{−t})/2, u₁ = (b/2)(e^{−t}(1 + t) − cos t).
func TestForcedGrowthJordanLike(t *testing.T) {
	b := 1e4
	times := []float64{0.5, 1, 2, 5}
	f := Forcing{Func: func(t float64, dst []float64) { dst[0], dst[1] = 0, math.Sin(t) }, Degree: 2}
	s, err := PropagateForced(context.Background(), jordanLike(b), []float64{0, 0}, f, times, Options{Tol: 1e-6})
	if err != nil {
		t.Fatal(err)
	}
	for i, tt := range times {
		u1 := b / 2 * (math.Exp(-tt)*(1+tt) - math.Cos(tt))
		u2 := (math.Sin(tt) - math.Cos(tt) + math.Exp(-tt)) / 2
		e := math.Max(math.Abs(s.Values[i][0]-u1), math.Abs(s.Values[i][1]-u2))
		t.Logf("t = %g: true error %.3g, estimate %.3g", tt, e, s.ErrEst[i])
		if !(e <= s.ErrEst[i]) {
			t.Errorf("t = %g: estimate %.3g below the true error %.3g", tt, s.ErrEst[i], e)
		}
		// Not sharp (5e4× at t = 5): the pieces are refined until M times
		// the interpolation share c·δ·H fits, and that share ignores the
		// cancellation in ∫e^{(t−s)A}(f − p)ds of an interpolation error
		// that changes sign on the piece. Before the growth was carried
		// (M = 1) the estimate was 150 times below the true error at t = 5.
	}
	if !s.TolMet {
		t.Errorf("tolerance not met: %s", s.Shortfall)
	}
	if !strings.Contains(s.Reason, "sup‖e^{sA}‖∞") {
		t.Errorf("the reason does not name the growth bound: %s", s.Reason)
	}
}

// TestGrowthBoundCoarse: for order 200 the work allows 125 grid steps, too
// few for e^{rμ∞} ≤ 1.1; A = −I + 50·(upper shift) has μ∞ = 49 and
// ‖e^{sA}‖∞ = e^{−s}Σ_{k<200} (50s)^k/k! (a Jordan block, closed form),
// largest at s = T = 1: e^{−1}Σ_{k<200} 50^k/k! = e^{49} (the Poisson(50)
// mass beyond 199 is below 1e-40). The bound must hold and stay within 2×.
func TestGrowthBoundCoarse(t *testing.T) {
	n := 200
	a := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		a.Set(i, i, -1)
		if i+1 < n {
			a.Set(i, i+1, 50)
		}
	}
	want := math.Exp(49)
	M, note, err := growthBound(context.Background(), linop.NewDense(a), 1)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("M = %.4g, sup = %.4g (%s)", M, want, note)
	if M < want*(1-1e-12) || M > 2*want {
		t.Errorf("M = %.4g, want in [%.4g, 2·%.4g]", M, want, want)
	}
}

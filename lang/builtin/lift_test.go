package builtin_test

import (
	"math"
	"testing"

	"semiflow/lang/objects"
	"semiflow/lang/run"
)

// heatSinRef is the closed form (separation of variables, with the data
// lifted by g(t)(1 − x)) of u_t = u_xx on [0, 1], u(0, t) = sin t,
// u(1, t) = 0, u(x, 0) = 0:
//
//	u = sin t (1 − x) + Σ_k b_k(t) sin(kπx),
//	b_k(t) = −(2/(kπ)) (λ cos t + sin t − λ e^{−λt})/(λ² + 1), λ = (kπ)²,
//
// summed to k = 200000 (the terms fall like k⁻³ and alternate at x = ½:
// the tail is below 1e-16).
func heatSinRef(x, t float64) float64 {
	u := math.Sin(t) * (1 - x)
	for k := 200000; k >= 1; k-- {
		kp := float64(k) * math.Pi
		lam := kp * kp
		b := -(2 / kp) * (lam*math.Cos(t) + math.Sin(t) - lam*math.Exp(-lam*t)) / (lam*lam + 1)
		u += b * math.Sin(kp*x)
	}
	return u
}

// Heat with u(0, t) = sin t lifted into the forcing: the solution at
// x = ½, t = 2 converges to the closed form at the grid's order, and the
// error estimate bounds the difference from the same semi-discrete
// problem solved at tol 1e-12.
func TestBoundaryDataHeatClosedForm(t *testing.T) {
	ref := heatSinRef(0.5, 2)
	s := run.NewSession()
	exec(t, s, `gl(t) = sin(t)
e(n, o, tol) = propagate(laplacian(interval(0, 1, n, boundary=[gl, 0], order=o)), zeros(n - 2), [1, 2], tol=tol)
a41 = e(41, 2, 1e-8)
a81 = e(81, 2, 1e-8)
b41 = e(41, 4, 1e-8)
b81 = e(81, 4, 1e-8)
fine = e(81, 4, 1e-12)`)
	at := func(name string) (float64, *objects.Solution) {
		sol := lookup[*objects.Solution](t, s, name)
		u := sol.S.Values[1]
		return u[(len(u)+1)/2-1], sol // x = ½ is the middle unknown
	}
	errOf := func(name string) float64 { v, _ := at(name); return math.Abs(v - ref) }
	for _, c := range []struct {
		coarse, fine string
		order        float64
	}{{"a41", "a81", 2}, {"b41", "b81", 4}} {
		p := math.Log2(errOf(c.coarse) / errOf(c.fine))
		t.Logf("order %g: errors %.3g, %.3g at x = ½, t = 2; observed order %.2f", c.order, errOf(c.coarse), errOf(c.fine), p)
		if math.Abs(p-c.order) > 0.35 {
			t.Errorf("order %g grid: observed order %.2f (errors %.3g, %.3g)", c.order, p, errOf(c.coarse), errOf(c.fine))
		}
	}
	if e := errOf("b81"); e > 1e-10 {
		t.Errorf("order 4, 81 points: error %.3g against the closed form", e)
	}
	_, b := at("b81")
	_, f := at("fine")
	if !b.S.TolMet {
		t.Errorf("tolerance 1e-8 not met: %s", b.S.Shortfall)
	}
	for i := range b.S.Times {
		d := 0.0
		for k, v := range b.S.Values[i] {
			d = math.Max(d, math.Abs(v-f.S.Values[i][k]))
		}
		if d > b.S.ErrEst[i]+f.S.ErrEst[i] {
			t.Errorf("t = %g: difference %.3g from the tol 1e-12 run exceeds the estimate %.3g", b.S.Times[i], d, b.S.ErrEst[i])
		}
	}
}

// A datum switched on at t = 1 and given in switches: u(0, t) = [t ≥ 1],
// u'(1, t) = 0, u(x, 0) = 0. Closed form (separation of variables from
// t = 1): u(1, t) = 1 − (4/π) e^{−(π/2)²(t−1)} + (4/(3π)) e^{−(3π/2)²(t−1)} − …;
// at t = 3 the second term is below 1e-19.
func TestBoundaryDataSwitched(t *testing.T) {
	s := run.NewSession()
	exec(t, s, `on(t) = when(t < 1, 0, 1)
c = interval(0, 1, 81, ends=["dirichlet", "neumann"], boundary=[on, 0], order=4)
sol = propagate(laplacian(c), zeros(80), [0.5, 3], switches=1)`)
	sol := lookup[*objects.Solution](t, s, "sol")
	if v := sol.S.Values[0]; maxDiff(v, make([]float64, len(v))) > sol.S.ErrEst[0] {
		t.Errorf("before the switch u should stay 0 within its estimate %.3g; max |u| = %.3g", sol.S.ErrEst[0], maxDiff(v, make([]float64, len(v))))
	}
	want := 1 - 4/math.Pi*math.Exp(-math.Pi*math.Pi/2)
	got := sol.S.Values[1][79]
	if e := math.Abs(got - want); e > 1e-8 || !sol.S.TolMet {
		t.Errorf("u(1, 3) = %.12g, closed form %.12g (error %.3g, tolerance met: %v)", got, want, e, sol.S.TolMet)
	}
}

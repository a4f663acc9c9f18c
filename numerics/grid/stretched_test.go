package grid

import (
	"math"
	"testing"
)

// stretchedPoints returns x_j = (e^{2ξ_j} − 1)/(e² − 1), ξ_j = j/(n−1): a
// smooth map of [0, 1] onto itself whose spacing grows e² ≈ 7.4 times
// from the left end to the right.
func stretchedPoints(n int) []float64 {
	x := make([]float64, n)
	for j := range x {
		x[j] = (math.Exp(2*float64(j)/float64(n-1)) - 1) / (math.E*math.E - 1)
	}
	x[n-1] = 1
	return x
}

// Stretched grids. Observed order (Taylor: an order-p formula has error
// O(h^p); on a smooth map the uniform stencils keep their order) of
// D u + lifting − u^(m) with the boundary data of u = e^{x/2} cos x
// (testFunc) at Dirichlet, Neumann and Robin ends; closed-form spectrum
// −(kπ)² of the Dirichlet D2; trapezoid quadrature of ∫₀¹ eˣ dx = e − 1
// (order 2) and exact on linear functions.
func TestStretchedGrid(t *testing.T) {
	ends := map[string]End{"dirichlet": DirichletEnd, "neumann": NeumannEnd, "robin": RobinEnd(2, -0.5)}
	rhs := func(e End, x float64) float64 {
		u, du, _ := testFunc(x)
		switch e.Kind {
		case Dirichlet:
			return u
		case Neumann:
			return du
		}
		return e.Alpha*u + e.Beta*du
	}
	for ln, le := range ends {
		for rn, re := range ends {
			for _, m := range []int{1, 2} {
				for _, order := range []int{2, 4} {
					var errs [2]float64
					for r, n := range []int{41, 81} {
						g, err := NewIntervalPoints(stretchedPoints(n), le, re)
						if err != nil {
							t.Fatal(err)
						}
						d, lift, err := g.Deriv(m, order, [2]Support{})
						if err != nil {
							t.Fatal(err)
						}
						x := g.X()
						u := make([]float64, len(x))
						for k, xv := range x {
							u[k], _, _ = testFunc(xv)
						}
						got := make([]float64, len(x))
						d.Apply(got, u)
						gl, gr := rhs(le, 0), rhs(re, 1)
						for k, xv := range x {
							if order == 2 && m == 2 && (xv == 0 || xv == 1) {
								continue // the ghost-point row, as on uniform grids
							}
							_, du, d2u := testFunc(xv)
							want := du
							if m == 2 {
								want = d2u
							}
							errs[r] = math.Max(errs[r], math.Abs(got[k]+lift[0][k]*gl+lift[1][k]*gr-want))
						}
					}
					p := math.Log2(errs[0] / errs[1])
					if math.Abs(p-float64(order)) > 0.35 {
						t.Errorf("stretched %s–%s D%d order %d: observed order %.2f (errors %.3g, %.3g)", ln, rn, m, order, p, errs[0], errs[1])
					}
				}
			}
		}
	}
	// Spectrum of the Dirichlet D2: −(kπ)², k = 1, 2, 3, at order 2 and 4.
	for _, order := range []int{2, 4} {
		var errs [2]float64
		for r, n := range []int{81, 161} {
			g, _ := NewIntervalPoints(stretchedPoints(n), DirichletEnd, DirichletEnd)
			d2, _ := g.D2(order)
			got := eigReal(t, dense(t, d2), 1e-6)
			for k := 1; k <= 3; k++ {
				exact := -math.Pow(float64(k)*math.Pi, 2)
				errs[r] = math.Max(errs[r], math.Abs(got[len(got)-k]-exact)/-exact)
			}
		}
		p := math.Log2(errs[0] / errs[1])
		t.Logf("stretched Dirichlet D2 order %d: eigenvalue errors %.3g, %.3g, observed order %.2f", order, errs[0], errs[1], p)
		if p < float64(order)-0.5 || p > float64(order)+0.5 {
			t.Errorf("stretched Dirichlet D2 order %d: observed order %.2f", order, p)
		}
	}
	// Quadrature: Neumann ends keep every point, Dirichlet ends drop the
	// end values (0 for the functions integrated there).
	var qerr [2]float64
	for r, n := range []int{41, 81} {
		g, _ := NewIntervalPoints(stretchedPoints(n), NeumannEnd, NeumannEnd)
		w, x := g.QuadWeights(), g.X()
		lin, ex := 0.0, 0.0
		for k := range w {
			lin += w[k] * (3*x[k] - 1)
			ex += w[k] * math.Exp(x[k])
		}
		if math.Abs(lin-0.5) > 1e-14 {
			t.Errorf("∫₀¹ (3x − 1) dx = %.16g on %d stretched points, want 0.5", lin, n)
		}
		qerr[r] = math.Abs(ex - (math.E - 1))
		gd, _ := NewIntervalPoints(stretchedPoints(n), DirichletEnd, DirichletEnd)
		wd, xd := gd.QuadWeights(), gd.X()
		s := 0.0
		for k := range wd {
			s += wd[k] * xd[k] * (1 - xd[k])
		}
		if math.Abs(s-1.0/6) > 1e-3 {
			t.Errorf("∫₀¹ x(1 − x) dx = %.6g with Dirichlet ends, want 1/6", s)
		}
	}
	if p := math.Log2(qerr[0] / qerr[1]); math.Abs(p-2) > 0.2 {
		t.Errorf("trapezoid on stretched points: observed order %.2f (errors %.3g, %.3g)", p, qerr[0], qerr[1])
	}
	// Errors: points that do not increase, too few, periodic.
	for _, x := range [][]float64{{0, 0.5, 0.5, 1}, {0, 0.6, 0.4, 1}, {0, 1}, {0, math.NaN(), 1}} {
		if _, err := NewIntervalPoints(x, DirichletEnd, DirichletEnd); err == nil {
			t.Errorf("points %v accepted", x)
		}
	}
	if _, err := NewIntervalPoints(stretchedPoints(9), PeriodicEnd, PeriodicEnd); err == nil {
		t.Error("periodic stretched grid accepted")
	}
}

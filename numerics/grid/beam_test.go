package grid

import (
	"math"
	"testing"
)

// bisect returns the root of f in [lo, hi] (f changes sign there).
func bisect(f func(float64) float64, lo, hi float64) float64 {
	flo := f(lo)
	for range 200 {
		mid := (lo + hi) / 2
		if fm := f(mid); (fm < 0) == (flo < 0) {
			lo, flo = mid, fm
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

// Beam eigenvalues. Closed forms (Euler–Bernoulli beam on [0, L], u”” =
// μu): simply supported at both ends μ_k = (kπ/L)⁴; clamped at both ends
// μ = (β/L)⁴ with cos β cosh β = 1; clamped at 0 and supported at L,
// tan β = tanh β. The roots of the characteristic equations are found here
// by bisection on brackets of one root each (an independent computation).
// The matrices must approach μ at order 2.
func TestBeamEigenvalues(t *testing.T) {
	const L = 2.0
	cc := func(b float64) float64 { return math.Cos(b)*math.Cosh(b) - 1 }
	cs := func(b float64) float64 { return math.Tan(b) - math.Tanh(b) }
	cases := []struct {
		name string
		beam [2]Support
		beta []float64
	}{
		{"supported", [2]Support{Supported, Supported}, []float64{math.Pi, 2 * math.Pi, 3 * math.Pi}},
		{"clamped", [2]Support{Clamped, Clamped}, []float64{bisect(cc, 4, 5), bisect(cc, 7.5, 8), bisect(cc, 10.5, 11.5)}},
		{"clamped–supported", [2]Support{Clamped, Supported}, []float64{bisect(cs, 3.5, 4.5), bisect(cs, 6.5, 7.4), bisect(cs, 9.5, 10.9)}},
		{"supported–clamped", [2]Support{Supported, Clamped}, []float64{bisect(cs, 3.5, 4.5), bisect(cs, 6.5, 7.4), bisect(cs, 9.5, 10.9)}},
	}
	for _, cs := range cases {
		var errs [2]float64
		for r, n := range []int{41, 81} {
			g, _ := NewInterval(0, L, n, DirichletEnd, DirichletEnd)
			d4, _, err := g.Deriv(4, 2, cs.beam)
			if err != nil {
				t.Fatal(err)
			}
			got := eigReal(t, dense(t, d4), 1e-8)
			for k, b := range cs.beta {
				mu := math.Pow(b/L, 4)
				errs[r] = math.Max(errs[r], math.Abs(got[k]-mu)/mu)
			}
		}
		p := math.Log2(errs[0] / errs[1])
		t.Logf("%s: relative errors %.3g, %.3g, observed order %.2f", cs.name, errs[0], errs[1], p)
		if p < 1.8 || p > 2.3 {
			t.Errorf("%s: observed order %.2f (errors %.3g, %.3g)", cs.name, p, errs[0], errs[1])
		}
	}
	// Supported ends: the matrix is D2² exactly.
	g, _ := NewInterval(0, 1, 12, DirichletEnd, DirichletEnd)
	d4, _, _ := g.Deriv(4, 2, [2]Support{Supported, Supported})
	d2, _ := g.D2(2)
	a, b := dense(t, d4), dense(t, d2)
	b.Mul(b, b)
	r, c := a.Dims()
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			if math.Abs(a.At(i, j)-b.At(i, j)) > 1e-9*math.Abs(b.At(i, i)) {
				t.Fatalf("supported D4 differs from D2² at (%d, %d): %g, %g", i, j, a.At(i, j), b.At(i, j))
			}
		}
	}
	// Neumann ends and order 4 are refused.
	if _, _, err := g.Deriv(4, 4, [2]Support{}); err == nil {
		t.Error("order 4 beam accepted")
	}
	gn, _ := NewInterval(0, 1, 12, NeumannEnd, DirichletEnd)
	if _, _, err := gn.Deriv(4, 2, [2]Support{}); err == nil {
		t.Error("Neumann end accepted for a fourth derivative")
	}
}

// Third and fourth derivatives: observed order of the truncation error
// max_j |(D u)_j + lifting − u^(m)(x_j)| (Taylor: order p means O(h^p)).
// m = 3 with Dirichlet data: u = e^{x/2} cos x = Re e^{(1/2 + i)x}, so
// u”' = Re (1/2 + i)³ e^{(1/2 + i)x}. Periodic m = 3, 4: u = exp(sin x)
// (derivatives by the chain rule, written out below). A supported beam
// with data: u = sin(πx) + 2x, whose u” vanishes at both ends.
func TestThirdFourthObservedOrder(t *testing.T) {
	d3 := func(x float64) float64 {
		z := complex(0.5, 1)
		w := z * z * z * complexExp(z*complex(x, 0))
		return real(w)
	}
	u := func(x float64) float64 { return math.Exp(x/2) * math.Cos(x) }
	for _, order := range []int{2, 4} {
		var errs [2]float64
		for r, n := range []int{41, 81} {
			g, _ := NewInterval(0, 1, n, DirichletEnd, DirichletEnd)
			d, lift, err := g.Deriv(3, order, [2]Support{})
			if err != nil {
				t.Fatal(err)
			}
			x := g.X()
			v := make([]float64, len(x))
			for k, xv := range x {
				v[k] = u(xv)
			}
			got := make([]float64, len(x))
			d.Apply(got, v)
			for k, xv := range x {
				errs[r] = math.Max(errs[r], math.Abs(got[k]+lift[0][k]*u(0)+lift[1][k]*u(1)-d3(xv)))
			}
		}
		if p := math.Log2(errs[0] / errs[1]); math.Abs(p-float64(order)) > 0.3 {
			t.Errorf("D3 order %d with Dirichlet data: observed order %.2f (errors %.3g, %.3g)", order, p, errs[0], errs[1])
		}
	}
	// Periodic, u = exp(sin x): with s = sin x, c = cos x,
	// u''' = (c³ − 3sc − c) u and u'''' = (c⁴ − 6sc² + 3s² − 4c² + s) u.
	for _, m := range []int{3, 4} {
		for _, order := range []int{2, 4} {
			var errs [2]float64
			for r, n := range []int{40, 80} {
				g, _ := NewInterval(0, 2*math.Pi, n, PeriodicEnd, PeriodicEnd)
				d, _, err := g.Deriv(m, order, [2]Support{})
				if err != nil {
					t.Fatal(err)
				}
				x := g.X()
				v := make([]float64, len(x))
				for k, xv := range x {
					v[k] = math.Exp(math.Sin(xv))
				}
				got := make([]float64, len(x))
				d.Apply(got, v)
				for k, xv := range x {
					s, c := math.Sin(xv), math.Cos(xv)
					want := (c*c*c - 3*s*c - c) * v[k]
					if m == 4 {
						want = (c*c*c*c - 6*s*c*c + 3*s*s - 4*c*c + s) * v[k]
					}
					errs[r] = math.Max(errs[r], math.Abs(got[k]-want))
				}
			}
			if p := math.Log2(errs[0] / errs[1]); math.Abs(p-float64(order)) > 0.2 {
				t.Errorf("periodic D%d order %d: observed order %.2f", m, order, p)
			}
		}
	}
	// A supported beam with data: u = sin(πx) + 2x has u'' = 0 at both
	// ends, u(0) = 0, u(1) = 2 and u'''' = π⁴ sin(πx).
	var errs [2]float64
	for r, n := range []int{41, 81} {
		g, _ := NewInterval(0, 1, n, DirichletEnd, DirichletEnd)
		d, lift, _ := g.Deriv(4, 2, [2]Support{Supported, Supported})
		x := g.X()
		v := make([]float64, len(x))
		for k, xv := range x {
			v[k] = math.Sin(math.Pi*xv) + 2*xv
		}
		got := make([]float64, len(x))
		d.Apply(got, v)
		for k, xv := range x {
			errs[r] = math.Max(errs[r], math.Abs(got[k]+lift[1][k]*2-math.Pow(math.Pi, 4)*math.Sin(math.Pi*xv)))
		}
	}
	if p := math.Log2(errs[0] / errs[1]); math.Abs(p-2) > 0.3 {
		t.Errorf("supported beam with data: observed order %.2f (errors %.3g, %.3g)", p, errs[0], errs[1])
	}
}

func complexExp(z complex128) complex128 {
	e := math.Exp(real(z))
	return complex(e*math.Cos(imag(z)), e*math.Sin(imag(z)))
}

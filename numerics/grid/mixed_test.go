package grid

import (
	"math"
	"sort"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// eigReal returns the eigenvalues of a real matrix whose spectrum is real,
// sorted increasingly; it fails on an imaginary part above tol·|λ|.
func eigReal(t *testing.T, m *mat.Dense, tol float64) []float64 {
	t.Helper()
	var e mat.Eigen
	if !e.Factorize(m, mat.EigenNone) {
		t.Fatal("Eigen failed")
	}
	var out []float64
	for _, v := range e.Values(nil) {
		if math.Abs(imag(v)) > tol*math.Abs(real(v)) {
			t.Fatalf("complex eigenvalue %v", v)
		}
		out = append(out, real(v))
	}
	sort.Float64s(out)
	return out
}

// A different condition at each end. Closed form: −u” = λu, u(0) = 0,
// u'(L) = 0 has λ_k = ((k − ½)π/L)², k = 1, 2, …, eigenfunctions
// sin((k − ½)πx/L). The order-2 ghost-point matrix on the unknowns
// x_1..x_{n−1} has the same eigenvectors sampled, with eigenvalues
// −4/h² sin²((k − ½)πh/(2L)) exactly (the sampled sine is symmetric about
// x = L, which is what the ghost row imposes).
func TestDirichletNeumannSpectrum(t *testing.T) {
	const L = 2.0
	for _, sides := range [][2]End{{DirichletEnd, NeumannEnd}, {NeumannEnd, DirichletEnd}} {
		g, err := NewInterval(0, L, 33, sides[0], sides[1])
		if err != nil {
			t.Fatal(err)
		}
		d2, _ := g.D2(2)
		var want []float64
		for k := 1; k <= g.Size(); k++ {
			s := math.Sin((float64(k) - 0.5) * math.Pi * g.H / (2 * L))
			want = append(want, -4/(g.H*g.H)*s*s)
		}
		compare(t, "Dirichlet–Neumann order 2", eigReal(t, dense(t, d2), 1e-10), want, 1e-11)
	}
	// Both orders converge to −((k − ½)π/L)² at their order (the lowest
	// five modes; observed order log2 of the error ratio on h and h/2). The
	// one-sided closures of order 4 have large error constants: the order
	// approaches 4 from below (3.41 at n = 41→81, measured).
	for _, order := range []int{2, 4} {
		var errs [2]float64
		for r, n := range []int{81, 161} {
			g, _ := NewInterval(0, L, n, DirichletEnd, NeumannEnd)
			d2, _ := g.D2(order)
			got := eigReal(t, dense(t, d2), 1e-8)
			for k := 1; k <= 5; k++ {
				exact := -math.Pow((float64(k)-0.5)*math.Pi/L, 2)
				errs[r] = math.Max(errs[r], math.Abs(got[len(got)-k]-exact)/math.Abs(exact))
			}
		}
		p := math.Log2(errs[0] / errs[1])
		t.Logf("Dirichlet–Neumann order %d: relative errors %.3g, %.3g, observed order %.2f", order, errs[0], errs[1], p)
		if p < float64(order)-0.3 || p > float64(order)+0.5 {
			t.Errorf("Dirichlet–Neumann order %d: observed order %.2f (errors %.3g, %.3g)", order, p, errs[0], errs[1])
		}
	}
	// Robin at the right end, αu + βu' = 0 with α = β = 1, Dirichlet at 0
	// on [0, 1]: eigenfunctions sin(μx) with u'(1) = −u(1), so
	// μ cos μ + sin μ = 0, i.e. tan μ = −μ. Its roots are found
	// here by bisection on (π/2 + (k−1)π, kπ) (each bracket holds exactly one:
	// tan μ + μ runs from −∞ to kπ there), an independent computation of the
	// closed form's characteristic equation.
	var errs [2]float64
	for r, n := range []int{81, 161} {
		g, _ := NewInterval(0, 1, n, DirichletEnd, RobinEnd(1, 1))
		d2, _ := g.D2(4)
		got := eigReal(t, dense(t, d2), 1e-8)
		for k := 1; k <= 4; k++ {
			lo, hi := math.Pi/2+float64(k-1)*math.Pi+1e-12, float64(k)*math.Pi
			for range 200 {
				mid := (lo + hi) / 2
				if math.Tan(mid)+mid < 0 {
					lo = mid
				} else {
					hi = mid
				}
			}
			exact := -lo * lo
			errs[r] = math.Max(errs[r], math.Abs(got[len(got)-k]-exact)/math.Abs(exact))
		}
	}
	p := math.Log2(errs[0] / errs[1])
	t.Logf("Dirichlet–Robin order 4: relative errors %.3g, %.3g, observed order %.2f", errs[0], errs[1], p)
	if p < 3.5 || p > 4.5 {
		t.Errorf("Dirichlet–Robin order 4: observed order %.2f (errors %.3g, %.3g)", p, errs[0], errs[1])
	}
}

// Boundary data lifted into a forcing: for u = e^{x/2} cos x (testFunc),
// which satisfies no homogeneous condition, the right-hand sides g of the
// end conditions are computed from u and its slope (Taylor: an order-p
// formula has error O(h^p)), and D u + left·g_left + right·g_right must
// approach u^(m) at the unknowns at the formula's order. Rows at Neumann
// and Robin end points of the order-2 D2 are one order less accurate
// locally (as in TestObservedOrder) and are left out.
func TestLiftObservedOrder(t *testing.T) {
	ends := map[string]End{"dirichlet": DirichletEnd, "neumann": NeumannEnd,
		"robin": RobinEnd(2, -0.5), "robin-dirichlet": RobinEnd(3, 0), "robin-neumann": RobinEnd(0, 4)}
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
						g, err := NewInterval(0, 1, n, le, re)
						if err != nil {
							t.Fatal(err)
						}
						d, _ := g.diff(m, order)
						left, right, err := g.Lift(m, order)
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
								continue
							}
							_, du, d2u := testFunc(xv)
							want := du
							if m == 2 {
								want = d2u
							}
							errs[r] = math.Max(errs[r], math.Abs(got[k]+left[k]*gl+right[k]*gr-want))
						}
					}
					p := math.Log2(errs[0] / errs[1])
					if math.Abs(p-float64(order)) > 0.3 {
						t.Errorf("%s–%s D%d order %d with data: observed order %.2f (errors %.3g, %.3g)", ln, rn, m, order, p, errs[0], errs[1])
					}
				}
			}
		}
	}
}

package objects

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"semiflow/lang/syntax"
	"semiflow/lang/value"
	"semiflow/numerics/expo"
	"semiflow/numerics/grid"
	"semiflow/numerics/linop"
)

func interval(t *testing.T, a, b float64, n int, e grid.End, order int) *Grid {
	t.Helper()
	iv, err := grid.NewInterval(a, b, n, e, e)
	if err != nil {
		t.Fatal(err)
	}
	return &Grid{Kind: KindInterval, Interval: iv, Order: order}
}

func cheb(t *testing.T, a, b float64, n int) *Grid {
	t.Helper()
	c, err := grid.NewChebyshev(a, b, n)
	if err != nil {
		t.Fatal(err)
	}
	return &Grid{Kind: KindChebyshev, Cheb: c}
}

// Closed forms: ∫_{-1}^{1} (1 − x²) dx = 4/3 and ∫_{-1}^{1} (1 − x²) x² dx = 4/15;
// on [0, 2] the first integral is (b−a)/2 · 4/3 = 4/3 after the map x = 1 + s.
// Clenshaw–Curtis with N + 1 points integrates polynomials of degree ≤ N exactly.
func TestClenshawCurtisClosedForms(t *testing.T) {
	for _, n := range []int{4, 5, 8, 13} {
		g := cheb(t, -1, 1, n)
		x, w := g.X1(), g.QuadWeights()
		var i1, i2 float64
		for k := range x {
			i1 += w[k] * (1 - x[k]*x[k])
			i2 += w[k] * (1 - x[k]*x[k]) * x[k] * x[k]
		}
		if math.Abs(i1-4.0/3) > 1e-14 {
			t.Errorf("N=%d: ∫(1−x²) = %.16g, want 4/3", n, i1)
		}
		if math.Abs(i2-4.0/15) > 1e-14 {
			t.Errorf("N=%d: ∫(1−x²)x² = %.16g, want 4/15", n, i2)
		}
	}
	g := cheb(t, 0, 2, 10)
	x, w := g.X1(), g.QuadWeights()
	var s float64
	for k := range x {
		s += w[k] * x[k] * (2 - x[k])
	}
	if math.Abs(s-4.0/3) > 1e-14 {
		t.Errorf("∫₀² x(2−x) dx = %.16g, want 4/3", s)
	}
}

func TestTensorCoordsAndWeights(t *testing.T) {
	gx := interval(t, 0, 1, 5, grid.DirichletEnd, 2)
	gy := cheb(t, -1, 1, 6)
	g := NewTensor(gx, gy)
	x, y := g.Coords()
	if g.Size() != 3*5 || len(x) != 15 || len(y) != 15 {
		t.Fatalf("size %d, coords %d %d", g.Size(), len(x), len(y))
	}
	xs, ys := gx.X1(), gy.X1()
	for ix := range xs {
		for iy := range ys {
			k := ix*len(ys) + iy
			if x[k] != xs[ix] || y[k] != ys[iy] {
				t.Fatalf("k=%d: (%g, %g), want (%g, %g)", k, x[k], y[k], xs[ix], ys[iy])
			}
		}
	}
	// Closed form: ∫∫ sin(πx)(1 − y²) over [0,1]×[−1,1] = (2/π)(4/3); the
	// trapezoidal rule in x has error O(h²).
	w := g.QuadWeights()
	s := 0.0
	for k := range w {
		s += w[k] * math.Sin(math.Pi*x[k]) * (1 - y[k]*y[k])
	}
	if want := 2 / math.Pi * 4 / 3; math.Abs(s-want) > 0.05 {
		t.Errorf("tensor quadrature %g, want %g", s, want)
	}
}

// Closed form: the eigenvalues of the Chebyshev D² with Dirichlet ends
// converge to −(kπ/2)² on [−1, 1]; the trace of the interior D² with N = 32
// matches Σ_k λ_k only roughly, so check instead D² applied to the
// polynomial (1 − x²)x, exact for degree ≤ N: u” = −6x.
func TestChebyshevDerivExactOnPolynomials(t *testing.T) {
	g := cheb(t, -1, 1, 10)
	d2, err := Deriv(g, 2, "x")
	if err != nil {
		t.Fatal(err)
	}
	x := g.X1()
	u := make([]float64, len(x))
	for i, v := range x {
		u[i] = (1 - v*v) * v
	}
	out := make([]float64, len(x))
	d2.Apply(out, u)
	for i, v := range x {
		if math.Abs(out[i]+6*v) > 1e-11 {
			t.Errorf("x=%g: u'' = %g, want %g", v, out[i], -6*v)
		}
	}
}

// Closed form: on a tensor grid, D_x ⊗ I applied to u(x, y) = x y² (Neumann
// ends keep the boundary points) gives y² exactly for second-order central
// differences (exact on quadratics in x).
func TestDerivAlongAxes(t *testing.T) {
	gx := interval(t, 0, 1, 6, grid.PeriodicEnd, 2)
	gy := interval(t, 0, 2, 7, grid.DirichletEnd, 2)
	g := NewTensor(gx, gy)
	x, y := g.Coords()
	for _, along := range []string{"x", "y"} {
		d, err := Deriv(g, 2, along)
		if err != nil {
			t.Fatal(err)
		}
		// Reference: the 1-D operator applied line by line.
		one, _ := Deriv(gx, 2, "x")
		if along == "y" {
			one, _ = Deriv(gy, 2, "x")
		}
		u := make([]float64, len(x))
		for k := range u {
			u[k] = math.Sin(2*math.Pi*x[k]) + y[k]*y[k]*x[k]
		}
		got := make([]float64, len(u))
		d.Apply(got, u)
		nx, ny := gx.Size(), gy.Size()
		for line := 0; line < map[string]int{"x": ny, "y": nx}[along]; line++ {
			var idx []int
			if along == "x" {
				for ix := 0; ix < nx; ix++ {
					idx = append(idx, ix*ny+line)
				}
			} else {
				for iy := 0; iy < ny; iy++ {
					idx = append(idx, line*ny+iy)
				}
			}
			in := make([]float64, len(idx))
			for i, k := range idx {
				in[i] = u[k]
			}
			want := make([]float64, len(idx))
			one.Apply(want, in)
			for i, k := range idx {
				if math.Abs(got[k]-want[i]) > 1e-9*(1+math.Abs(want[i])) {
					t.Fatalf("along %s, line %d, entry %d: %g, want %g", along, line, i, got[k], want[i])
				}
			}
		}
	}
	if _, err := Deriv(gx, 2, "y"); err == nil {
		t.Error("along y on a 1-D grid accepted")
	}
	if _, err := Deriv(gx, 5, "x"); err == nil {
		t.Error("k = 3 accepted")
	}
}

func denseOf(t *testing.T, op linop.Operator) *mat.Dense {
	t.Helper()
	d, err := linop.ToDense(op)
	if err != nil {
		t.Fatal(err)
	}
	return d
}

func randDense(r *rand.Rand, n int) *Operator {
	m := value.NewMatrix(n, n)
	for i := range m.Data {
		m.Data[i] = r.NormFloat64()
	}
	return FromMatrix(m)
}

// Operator algebra against dense references, and structure preservation.
func TestAlgebra(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	g := interval(t, 0, 1, 12, grid.DirichletEnd, 2)
	d2op, _ := Deriv(g, 2, "x")
	d1op, _ := Deriv(g, 1, "x")
	S := &Operator{Op: d2op, Grid: g, Label: "D2"}
	S1 := &Operator{Op: d1op, Grid: g, Label: "D1"}
	M := randDense(r, 10)
	cases := []struct {
		name string
		op   syntax.Token
		x, y *Operator
		want func(a, b *mat.Dense) *mat.Dense
		kind string
	}{
		{"sparse+sparse", syntax.ADD, S, S1, func(a, b *mat.Dense) *mat.Dense { var c mat.Dense; c.Add(a, b); return &c }, "*linop.CSR"},
		{"sparse−dense", syntax.SUB, S, M, func(a, b *mat.Dense) *mat.Dense { var c mat.Dense; c.Sub(a, b); return &c }, "*linop.Sum"},
		{"dense·dense", syntax.MUL, M, M, func(a, b *mat.Dense) *mat.Dense { var c mat.Dense; c.Mul(a, b); return &c }, "*linop.Dense"},
		{"sparse·sparse", syntax.MUL, S, S1, func(a, b *mat.Dense) *mat.Dense { var c mat.Dense; c.Mul(a, b); return &c }, "*linop.CSR"},
		{"dense·sparse", syntax.MUL, M, S, func(a, b *mat.Dense) *mat.Dense { var c mat.Dense; c.Mul(a, b); return &c }, "*linop.Product"},
	}
	for _, c := range cases {
		v, err := c.x.Binary(c.op, c.y, false)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		got := v.(*Operator)
		want := c.want(denseOf(t, c.x.Op), denseOf(t, c.y.Op))
		if !mat.EqualApprox(denseOf(t, got.Op), want, 1e-12) {
			t.Errorf("%s: wrong result", c.name)
		}
		if k := typeName(got.Op); k != c.kind {
			t.Errorf("%s: stored as %s, want %s", c.name, k, c.kind)
		}
	}
	// s(X ⊕ Y) = (sX) ⊕ (sY) stays a Kronecker sum, so propagate can use it.
	k, err := KronSum(S, M)
	if err != nil {
		t.Fatal(err)
	}
	if k.Grid != nil {
		t.Error("kronsum of a grid operator and a matrix got a tensor grid")
	}
	v, _ := k.Binary(syntax.MUL, value.Num(0.5), true)
	half := v.(*Operator)
	if _, ok := half.Op.(*linop.KronSum); !ok {
		t.Fatalf("0.5*(X⊕Y) stored as %s", typeName(half.Op))
	}
	var want mat.Dense
	want.Scale(0.5, denseOf(t, k.Op))
	if !mat.EqualApprox(denseOf(t, half.Op), &want, 1e-14) {
		t.Error("0.5*(X⊕Y) wrong")
	}
	// Errors name both sizes.
	small := randDense(r, 3)
	if _, err := S.Binary(syntax.ADD, small, false); err == nil || !strings.Contains(err.Error(), "10×10 and 3×3") {
		t.Errorf("size mismatch message: %v", err)
	}
	if _, err := S.Binary(syntax.QUO, value.Num(0), false); err == nil {
		t.Error("A/0 accepted")
	}
	if v, err := S.Binary(syntax.QUO, value.Num(2), true); v != nil || err == nil {
		t.Error("2/A accepted")
	}
}

func typeName(op linop.Operator) string {
	switch op.(type) {
	case *linop.CSR:
		return "*linop.CSR"
	case *linop.Dense:
		return "*linop.Dense"
	case *linop.Sum:
		return "*linop.Sum"
	case *linop.Product:
		return "*linop.Product"
	case *linop.KronSum:
		return "*linop.KronSum"
	}
	return "other"
}

func TestAsOperator(t *testing.T) {
	m := &value.Matrix{Rows: 2, Cols: 2, Data: []float64{1, 2, 3, 4}}
	a, err := AsOperator(m)
	if err != nil || a.Type() != "operator" {
		t.Fatal(a, err)
	}
	m.Data[0] = 100 // the operator holds a copy
	out := make([]float64, 2)
	a.Op.Apply(out, []float64{1, 0})
	if out[0] != 1 || out[1] != 3 {
		t.Errorf("A e₀ = %v, want [1 3]", out)
	}
	if b, _ := AsOperator(a); b != a {
		t.Error("an operator is not returned as it is")
	}
	if _, err := AsOperator(&value.Matrix{Rows: 1, Cols: 2, Data: []float64{1, 2}}); err == nil {
		t.Error("non-square matrix accepted")
	}
	if _, err := AsOperator(value.Num(1)); err == nil {
		t.Error("number accepted")
	}
}

func solve(t *testing.T, a linop.Operator, u0, times []float64) *expo.Solution {
	t.Helper()
	s, err := expo.Propagate(t.Context(), a, u0, times, expo.Options{Tol: 1e-8})
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// The display of a solution: summary and per-time tables in text and HTML,
// and a figure for 1-D grids, 2-D grids and operators without a grid.
func TestSolutionDisplay(t *testing.T) {
	g := interval(t, 0, 1, 21, grid.DirichletEnd, 2)
	d2, _ := Deriv(g, 2, "x")
	x := g.X1()
	u0 := make([]float64, len(x))
	for i, v := range x {
		u0[i] = math.Sin(math.Pi * v)
	}
	s := &Solution{S: solve(t, d2, u0, []float64{0, 0.05, 0.1}), Grid: g, Problem: "u' = A u", Label: "Δ"}
	txt := s.String()
	for _, want := range []string{"method", "dense", "why", "tolerance", "error estimate", "matrix–vector products", "shifted solves", "time taken", "cross-check", "3 output times", "0.05"} {
		if !strings.Contains(txt, want) {
			t.Errorf("text lacks %q:\n%s", want, txt)
		}
	}
	mime := s.MIME()
	if h, _ := mime["text/html"].(string); !strings.Contains(h, "<table>") || !strings.Contains(h, "<th>error estimate</th>") {
		t.Errorf("html: %.200s", h)
	}
	svg, _ := mime["image/svg+xml"].(string)
	if !strings.HasPrefix(strings.TrimSpace(svg), "<svg") && !strings.Contains(svg, "<svg") {
		t.Fatalf("no SVG figure: %.100s", svg)
	}
	if !strings.Contains(svg, "t = 0.05") {
		t.Error("figure lacks the legend of the profile at t = 0.05")
	}
	if v := s.Index(2).(*value.Vec); len(v.R) != len(x) || v.R[10] >= u0[10] {
		t.Errorf("sol[2] = %v", v)
	}

	// 2-D: a heat map of the last time.
	g2 := NewTensor(interval(t, 0, 1, 7, grid.DirichletEnd, 2), interval(t, 0, 1, 6, grid.DirichletEnd, 2))
	lap, _ := Laplacian(g2)
	s2 := &Solution{S: solve(t, lap, constVec(g2.Size()), []float64{0.01}), Grid: g2, Problem: "u' = A u", Label: "Δ"}
	if svg, _ := s2.MIME()["image/svg+xml"].(string); !strings.Contains(svg, "<rect") {
		t.Error("2-D figure has no heat-map cells")
	}
	// No grid, few components: components against t.
	q := mat.NewDense(2, 2, []float64{-3, 3, 1, -1})
	s3 := &Solution{S: solve(t, linop.NewDense(q), []float64{1, 0}, []float64{0, 0.5, 1}), Problem: "u' = A u", Label: "Q"}
	if svg, _ := s3.MIME()["image/svg+xml"].(string); !strings.Contains(svg, `u<tspan dy="0.3em" font-size="70%">1</tspan>`) { // u_1, subscript drawn
		t.Error("figure of a small system lacks the component legend")
	}
}

func constVec(n int) []float64 {
	u := make([]float64, n)
	for i := range u {
		u[i] = 1
	}
	return u
}

func TestOperatorAndGridHTML(t *testing.T) {
	g := interval(t, 0, 1, 5, grid.DirichletEnd, 2)
	d2, _ := Deriv(g, 2, "x")
	a := &Operator{Op: d2, Grid: g, Label: "D2"}
	h := a.MIME()["text/html"].(string)
	// Closed form: tridiag(16, −32, 16) has ‖A‖₁ = ‖A‖∞ = 64.
	for _, want := range []string{"3×3", "sparse, 7 nonzeros", "<td>64</td>", "dirichlet"} {
		if !strings.Contains(h, want) {
			t.Errorf("operator HTML lacks %q: %s", want, h)
		}
	}
	if h := NewTensor(g, g).MIME()["text/html"].(string); !strings.Contains(h, "<td>9</td>") {
		t.Errorf("grid HTML %s", h)
	}
}

func TestProfile(t *testing.T) {
	p := interval(t, 0, 1, 4, grid.PeriodicEnd, 2)
	x, v := p.Profile([]float64{1, 2, 3, 4})
	if len(x) != 5 || x[4] != 1 || v[4] != 1 || x[1] != 0.25 {
		t.Errorf("periodic profile %v %v", x, v)
	}
	d := interval(t, 0, 1, 5, grid.DirichletEnd, 2)
	x, v = d.Profile([]float64{1, 2, 3})
	if len(x) != 5 || v[0] != 0 || v[4] != 0 || v[2] != 2 {
		t.Errorf("dirichlet profile %v %v", x, v)
	}
	c := cheb(t, -1, 1, 4)
	x, v = c.Profile([]float64{1, 2, 3}) // unknowns at cos(π/4), 0, cos(3π/4)
	if x[0] != -1 || x[4] != 1 || v[0] != 0 || v[4] != 0 || v[1] != 3 || v[3] != 1 {
		t.Errorf("chebyshev profile %v %v", x, v)
	}
}

// An operator of at most ShownEntries rows and columns lists its entries
// (A e_j column by column) in its text and as a second HTML table; a larger
// one does not. The Kronecker sum [[0, 1], [2, 3]] ⊕ [[4]] is the 2×2
// matrix [[4, 1], [2, 7]] (X ⊗ I₁ + I₂ ⊗ Y with Y = 4).
func TestSmallOperatorEntries(t *testing.T) {
	x := &Operator{Op: linop.NewDense(mat.NewDense(2, 2, []float64{0, 1, 2, 3})), Label: "X"}
	y := &Operator{Op: linop.NewDense(mat.NewDense(1, 1, []float64{4})), Label: "Y"}
	k := &Operator{Op: linop.NewKronSum(x.Op, y.Op), Label: "X ⊕ Y"}
	if s := k.String(); !strings.HasSuffix(s, "\n  entries {4, 1 |\n           2, 7}") {
		t.Errorf("text = %q", s)
	}
	h := k.MIME()["text/html"].(string)
	if strings.Count(h, "<table>") != 2 || !strings.Contains(h, "<td>7</td>") {
		t.Errorf("html = %q", h)
	}
	big := &Operator{Op: linop.NewDense(mat.NewDense(ShownEntries+1, 1, nil)), Label: "tall"}
	if strings.Contains(big.String(), "entries") || strings.Count(big.MIME()["text/html"].(string), "<table>") != 1 {
		t.Errorf("a %d×1 operator lists its entries", ShownEntries+1)
	}
}

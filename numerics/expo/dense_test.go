package expo

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// refData is testdata/expo/ref.json, written by testdata/expo/make_ref.py
// with Debian's scipy and mpmath.
type refData struct {
	Expm []struct {
		Name  string
		N     int
		A     [][]float64
		Scipy [][]float64
		Mp    [][]float64
	}
	Expmv []struct {
		Name  string
		N     int
		Rows  []int
		Cols  []int
		Vals  []float64
		B     []float64
		Times []float64
		Scipy [][]float64
		Dense [][]float64
		Exact [][]float64
	}
}

func loadRef(t *testing.T) *refData {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "expo", "ref.json"))
	if err != nil {
		t.Fatal(err)
	}
	var r refData
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatal(err)
	}
	return &r
}

func denseFrom(rows [][]float64) *mat.Dense {
	n := len(rows)
	m := mat.NewDense(n, len(rows[0]), nil)
	for i, r := range rows {
		for j, v := range r {
			m.Set(i, j, v)
		}
	}
	return m
}

// relErr returns ‖X − Y‖_max / ‖Y‖_max.
func relErr(x, y mat.Matrix) float64 {
	var d mat.Dense
	d.Sub(x, y)
	return mat.Norm(&d, math.Inf(1)) / mat.Norm(y, math.Inf(1))
}

func expOf(t *testing.T, a mat.Matrix) *mat.Dense {
	t.Helper()
	var e mat.Dense
	if _, err := Exp(&e, a); err != nil {
		t.Fatal(err)
	}
	return &e
}

func TestExpClosedForms2x2(t *testing.T) {
	// closed form: exp([[0,θ],[−θ,0]]) = [[cos θ, sin θ],[−sin θ, cos θ]].
	for _, th := range []float64{1e-8, 0.3, 1, 10, 100, 1000} {
		a := mat.NewDense(2, 2, []float64{0, th, -th, 0})
		want := mat.NewDense(2, 2, []float64{math.Cos(th), math.Sin(th), -math.Sin(th), math.Cos(th)})
		// Rotation by large θ: the error grows like θ·u (conditioning of e^A in θ).
		if e := relErr(expOf(t, a), want); e > 1e-15*math.Max(1, th)*4 {
			t.Errorf("rotation θ=%g: rel err %g", th, e)
		}
	}
	// closed form: exp of the Jordan block [[λ,1],[0,λ]] is e^λ[[1,1],[0,1]].
	for _, l := range []float64{-30, -1, 0, 2, 20} {
		a := mat.NewDense(2, 2, []float64{l, 1, 0, l})
		el := math.Exp(l)
		want := mat.NewDense(2, 2, []float64{el, el, 0, el})
		if e := relErr(expOf(t, a), want); e > 4e-16 {
			t.Errorf("Jordan λ=%g: rel err %g", l, e)
		}
	}
	// closed form: exp([[1,b],[0,−1]]) = [[e, b·sinh 1],[0, 1/e]].
	for _, b := range []float64{0, 1, 1e3, 1e5, 1e8} {
		a := mat.NewDense(2, 2, []float64{1, b, 0, -1})
		want := mat.NewDense(2, 2, []float64{math.E, b * math.Sinh(1), 0, 1 / math.E})
		got := expOf(t, a)
		for i := 0; i < 2; i++ {
			for j := 0; j < 2; j++ {
				w := want.At(i, j)
				if math.Abs(got.At(i, j)-w) > 4e-16*math.Abs(w) {
					t.Errorf("[[1,b],[0,-1]] b=%g entry (%d,%d) = %v want %v", b, i, j, got.At(i, j), w)
				}
			}
		}
	}
}

func TestExpMolerVanLoan(t *testing.T) {
	// Moler & Van Loan, SIAM Review 45 (2003), example A = [[−49,24],[−64,31]].
	// Closed form from its eigen-decomposition: eigenvalues −1 and −17 with
	// eigenvectors (1,2) and (3,4), so e^A = V diag(e^{−1}, e^{−17}) V⁻¹.
	a := mat.NewDense(2, 2, []float64{-49, 24, -64, 31})
	e1, e17 := math.Exp(-1), math.Exp(-17)
	// V = [[1,3],[2,4]], V⁻¹ = [[−2, 1.5],[1, −0.5]].
	want := mat.NewDense(2, 2, []float64{
		-2*e1 + 3*e17, 1.5*e1 - 1.5*e17,
		-4*e1 + 4*e17, 3*e1 - 2*e17,
	})
	// Tolerance: u·‖A‖₁ times a modest factor (conditioning of e^A).
	if e := relErr(expOf(t, a), want); e > 50*unitRoundoff*113 {
		t.Errorf("Moler–Van Loan: rel err %g", e)
	}
}

func TestExpPascal(t *testing.T) {
	// Closed form: the lower triangular Pascal matrix P_ij = C(i,j) is
	// exp(L) with L the subdiagonal matrix L_{i+1,i} = i+1 (Call & Velleman,
	// Amer. Math. Monthly 1993). L is nilpotent, so e^L is a polynomial.
	for _, n := range []int{5, 10, 16} {
		l := mat.NewDense(n, n, nil)
		for i := 1; i < n; i++ {
			l.Set(i, i-1, float64(i))
		}
		got := expOf(t, l)
		for i := 0; i < n; i++ {
			c := 1.0
			for j := 0; j <= i; j++ {
				if math.Abs(got.At(i, j)-c) > 1e-15*c*float64(n) {
					t.Errorf("Pascal n=%d (%d,%d) = %v want %v", n, i, j, got.At(i, j), c)
				}
				c = c * float64(i-j) / float64(j+1)
			}
			for j := i + 1; j < n; j++ {
				if got.At(i, j) != 0 {
					t.Errorf("Pascal n=%d (%d,%d) = %v want 0", n, i, j, got.At(i, j))
				}
			}
		}
	}
}

func TestExpMarkovTwoState(t *testing.T) {
	// closed form: the generator [[−a, a],[b, −b]] has
	// e^{tQ} = 1/(a+b) [[b + a e^{−(a+b)t}, a − a e^{−(a+b)t}], [b − b e^{−(a+b)t}, a + b e^{−(a+b)t}]].
	a, b, tt := 3.0, 0.5, 0.7
	q := mat.NewDense(2, 2, []float64{-a * tt, a * tt, b * tt, -b * tt})
	r := math.Exp(-(a + b) * tt)
	s := a + b
	want := mat.NewDense(2, 2, []float64{(b + a*r) / s, (a - a*r) / s, (b - b*r) / s, (a + b*r) / s})
	if e := relErr(expOf(t, q), want); e > 4e-16 {
		t.Errorf("two-state chain: rel err %g", e)
	}
}

func TestExpHeatSineModes(t *testing.T) {
	// closed form: the Dirichlet second difference D on n interior points,
	// h = 1/(n+1), has eigenvectors sin(kπ j h) with eigenvalues
	// −4/h² sin²(kπh/2), so e^{tD} maps each sine mode to e^{tλ_k} times itself.
	n := 40
	h := 1 / float64(n+1)
	tt := 0.01
	d := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		d.Set(i, i, -2*tt/(h*h))
		if i > 0 {
			d.Set(i, i-1, tt/(h*h))
			d.Set(i-1, i, tt/(h*h))
		}
	}
	e := expOf(t, d)
	for _, k := range []int{1, 3, 10} {
		v := mat.NewVecDense(n, nil)
		for j := 0; j < n; j++ {
			v.SetVec(j, math.Sin(float64(k)*math.Pi*float64(j+1)*h))
		}
		lam := -4 / (h * h) * math.Pow(math.Sin(float64(k)*math.Pi*h/2), 2)
		var w mat.VecDense
		w.MulVec(e, v)
		g := math.Exp(tt * lam)
		for j := 0; j < n; j++ {
			if math.Abs(w.AtVec(j)-g*v.AtVec(j)) > 1e-14 {
				t.Fatalf("mode %d: entry %d = %v want %v", k, j, w.AtVec(j), g*v.AtVec(j))
			}
		}
	}
}

func TestExpReference(t *testing.T) {
	// Reference: mpmath.expm at 60 digits and scipy.linalg.expm, from
	// testdata/expo/make_ref.py; matrices include Ward (1977) tests 1, 3, 4
	// and the badly scaled 3×3 of Al-Mohy & Higham (2009).
	ref := loadRef(t)
	for _, c := range ref.Expm {
		a := denseFrom(c.A)
		got := expOf(t, a)
		exact := denseFrom(c.Mp)
		// Tolerance from the condition of e^A: u·‖A‖ times a modest factor,
		// and never stricter than the error of scipy's own result.
		scipyErr := relErr(denseFrom(c.Scipy), exact)
		tol := math.Max(50*unitRoundoff*math.Max(1, mat.Norm(a, 1)), 10*scipyErr)
		if c.Name == "badly scaled 3x3" {
			tol = 1e-12 // scipy's error here is 7e-14
		}
		if e := relErr(got, exact); e > tol {
			t.Errorf("%s: rel err %g (tol %g, scipy %g)", c.Name, e, tol, scipyErr)
		} else {
			t.Logf("%s: rel err %.2g, scipy %.2g", c.Name, e, scipyErr)
		}
	}
}

func TestExpShapePanics(t *testing.T) {
	defer func() {
		if r := recover(); r != ErrShape {
			t.Fatalf("recover() = %v, want ErrShape", r)
		}
	}()
	var e mat.Dense
	Exp(&e, mat.NewDense(2, 3, nil))
}

func TestExpNonFinite(t *testing.T) {
	var e mat.Dense
	if _, err := Exp(&e, mat.NewDense(2, 2, []float64{1, math.NaN(), 0, 1})); err == nil {
		t.Fatal("NaN entry: want error")
	}
}

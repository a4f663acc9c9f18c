package steady

import (
	"context"
	"encoding/json"
	"errors"
	"math"
	"math/cmplx"
	"os"
	"sort"
	"strconv"
	"testing"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/grid"
	"semiflow/numerics/linop"
)

type bratuRef struct {
	Source string `json:"source"`
	Bratu  []struct {
		Lambda   float64 `json:"lambda"`
		Branch   string  `json:"branch"`
		Theta    string  `json:"theta"`
		UQuarter string  `json:"u_quarter"`
		UHalf    string  `json:"u_half"`
	} `json:"bratu"`
	Discrete []struct {
		Lambda    float64   `json:"lambda"`
		N         int       `json:"n"`
		UMax      float64   `json:"u_max"`
		Rightmost []float64 `json:"rightmost"`
		Spread    float64   `json:"spread"`
	} `json:"discrete"`
}

func loadRef(t *testing.T) bratuRef {
	t.Helper()
	b, err := os.ReadFile("../../testdata/steady/ref.json")
	if err != nil {
		t.Fatal(err)
	}
	var r bratuRef
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatal(err)
	}
	return r
}

func num(t *testing.T, s string) float64 {
	x, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return x
}

// laplacian returns the second-order Dirichlet Laplacian on n interior
// points of [0, 1] and the points.
func laplacian(t testing.TB, n int) (*linop.CSR, []float64) {
	t.Helper()
	g, err := grid.NewInterval(0, 1, n+2, grid.End{Kind: grid.Dirichlet}, grid.End{Kind: grid.Dirichlet})
	if err != nil {
		t.Fatal(err)
	}
	d2, err := g.D2(2)
	if err != nil {
		t.Fatal(err)
	}
	return d2, g.X()
}

// bratuTerm is N(u) = λ e^u, entry by entry, with its complex form.
func bratuTerm(lam float64) Term {
	return Term{
		Eval: func(u, dst []float64) error {
			for i, x := range u {
				dst[i] = lam * math.Exp(x)
			}
			return nil
		},
		EvalComplex: func(z, dst []complex128) (bool, error) {
			for i, x := range z {
				dst[i] = complex(lam, 0) * cmplx.Exp(x)
			}
			return true, nil
		},
	}
}

func guessOf(x []float64, amp float64) []float64 {
	u := make([]float64, len(x))
	for i, xi := range x {
		u[i] = amp * math.Sin(math.Pi*xi)
	}
	return u
}

// The discrete Bratu steady state against scipy's (root + Newton polish
// with a dense solve; testdata/steady/make_ref.py) and the rightmost
// eigenvalues of the Jacobian at it against numpy's eigvalsh.
func TestBratuDiscreteAgainstScipy(t *testing.T) {
	ref := loadRef(t)
	for _, d := range ref.Discrete {
		t.Run(strconv.Itoa(d.N), func(t *testing.T) {
			a, _ := laplacian(t, d.N)
			res, err := Solve(context.Background(), a, nil, bratuTerm(d.Lambda), make([]float64, d.N), Options{Tol: 1e-10})
			if err != nil {
				t.Fatal(err)
			}
			if !res.TolMet {
				t.Errorf("tolerance not met: errest %g", res.ErrEst)
			}
			umax := 0.0
			for _, x := range res.U {
				umax = math.Max(umax, x)
			}
			// scipy's own error: residual 4e-12 times ‖J⁻¹‖∞ ≤ 1/4.6.
			if diff := math.Abs(umax - d.UMax); diff > res.ErrEst+1e-12 {
				t.Errorf("max u = %.17g, scipy %.17g: difference %g beyond errest %g", umax, d.UMax, diff, res.ErrEst)
			}
			if res.Jac.Structure != Diagonal || res.Jac.Engine != ComplexStep {
				t.Errorf("Jacobian %s, want diagonal by complex step", res.Jac.Describe())
			}
			// Eigenvalues of the dense linearisation (symmetric).
			dj, err := linop.ToDense(res.J)
			if err != nil {
				t.Fatal(err)
			}
			var es mat.EigenSym
			if !es.Factorize(mat.NewSymDense(d.N, dj.RawMatrix().Data), false) {
				t.Fatal("EigenSym failed")
			}
			ev := es.Values(nil)
			sort.Sort(sort.Reverse(sort.Float64Slice(ev)))
			for k, want := range d.Rightmost {
				tol := 1e-10*math.Abs(ev[len(ev)-1]) + d.Spread
				if math.Abs(ev[k]-want) > tol {
					t.Errorf("λ_%d = %.15g, numpy %.15g (tol %g)", k, ev[k], want, tol)
				}
			}
		})
	}
}

// The closed form u = −2 ln(cosh((x−½)θ/2)/cosh(θ/4)), θ from mpmath: the
// discrete states converge to it at the second order of the differences
// (error ratio 4 when h halves), on both branches of λ = 1 and on λ = 3.
func TestBratuClosedForm(t *testing.T) {
	ref := loadRef(t)
	for _, b := range ref.Bratu {
		t.Run(b.Branch+strconv.FormatFloat(b.Lambda, 'g', -1, 64), func(t *testing.T) {
			uHalf := num(t, b.UHalf)
			amp := 0.5
			if b.Branch == "upper" {
				amp = 4 // a guess near the upper branch
			}
			var errs []float64
			for _, n := range []int{99, 199, 399} {
				a, x := laplacian(t, n)
				res, err := Solve(context.Background(), a, nil, bratuTerm(b.Lambda), guessOf(x, amp), Options{Tol: 1e-12})
				if err != nil {
					t.Fatal(err)
				}
				mid := n / 2
				if math.Abs(x[mid]-0.5) > 1e-15 {
					t.Fatalf("x[%d] = %g, not ½", mid, x[mid])
				}
				errs = append(errs, math.Abs(res.U[mid]-uHalf))
			}
			for k := 1; k < len(errs); k++ {
				if r := errs[k-1] / errs[k]; r < 3.8 || r > 4.2 {
					t.Errorf("error ratio %g when h halves (errors %v), want ≈ 4", r, errs)
				}
			}
			// The h² term: |u''''|·h²/12 bounds the scale of the error.
			if errs[2] > 1e-3*uHalf {
				t.Errorf("error %g at h = 1/400", errs[2])
			}
		})
	}
}

// Newton's quadratic convergence: from the guess 4 sin(πx) to the upper
// branch, the updates ‖δ_k‖∞ (≈ the error of u_k) fall with order about 2,
// δ_{k+1} ≈ C δ_k² with C steady, while they are well above rounding.
func TestNewtonQuadratic(t *testing.T) {
	a, x := laplacian(t, 199)
	res, err := Solve(context.Background(), a, nil, bratuTerm(1), guessOf(x, 4), Options{Tol: 1e-13})
	if err != nil {
		t.Fatal(err)
	}
	var d []float64
	for _, s := range res.Steps {
		if s.Damping == 1 && s.Update > 1e-11 {
			d = append(d, s.Update)
		}
	}
	if len(d) < 4 {
		t.Fatalf("only %d full steps above rounding: %v", len(d), d)
	}
	best := 0.0
	var cs []float64
	for k := 2; k < len(d); k++ {
		best = math.Max(best, math.Log(d[k]/d[k-1])/math.Log(d[k-1]/d[k-2]))
	}
	for k := 1; k < len(d); k++ {
		cs = append(cs, d[k]/(d[k-1]*d[k-1]))
	}
	sort.Float64s(cs)
	if best < 1.8 || cs[len(cs)-1] > 10*cs[0] {
		t.Errorf("order %g, constants δ_{k+1}/δ_k² %v from updates %v: not quadratic", best, cs, d)
	}
	t.Logf("updates %v, order %.2f, constants %v", d, best, cs)
}

// Structure detection: a term coupling neighbours (inside A's pattern)
// gets a sparse Jacobian, a nonlocal one a dense Jacobian, a term without
// complex form differences; each Jacobian checked against the closed-form
// derivative.
func TestJacobianStructures(t *testing.T) {
	n := 30
	a, x := laplacian(t, n)
	u := guessOf(x, 0.7)
	// N_i = u_i u_{i+1} (last: u_{n-1}²): ∂N_i/∂u_i = u_{i+1}, ∂N_i/∂u_{i+1} = u_i.
	neighbour := Term{Eval: func(u, dst []float64) error {
		for i := range u {
			if i+1 < len(u) {
				dst[i] = u[i] * u[i+1]
			} else {
				dst[i] = u[i] * u[i]
			}
		}
		return nil
	}}
	neighbour.EvalComplex = func(z, dst []complex128) (bool, error) {
		for i := range z {
			if i+1 < len(z) {
				dst[i] = z[i] * z[i+1]
			} else {
				dst[i] = z[i] * z[i]
			}
		}
		return true, nil
	}
	nbJ := func(u []float64) *mat.Dense {
		m := mat.NewDense(n, n, nil)
		for i := range u {
			if i+1 < n {
				m.Set(i, i, u[i+1])
				m.Set(i, i+1, u[i])
			} else {
				m.Set(i, i, 2*u[i])
			}
		}
		return m
	}
	// N_i = mean(u): ∂N_i/∂u_j = 1/n, dense.
	mean := Term{Eval: func(u, dst []float64) error {
		s := 0.0
		for _, v := range u {
			s += v
		}
		for i := range dst {
			dst[i] = s / float64(len(u))
		}
		return nil
	}}
	meanJ := func([]float64) *mat.Dense {
		m := mat.NewDense(n, n, nil)
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				m.Set(i, j, 1/float64(n))
			}
		}
		return m
	}
	// N(u) = sin(u) without complex form.
	sine := Term{Eval: func(u, dst []float64) error {
		for i, v := range u {
			dst[i] = math.Sin(v)
		}
		return nil
	}}
	sineJ := func(u []float64) *mat.Dense {
		m := mat.NewDense(n, n, nil)
		for i, v := range u {
			m.Set(i, i, math.Cos(v))
		}
		return m
	}
	cases := []struct {
		name   string
		term   Term
		exact  func([]float64) *mat.Dense
		s      Structure
		e      Engine
		relTol float64
	}{
		{"neighbours", neighbour, nbJ, Pattern, ComplexStep, 1e-14},
		{"mean", mean, meanJ, Full, Differences, 1e-6},
		{"sine", sine, sineJ, Diagonal, Differences, 1e-6},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			d := newDiffer(context.Background(), a, c.term)
			j, err := d.Decide(u)
			if err != nil {
				t.Fatal(err)
			}
			if j.Structure != c.s || j.Engine != c.e {
				t.Fatalf("got %s, want %s by %s", j.Describe(), c.s, c.e)
			}
			got, err := linop.ToDense(j.Op)
			if err != nil {
				t.Fatal(err)
			}
			want := c.exact(u)
			var diff mat.Dense
			diff.Sub(got, want)
			if e := mat.Norm(&diff, math.Inf(1)); e > c.relTol*math.Max(1, mat.Norm(want, math.Inf(1))) {
				t.Errorf("‖J − exact‖∞ = %g", e)
			}
		})
	}
	// A given Jacobian that is wrong (factor 2) is refused.
	wrong := bratuTerm(1)
	wrong.Jacobian = func(u []float64) (linop.Operator, error) {
		d := make([]float64, len(u))
		for i, v := range u {
			d[i] = 2 * math.Exp(v)
		}
		return &linop.Diag{D: d}, nil
	}
	_, err := Solve(context.Background(), a, nil, wrong, u, Options{})
	var je *JacobianError
	if !errors.As(err, &je) {
		t.Errorf("wrong Jacobian: got %v, want a JacobianError", err)
	}
	// The right one is accepted and marked as given.
	right := bratuTerm(1)
	right.Jacobian = func(u []float64) (linop.Operator, error) {
		d := make([]float64, len(u))
		for i, v := range u {
			d[i] = math.Exp(v)
		}
		return &linop.Diag{D: d}, nil
	}
	res, err := Solve(context.Background(), a, nil, right, u, Options{})
	if err != nil || res.Jac.Structure != Given {
		t.Errorf("given Jacobian: %v", err)
	}
}

// Failures are loud: no steady state (λ = 4 is beyond the turning point
// λc ≈ 3.51 of Bratu's problem, so none exists), a singular Jacobian, a
// non-finite guess or term, an interrupt.
func TestFailures(t *testing.T) {
	a, x := laplacian(t, 50)
	_, err := Solve(context.Background(), a, nil, bratuTerm(4), guessOf(x, 0.5), Options{MaxSteps: 30})
	var nc *NoConvergenceError
	var ls *LineSearchError
	if !errors.As(err, &nc) && !errors.As(err, &ls) {
		t.Errorf("λ = 4: got %v, want no convergence", err)
	}
	zero := &linop.Diag{D: make([]float64, 50)}
	_, err = Solve(context.Background(), zero, nil, Term{Eval: func(u, dst []float64) error {
		for i := range dst {
			dst[i] = 1
		}
		return nil
	}}, x, Options{})
	var se *SingularError
	if !errors.As(err, &se) || se.Step != 1 {
		t.Errorf("zero operator, constant term: got %v, want singular at step 1", err)
	}
	bad := append([]float64(nil), x...)
	bad[3] = math.NaN()
	_, err = Solve(context.Background(), a, nil, bratuTerm(1), bad, Options{})
	var nf *NonFiniteError
	if !errors.As(err, &nf) || nf.Index != 3 {
		t.Errorf("NaN guess: got %v", err)
	}
	_, err = Solve(context.Background(), a, nil, bratuTerm(1), make([]float64, 49), Options{})
	if !errors.Is(err, ErrShape) {
		t.Errorf("short guess: got %v", err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	_, err = Solve(ctx, a, nil, bratuTerm(1), x, Options{})
	if !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled: got %v", err)
	}
}

// Colouring on a 2-D five-point pattern: N_k = u_k u_{k+ny} (the neighbour
// in x; the last column squared) couples only unknowns that the Kronecker
// sum couples, so the Jacobian is found on A's pattern, with few colours,
// and equals the closed-form derivative entry by entry.
func TestColouringTensorPattern(t *testing.T) {
	nx, ny := 9, 7
	lx, _ := laplacian(t, nx)
	ly, _ := laplacian(t, ny)
	a := linop.NewKronSum(lx, ly)
	n := nx * ny
	eval := func(u []complex128, dst []complex128) {
		for k := range u {
			if k+ny < n {
				dst[k] = u[k] * u[k+ny]
			} else {
				dst[k] = u[k] * u[k]
			}
		}
	}
	term := Term{
		Eval: func(u, dst []float64) error {
			z, w := make([]complex128, n), make([]complex128, n)
			for i, x := range u {
				z[i] = complex(x, 0)
			}
			eval(z, w)
			for i := range w {
				dst[i] = real(w[i])
			}
			return nil
		},
		EvalComplex: func(z, dst []complex128) (bool, error) { eval(z, dst); return true, nil },
	}
	u := probe(n)
	d := newDiffer(context.Background(), a, term)
	j, err := d.Decide(u)
	if err != nil {
		t.Fatal(err)
	}
	if j.Structure != Pattern || len(d.colours) > 13 {
		t.Fatalf("%s with %d colours; want A's pattern with at most 13 (a distance-2 colouring of the five-point star)", j.Describe(), len(d.colours))
	}
	got, err := linop.ToDense(j.Op)
	if err != nil {
		t.Fatal(err)
	}
	for r := 0; r < n; r++ {
		for c := 0; c < n; c++ {
			want := 0.0
			switch {
			case r+ny < n && c == r:
				want = u[r+ny]
			case r+ny < n && c == r+ny:
				want = u[r]
			case r+ny >= n && c == r:
				want = 2 * u[r]
			}
			if math.Abs(got.At(r, c)-want) > 1e-15 {
				t.Fatalf("J[%d, %d] = %g, want %g", r, c, got.At(r, c), want)
			}
		}
	}
	t.Logf("%d unknowns, %d colours", n, len(d.colours))
}

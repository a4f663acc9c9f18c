package solve

import (
	"context"
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// residual returns ‖(zI − A) x − b‖∞ / (‖zI − A‖∞ ‖x‖∞ + ‖b‖∞), computed
// with the operator's own real products (the reference).
func residual(a linop.Operator, z complex128, x, b []complex128) float64 {
	n := len(x)
	xr, xi := make([]float64, n), make([]float64, n)
	for i, v := range x {
		xr[i], xi[i] = real(v), imag(v)
	}
	ar, ai := make([]float64, n), make([]float64, n)
	a.Apply(ar, xr)
	a.Apply(ai, xi)
	an, ok := linop.NormInf(a)
	if !ok {
		d, _ := linop.ToDense(a)
		an = mat.Norm(d, math.Inf(1))
	}
	var r, xn, bn float64
	for i := range x {
		res := z*x[i] - complex(ar[i], ai[i]) - b[i]
		r = math.Max(r, cmplx.Abs(res))
		xn = math.Max(xn, cmplx.Abs(x[i]))
		bn = math.Max(bn, cmplx.Abs(b[i]))
	}
	return r / ((an+cmplx.Abs(z))*xn + bn)
}

// residualH is residual for (zI − A)ᴴ x = b, i.e. (z̄ I − Aᵀ) x = b.
func residualH(a linop.Operator, z complex128, x, b []complex128) float64 {
	return residual(&linop.Adjoint{A: a}, cmplx.Conj(z), x, b)
}

func randC(rng *rand.Rand, n int) []complex128 {
	b := make([]complex128, n)
	for i := range b {
		b[i] = complex(rng.NormFloat64(), rng.NormFloat64())
	}
	return b
}

func randBand(rng *rand.Rand, n, kl, ku int) *linop.CSR {
	var is, js []int
	var vs []float64
	for i := 0; i < n; i++ {
		for j := max(0, i-kl); j <= min(n-1, i+ku); j++ {
			is, js = append(is, i), append(js, j)
			v := rng.NormFloat64()
			if i == j {
				// A moderate diagonal keeps random band matrices well
				// conditioned (random triangular ones are exponentially
				// ill-conditioned) while leaving room for row interchanges.
				v += float64(2*(kl+ku+2)) * float64(1-2*(i%2))
			}
			vs = append(vs, v)
		}
	}
	return linop.NewCSRFromTriplets(n, n, is, js, vs)
}

func checkSolver(t *testing.T, name string, a linop.Operator, z complex128, s ShiftedSolver) {
	t.Helper()
	n, _ := a.Dims()
	rng := rand.New(rand.NewPCG(11, 12))
	for rep := 0; rep < 3; rep++ { // one factorisation, several right-hand sides
		b := randC(rng, n)
		x := make([]complex128, n)
		if err := s.Solve(x, b); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if r := residual(a, z, x, b); r > 1e-12 {
			t.Errorf("%s: relative residual %g", name, r)
		}
		if h, ok := s.(AdjointSolver); ok {
			if err := h.SolveH(x, b); err != nil {
				t.Fatalf("%s: SolveH: %v", name, err)
			}
			if r := residualH(a, z, x, b); r > 1e-12 {
				t.Errorf("%s: SolveH relative residual %g", name, r)
			}
		}
	}
	// Against gonum's dense real LU (mat.LU) on the real 2n×2n form of
	// zI − A: (zI − A)(u + iv) = b ⇔ [[Re z·I − A, −Im z·I],
	// [Im z·I, Re z·I − A]] [u; v] = [Re b; Im b].
	if n <= 400 {
		d, err := linop.ToDense(a)
		if err != nil {
			t.Fatal(err)
		}
		big := mat.NewDense(2*n, 2*n, nil)
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				big.Set(i, j, -d.At(i, j))
				big.Set(n+i, n+j, -d.At(i, j))
			}
			big.Set(i, i, big.At(i, i)+real(z))
			big.Set(n+i, n+i, big.At(n+i, n+i)+real(z))
			big.Set(i, n+i, -imag(z))
			big.Set(n+i, i, imag(z))
		}
		b := randC(rng, n)
		rb := mat.NewVecDense(2*n, nil)
		for i, v := range b {
			rb.SetVec(i, real(v))
			rb.SetVec(n+i, imag(v))
		}
		var ref mat.VecDense
		var lu mat.LU
		lu.Factorize(big)
		cond := lu.Cond()
		if err := lu.SolveVecTo(&ref, false, rb); err != nil {
			t.Fatalf("%s: gonum reference: %v", name, err)
		}
		x := make([]complex128, n)
		s.Solve(x, b)
		var diff, norm float64
		for i := range x {
			r := complex(ref.AtVec(i), ref.AtVec(n+i))
			diff = math.Max(diff, cmplx.Abs(x[i]-r))
			norm = math.Max(norm, cmplx.Abs(r))
		}
		// Both solutions are backward stable: they differ by about cond·ε.
		if diff > 1e-13*cond*norm+1e-14*norm {
			t.Errorf("%s: differs from gonum's dense solve by %g (relative %g, condition %g)", name, diff, diff/norm, cond)
		}
	}
	// In-place solve agrees with the out-of-place one.
	b := randC(rng, n)
	x := make([]complex128, n)
	s.Solve(x, b)
	s.Solve(b, b)
	for i := range x {
		if x[i] != b[i] {
			t.Errorf("%s: in-place solve differs", name)
			break
		}
	}
}

func TestDenseShifted(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, n := range []int{1, 2, 7, 60, 150} { // 150: several panels, parallel update
		m := mat.NewDense(n, n, nil)
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				m.Set(i, j, rng.NormFloat64())
			}
		}
		a := linop.NewDense(m)
		for _, z := range []complex128{0.3 + 1i, -2, 1e3i} {
			s, err := NewShifted(a, z)
			if err != nil {
				t.Fatal(err)
			}
			checkSolver(t, "dense", a, z, s)
		}
	}
}

func TestBandShifted(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, c := range []struct{ n, kl, ku int }{{1, 0, 0}, {5, 1, 1}, {50, 2, 3}, {200, 4, 1}, {30, 0, 2}, {30, 3, 0}} {
		a := randBand(rng, c.n, c.kl, c.ku)
		for _, z := range []complex128{0.5 - 0.25i, 3} {
			s, err := NewZBandShifted(a, z)
			if err != nil {
				t.Fatal(err)
			}
			checkSolver(t, "band", a, z, s)
		}
		// Real shifted band solve against the real residual.
		r, err := NewBandShifted(a, 1.5)
		if err != nil {
			t.Fatal(err)
		}
		b := make([]float64, c.n)
		for i := range b {
			b[i] = rng.NormFloat64()
		}
		for _, h := range []bool{false, true} {
			x := make([]float64, c.n)
			if h {
				r.SolveH(x, b)
			} else {
				r.Solve(x, b)
			}
			xc, bc := make([]complex128, c.n), make([]complex128, c.n)
			for i := range x {
				xc[i], bc[i] = complex(x[i], 0), complex(b[i], 0)
			}
			res := residual(a, 1.5, xc, bc)
			if h {
				res = residualH(a, 1.5, xc, bc)
			}
			if res > 1e-12 {
				t.Errorf("real band n=%d trans=%v: residual %g", c.n, h, res)
			}
		}
	}
}

// A zero diagonal forces a row interchange at every step. Closed form: the
// eigenvalues of tridiag(1, 0, 1) of even order n are 2cos(kπ/(n+1)) ≠ 0, so
// the shift z = 0 is regular.
func TestBandPivoting(t *testing.T) {
	for _, n := range []int{2, 10, 64} {
		var is, js []int
		var vs []float64
		for i := 1; i < n; i++ {
			is, js, vs = append(is, i, i-1), append(js, i-1, i), append(vs, 1, 1)
		}
		a := linop.NewCSRFromTriplets(n, n, is, js, vs)
		s, err := NewZBandShifted(a, 0)
		if err != nil {
			t.Fatal(err)
		}
		swaps := 0
		for j, p := range s.piv {
			if p != j {
				swaps++
			}
		}
		if swaps == 0 {
			t.Errorf("n=%d: no row interchanges", n)
		}
		checkSolver(t, "band pivoting", a, 0, s)
		checkSolver(t, "band pivoting 1+i", a, 1+1i, mustBand(t, a, 1+1i))
	}
}

func mustBand(t *testing.T, a *linop.CSR, z complex128) *ZBand {
	s, err := NewZBandShifted(a, z)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// Closed form: the eigenvalues of the n×n second difference tridiag(1, −2, 1)
// are −4 sin²(kπ/(2(n+1))), k = 1..n. At such a shift every solver must
// report singularity and name z.
func TestSingularShift(t *testing.T) {
	n := 9
	var is, js []int
	var vs []float64
	for i := 0; i < n; i++ {
		is, js, vs = append(is, i), append(js, i), append(vs, -2)
		if i > 0 {
			is, js, vs = append(is, i), append(js, i-1), append(vs, 1)
			is, js, vs = append(is, i-1), append(js, i), append(vs, 1)
		}
	}
	a := linop.NewCSRFromTriplets(n, n, is, js, vs)
	s := math.Sin(3 * math.Pi / (2 * float64(n+1)))
	z := complex(-4*s*s, 0)
	d, _ := a.ToDense()
	for _, m := range []Method{BandMethod, SparseMethod, DenseMethod} {
		var op linop.Operator = a
		if m == DenseMethod {
			op = linop.NewDense(d)
		}
		_, err := NewShiftedContext(t.Context(), op, z, Options{Method: m})
		if !errors.Is(err, ErrSingular) {
			t.Errorf("%v: shift at an eigenvalue gave %v", m, err)
			continue
		}
		if want := FormatComplex(z); !contains(err.Error(), want) {
			t.Errorf("%v: message %q does not name z = %s", m, err, want)
		}
	}
}

func contains(s, sub string) bool {
	return len(sub) == 0 || len(s) >= len(sub) && (s[:len(sub)] == sub || contains(s[1:], sub))
}

func TestDenseProgressCancel(t *testing.T) {
	n := 200
	rng := rand.New(rand.NewPCG(5, 5))
	m := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			m.Set(i, j, rng.NormFloat64())
		}
	}
	a := linop.NewDense(m)
	last := 0
	_, err := NewShiftedContext(context.Background(), a, 1i, Options{Progress: func(done, total int) {
		if total != n || done < last {
			t.Errorf("progress %d/%d after %d", done, total, last)
		}
		last = done
	}})
	if err != nil || last != n {
		t.Fatalf("err %v, last progress %d", err, last)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := NewShiftedContext(ctx, a, 1i, Options{}); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled dense factorisation: %v", err)
	}
}

func TestMemoryGuard(t *testing.T) {
	old := memguard.SetLimit(1 << 20)
	defer memguard.SetLimit(old)
	m := mat.NewDense(400, 400, nil) // 400² real and complex entries need 3.7 MiB
	for i := 0; i < 400; i++ {
		m.Set(i, i, 1)
	}
	_, err := NewShifted(linop.NewDense(m), 2)
	if !errors.Is(err, memguard.ErrTooLarge) || !strings.Contains(err.Error(), "dense 400×400 real copy and complex factorisation of zI − A needs 3.7 MiB") {
		t.Errorf("dense solver beyond the limit: %v", err)
	}
}

// TestDenseShiftedGuarded: a dense shifted factorisation holds the real copy
// of A (8n² B) and the complex matrix it becomes (16n² B) at once. At
// n = 1000 each alone fits in 20 MiB but together they need 22.9 MiB (by
// arithmetic), refused before either is made.
func TestDenseShiftedGuarded(t *testing.T) {
	a := linop.NewDense(mat.NewDense(1000, 1000, nil))
	old := memguard.SetLimit(20 << 20)
	defer memguard.SetLimit(old)
	_, err := NewShiftedContext(context.Background(), a, 1, Options{Method: DenseMethod})
	if !errors.Is(err, memguard.ErrTooLarge) || !strings.Contains(err.Error(), "real copy and complex factorisation of zI − A needs 23 MiB") {
		t.Errorf("dense shifted factorisation: %v, want the guard's refusal of 23 MiB", err)
	}
}

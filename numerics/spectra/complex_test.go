package spectra

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"os"
	"sort"
	"testing"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
)

// complexRef is one case of testdata/complex/complex_ref.json, written by
// make_complex.py from Debian's scipy (eigvals, expm, svdvals) and numpy
// (eigvalsh).
type complexRef struct {
	Name        string
	N           int
	A           refC `json:"a"`
	Eigenvalues refC
	Times       []float64
	Expm        []refC
	Expnorm     []float64
	Points      refC
	Sigmin      []float64
	Numabscissa float64
	Angles      []float64
	Support     []float64
	Closed      *refC `json:"closed_eigenvalues"`
}

type refC struct{ Re, Im []float64 }

func (r refC) values() []complex128 {
	out := make([]complex128, len(r.Re))
	for i := range out {
		out[i] = complex(r.Re[i], r.Im[i])
	}
	return out
}

func loadComplexRef(t *testing.T) []complexRef {
	t.Helper()
	data, err := os.ReadFile("../../testdata/complex/complex_ref.json")
	if err != nil {
		t.Fatal(err)
	}
	var f struct{ Cases []complexRef }
	if err := json.Unmarshal(data, &f); err != nil {
		t.Fatal(err)
	}
	return f.Cases
}

// operator returns A = B + iC as a linop.Complex with dense parts, and ‖A‖_F.
func (r complexRef) operator() (*linop.Complex, float64) {
	n := r.N
	b, c := mat.NewDense(n, n, nil), mat.NewDense(n, n, nil)
	for i := 0; i < n*n; i++ {
		b.Set(i/n, i%n, r.A.Re[i])
		c.Set(i/n, i%n, r.A.Im[i])
	}
	return linop.NewComplex(linop.NewDense(b), linop.NewDense(c)), math.Hypot(mat.Norm(b, 2), mat.Norm(c, 2))
}

// matchDistance pairs each value of got with the nearest unused value of
// want and returns the largest distance.
func matchDistance(got, want []complex128) float64 {
	used := make([]bool, len(want))
	worst := 0.0
	for _, g := range got {
		best, at := math.Inf(1), -1
		for j, w := range want {
			if d := cmplx.Abs(g - w); !used[j] && d < best {
				best, at = d, j
			}
		}
		if at < 0 {
			return math.Inf(1)
		}
		used[at] = true
		worst = math.Max(worst, best)
	}
	return worst
}

func TestComplexSpectrumAgainstScipy(t *testing.T) {
	for _, r := range loadComplexRef(t) {
		t.Run(r.Name, func(t *testing.T) {
			a, normF := r.operator()
			sp, err := DenseSpectrum(a)
			if err != nil {
				t.Fatal(err)
			}
			if len(sp.Values) != r.N {
				t.Fatalf("%d eigenvalues, want n = %d (A's own, not its real form's 2n)", len(sp.Values), r.N)
			}
			maxCond := 0.0
			for _, c := range sp.Cond {
				maxCond = math.Max(maxCond, c)
			}
			// First-order bound Cond·n·u·‖A‖_F, with a factor 10 of slack.
			tol := 10 * maxCond * sp.Rounding
			if d := matchDistance(sp.Values, r.Eigenvalues.values()); !(d <= tol) {
				t.Errorf("eigenvalues differ from scipy.linalg.eigvals by %.3g > %.3g", d, tol)
			}
			if r.Closed != nil {
				// The tridiagonal Toeplitz closed form d + 2√(sp)cos(kπ/(n+1)).
				if d := matchDistance(sp.Values, r.Closed.values()); !(d <= tol) {
					t.Errorf("eigenvalues differ from the closed form by %.3g > %.3g", d, tol)
				}
			}
			// Residuals of the eigenvectors: ‖A x − λ x‖ ≤ n·u·‖A‖_F·(a few).
			n := r.N
			for k := 0; k < n; k++ {
				x := make([]float64, 2*n)
				for i := 0; i < n; i++ {
					v := sp.Right.At(i, k)
					x[i], x[n+i] = real(v), imag(v)
				}
				ax := make([]float64, 2*n)
				a.Apply(ax, x)
				res := 0.0
				for i := 0; i < n; i++ {
					res = math.Hypot(res, cmplx.Abs(complex(ax[i], ax[n+i])-sp.Values[k]*sp.Right.At(i, k)))
				}
				if res > 100*sp.Rounding*math.Max(1, sp.Cond[k]) {
					t.Errorf("λ_%d: residual ‖Ax − λx‖ = %.3g", k, res)
				}
			}
			// Schur form: A Z = Z T with Z unitary.
			s, err := NewSchur(a)
			if err != nil {
				t.Fatal(err)
			}
			if s.N != n {
				t.Fatalf("Schur order %d, want %d", s.N, n)
			}
			worst := 0.0
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					var az, zt, zz complex128
					for k := 0; k < n; k++ {
						az += complex(r.A.Re[i*n+k], r.A.Im[i*n+k]) * s.Z[k*n+j]
						zt += s.Z[i*n+k] * s.T[k*n+j]
						zz += cmplx.Conj(s.Z[k*n+i]) * s.Z[k*n+j]
					}
					if i == j {
						zz--
					}
					worst = math.Max(worst, math.Max(cmplx.Abs(az-zt)/normF, cmplx.Abs(zz)))
				}
			}
			if worst > 1e3*float64(n)*0x1p-53 {
				t.Errorf("Schur form: max(‖AZ − ZT‖/‖A‖_F, ‖ZᴴZ − I‖) entry = %.3g", worst)
			}
			// Resolvent norms at non-real z: σ_min(zI − A) by scipy's svdvals.
			for k, z := range r.Points.values() {
				got := s.SigmaMin(z, 1e-12)
				if math.Abs(got-r.Sigmin[k]) > 1e-8*r.Sigmin[k]+1e-13*normF {
					t.Errorf("σ_min(%v I − A) = %.15g, scipy %.15g", z, got, r.Sigmin[k])
				}
			}
		})
	}
}

func TestComplexRealRoutesAgainstScipy(t *testing.T) {
	for _, r := range loadComplexRef(t) {
		t.Run(r.Name, func(t *testing.T) {
			a, _ := r.operator()
			// ω(A) on the real form: λmax(Φ(H)) = λmax(H), numpy eigvalsh.
			w, err := NumericalAbscissa(a, nil)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(w-r.Numabscissa) > 1e-10*math.Max(1, math.Abs(r.Numabscissa)) {
				t.Errorf("ω(A) = %.15g, numpy %.15g", w, r.Numabscissa)
			}
			// Support of W(A) at the reference angles.
			b, c, _ := a.DenseParts()
			h := newHermPartsComplex(b, c)
			for k, th := range r.Angles {
				got, z, err := h.top(th, true)
				if err != nil {
					t.Fatal(err)
				}
				if math.Abs(got-r.Support[k]) > 1e-10*math.Max(1, math.Abs(got)) {
					t.Errorf("support at θ = %g: %.15g, numpy %.15g", th, got, r.Support[k])
				}
				// The boundary point lies on its supporting line Re(e^{−iθ}z) = support.
				if d := real(cmplx.Exp(complex(0, -th))*z) - got; math.Abs(d) > 1e-9*math.Max(1, math.Abs(got)) {
					t.Errorf("θ = %g: boundary point %v is %.3g off its supporting line", th, z, d)
				}
			}
			// ‖e^{tA}‖₂ on the real form (e^{tΦ(A)} = Φ(e^{tA})), scipy expm + svdvals.
			g, err := GrowthCurve(context.Background(), a, r.Times, &GrowthOptions{NoKreiss: true})
			if err != nil {
				t.Fatal(err)
			}
			for k, tt := range r.Times {
				if math.Abs(g.Norm[k]-r.Expnorm[k]) > 1e-9*r.Expnorm[k] {
					t.Errorf("‖e^{%gA}‖ = %.15g, scipy %.15g", tt, g.Norm[k], r.Expnorm[k])
				}
			}
			// The exponential itself: the left block column of e^{tΦ(A)}.
			phi, _ := a.ToDense()
			for k, tt := range r.Times {
				var ta, e mat.Dense
				ta.Scale(tt, phi)
				if _, err := ExpContext(context.Background(), &e, &ta); err != nil {
					t.Fatal(err)
				}
				n := r.N
				ref := r.Expm[k].values()
				worst, scale := 0.0, 0.0
				for i := 0; i < n; i++ {
					for j := 0; j < n; j++ {
						worst = math.Max(worst, cmplx.Abs(complex(e.At(i, j), e.At(n+i, j))-ref[i*n+j]))
						scale = math.Max(scale, cmplx.Abs(ref[i*n+j]))
					}
				}
				if worst > 1e-11*scale {
					t.Errorf("e^{%gA} differs from scipy expm by %.3g (entries up to %.3g)", tt, worst, scale)
				}
			}
		})
	}
}

func TestComplexQRSmallCases(t *testing.T) {
	// Closed forms: a Jordan block (defective, flagged), a diagonal, a
	// rotation generator (eigenvalues ±i), the skew-Hermitian i·[[2, 1],[1, 2]]
	// (eigenvalues 3i and i).
	cases := []struct {
		name string
		a    [][]complex128
		want []complex128
		ill  bool
	}{
		{"jordan", [][]complex128{{1i, 1, 0}, {0, 1i, 1}, {0, 0, 1i}}, []complex128{1i, 1i, 1i}, true},
		{"diagonal", [][]complex128{{2, 0}, {0, -1 + 1i}}, []complex128{2, -1 + 1i}, false},
		{"rotation", [][]complex128{{0, 1}, {-1, 0}}, []complex128{1i, -1i}, false},
		{"skew-Hermitian", [][]complex128{{2i, 1i}, {1i, 2i}}, []complex128{3i, 1i}, false},
		{"one", [][]complex128{{5 - 2i}}, []complex128{5 - 2i}, false},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			n := len(tc.a)
			b, c := mat.NewDense(n, n, nil), mat.NewDense(n, n, nil)
			for i := range tc.a {
				for j, z := range tc.a[i] {
					b.Set(i, j, real(z))
					c.Set(i, j, imag(z))
				}
			}
			sp, err := DenseSpectrum(linop.NewComplex(linop.NewDense(b), linop.NewDense(c)))
			if err != nil {
				t.Fatal(err)
			}
			got := append([]complex128(nil), sp.Values...)
			want := append([]complex128(nil), tc.want...)
			sort.Slice(got, func(i, j int) bool { return rightOf(got[i], got[j]) })
			sort.Slice(want, func(i, j int) bool { return rightOf(want[i], want[j]) })
			tol := 1e-14
			if tc.ill {
				tol = 1e-4 // a 3×3 Jordan block: rounding u moves λ by u^{1/3}
			}
			if d := matchDistance(got, want); d > tol {
				t.Errorf("eigenvalues %v, want %v", got, want)
			}
			if ill := countTrue(sp.IllCond) > 0; ill != tc.ill {
				t.Errorf("IllCond flagged %v, want %v (Cond %v)", ill, tc.ill, sp.Cond)
			}
		})
	}
}

// TestComplexRightmostClosedForm: the complex convection–diffusion
// operator (a + ib)D₂ + cD₁ on n interior points is tridiagonal Toeplitz
// with eigenvalues d + 2√(sp) cos(kπ/(n+1)) (closed form); its rightmost
// ones from Krylov–Schur on the real form, split into A's parts.
func TestComplexRightmostClosedForm(t *testing.T) {
	const n = 300
	h := 1.0 / (n + 1)
	nu := complex(0.02, 0.05)
	sub, dia, sup := nu/complex(h*h, 0)-complex(1/(2*h), 0), -2*nu/complex(h*h, 0), nu/complex(h*h, 0)+complex(1/(2*h), 0)
	var is, js []int
	var re, im []float64
	for i := 0; i < n; i++ {
		for _, e := range []struct {
			j int
			v complex128
		}{{i - 1, sub}, {i, dia}, {i + 1, sup}} {
			if e.j >= 0 && e.j < n {
				is, js = append(is, i), append(js, e.j)
				re, im = append(re, real(e.v)), append(im, imag(e.v))
			}
		}
	}
	a := linop.NewComplex(linop.NewCSRFromTriplets(n, n, is, js, re), linop.NewCSRFromTriplets(n, n, is, js, im))
	var closed []complex128
	r := cmplx.Sqrt(sub * sup)
	for k := 1; k <= n; k++ {
		closed = append(closed, dia+2*r*complex(math.Cos(float64(k)*math.Pi/(n+1)), 0))
	}
	sort.Slice(closed, func(i, j int) bool { return rightOf(closed[i], closed[j]) })
	// Shift-and-invert, as spectrum(A, count=k) does for a sparse A (plain
	// Krylov–Schur converges too slowly on a diffusion operator).
	for _, si := range []bool{true} {
		o := &EigsOptions{Count: 4}
		if si {
			w, err := NumericalAbscissa(a, nil)
			if err != nil {
				t.Fatal(err)
			}
			o.ShiftInvert, o.Shift = true, w+1e-3*(1+math.Abs(w))
		}
		sp, err := ComplexRightmost(context.Background(), a, o)
		if err != nil {
			t.Fatal(err)
		}
		if len(sp.Values) != 4 {
			t.Fatalf("shift-invert %v: %d values, want 4: %v (%s)", si, len(sp.Values), sp.Values, sp.Accuracy)
		}
		for k, v := range sp.Values {
			// Condition numbers here are modest (the Toeplitz operator is
			// mildly non-normal at this Péclet number): 1e-6 relative.
			if d := cmplx.Abs(v - closed[k]); d > 1e-6*cmplx.Abs(closed[k]) {
				t.Errorf("shift-invert %v: λ_%d = %v, closed form %v", si, k, v, closed[k])
			}
		}
	}
}

// BenchmarkComplexDenseSpectrum: the complex QR algorithm with
// eigenvectors on a random complex matrix, beside the real route (LAPACK's
// Dhseqr through gonum) on a random real matrix of the same order.
func BenchmarkComplexDenseSpectrum(b *testing.B) {
	for _, n := range []int{100, 200, 400} {
		rng := rand.New(rand.NewPCG(uint64(n), 9))
		re, im := mat.NewDense(n, n, nil), mat.NewDense(n, n, nil)
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				re.Set(i, j, rng.NormFloat64())
				im.Set(i, j, rng.NormFloat64())
			}
		}
		b.Run(fmt.Sprintf("complex/n=%d", n), func(b *testing.B) {
			a := linop.NewComplex(linop.NewDense(re), linop.NewDense(im))
			for i := 0; i < b.N; i++ {
				if _, err := DenseSpectrum(a); err != nil {
					b.Fatal(err)
				}
			}
		})
		b.Run(fmt.Sprintf("real/n=%d", n), func(b *testing.B) {
			a := linop.NewDense(re)
			for i := 0; i < b.N; i++ {
				if _, err := DenseSpectrum(a); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// TestComplexNumRangeLanczos: above order 64 the support of W(A) comes
// from Lanczos; it must match λmax of the Hermitian part
// H_θ = (e^{−iθ}A + e^{iθ}A*)/2 formed explicitly (as the real symmetric
// [Re H, −Im H; Im H, Re H]) and solved by gonum's EigenSym.
func TestComplexNumRangeLanczos(t *testing.T) {
	const n = 80
	rng := rand.New(rand.NewPCG(80, 1))
	b, c := mat.NewDense(n, n, nil), mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			b.Set(i, j, rng.NormFloat64())
			c.Set(i, j, rng.NormFloat64())
		}
	}
	h := newHermPartsComplex(b, c)
	for _, th := range []float64{0, 1, 2.5, 4} {
		got, _, err := h.top(th, false)
		if err != nil {
			t.Fatal(err)
		}
		e := cmplx.Exp(complex(0, -th))
		emb := mat.NewSymDense(2*n, nil)
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				aij, aji := complex(b.At(i, j), c.At(i, j)), complex(b.At(j, i), c.At(j, i))
				hij := (e*aij + cmplx.Conj(e*aji)) / 2 // (e^{−iθ}A + e^{iθ}A*)_ij / 2
				if j >= i {
					emb.SetSym(i, j, real(hij))
					emb.SetSym(n+i, n+j, real(hij))
				}
				emb.SetSym(j, n+i, imag(hij)) // lower-left block Im H at (n+i, j)
			}
		}
		var es mat.EigenSym
		if !es.Factorize(emb, false) {
			t.Fatal("EigenSym failed")
		}
		want := es.Values(nil)[2*n-1]
		if math.Abs(got-want) > 1e-9*math.Abs(want) {
			t.Errorf("θ = %g: Lanczos support %.15g, dense %.15g", th, got, want)
		}
	}
}

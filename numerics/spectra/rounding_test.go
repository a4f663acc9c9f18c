package spectra

import (
	"context"
	"errors"
	"math"
	"testing"
	"time"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/roundoff"
)

// periodicCentral is the central difference (u_{i+1} − u_{i−1})/(2h) on n
// periodic points of [0, 1), plus the diagonal shift diag: D is
// skew-symmetric, so the symmetric part of D + diag(c) is diag(c) and
// ω = max c_i exactly (closed form).
func periodicCentral(n int, shift func(i int) float64) *linop.CSR {
	h := 1 / float64(n)
	var ii, jj []int
	var vv []float64
	for i := 0; i < n; i++ {
		ii = append(ii, i, i)
		jj = append(jj, (i+1)%n, (i+n-1)%n)
		vv = append(vv, 1/(2*h), -1/(2*h))
		if shift != nil {
			ii, jj, vv = append(ii, i), append(jj, i), append(vv, shift(i))
		}
	}
	return linop.NewCSRFromTriplets(n, n, ii, jj, vv)
}

// TestNumericalAbscissaSkew: the numerical abscissa of a skew-symmetric
// operator of order 10⁴ is 0 (closed form: (D + Dᵀ)/2 = 0); before, the
// shift-and-invert Lanczos overflowed on the zero symmetric part. Shifted
// by a diagonal, ω is the largest shift (closed form), also through the
// matrix-free Lanczos path.
func TestNumericalAbscissaSkew(t *testing.T) {
	const n = 10000
	d := periodicCentral(n, nil)
	tau := roundoff.Threshold(n, normFrobCSR(d))
	om, err := NumericalAbscissa(d, nil)
	if err != nil {
		t.Fatal(err)
	}
	if roundoff.Sign(om, tau) != 0 {
		t.Errorf("skew: ω = %g, want 0 within τ = %g", om, tau)
	}
	// freeToo: also through the matrix-free Lanczos, which converges
	// slowly on a clustered top of the spectrum (the graded case).
	cases := []struct {
		name    string
		shift   func(int) float64
		want    float64
		freeToo bool
	}{
		{"constant −2.5", func(int) float64 { return -2.5 }, -2.5, true},
		{"graded, max at i = 1234", func(i int) float64 { return -1 - math.Abs(float64(i-1234))/n }, -1, false},
		{"tiny beside ‖D‖", func(i int) float64 { return 1e-9 * math.Cos(float64(i)) }, 1e-9, true},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			a := periodicCentral(n, c.shift)
			tau := roundoff.Threshold(n, normFrobCSR(a))
			om, err := NumericalAbscissa(a, nil)
			if err != nil {
				t.Fatal(err)
			}
			// Shift-and-invert Lanczos stops at relative Ritz residual 1e-12.
			if e := math.Abs(om - c.want); e > tau+1e-10*math.Abs(c.want) {
				t.Errorf("ω = %.17g, want %.17g (closed form); error %.2g > τ = %.2g", om, c.want, e, tau)
			}
			if !c.freeToo {
				return
			}
			// The matrix-free path (products with A and Aᵀ only).
			om2, err := symTopLanczos(bg, noSparse{a}, nil, 400, 1e-10)
			if err != nil {
				t.Fatal(err)
			}
			if e := math.Abs(om2 - c.want); e > tau+1e-9*math.Abs(c.want) {
				t.Errorf("matrix-free: ω = %.17g, want %.17g (closed form); error %.2g", om2, c.want, e)
			}
		})
	}
	// The matrix-free path on the unshifted operator: the symmetric part
	// is zero up to the rounding of (Dx + Dᵀx)/2.
	om, err = symTopLanczos(bg, noSparse{d}, nil, 400, 1e-10)
	if err != nil {
		t.Fatal(err)
	}
	if roundoff.Sign(om, tau) != 0 {
		t.Errorf("matrix-free skew: ω = %g, want 0 within τ = %g", om, tau)
	}
}

// noSparse hides an operator's sparse form.
type noSparse struct{ a linop.Operator }

func (o noSparse) Dims() (int, int)        { return o.a.Dims() }
func (o noSparse) Apply(dst, x []float64)  { o.a.Apply(dst, x) }
func (o noSparse) ApplyT(dst, x []float64) { o.a.ApplyT(dst, x) }

// TestEigCond: the condition of λ = a in [a b; 0 d] is
// √(1 + (b/(a − d))²) (closed form: x = e₁, y = (1, −b/(a − d))... up to
// normalisation), and on a random matrix the conditions from the Schur
// factor agree with those DenseSpectrum gets from gonum's left and right
// eigenvectors (LAPACK Dgeev), an independent computation.
func TestEigCond(t *testing.T) {
	a, b, d := -0.5, 3.0, -2.0
	s, err := NewSchur(op([][]float64{{a, b}, {0, d}}))
	if err != nil {
		t.Fatal(err)
	}
	want := math.Sqrt(1 + (b/(a-d))*(b/(a-d)))
	for k := 0; k < 2; k++ {
		if got := s.eigCond(k); math.Abs(got-want) > 1e-14*want {
			t.Errorf("cond(T_%d%d) = %.17g, want %.17g (closed form)", k, k, got, want)
		}
	}
	m := randomDense(40, 7)
	sp, err := DenseSpectrum(denseOp{m})
	if err != nil {
		t.Fatal(err)
	}
	s, err = NewSchur(denseOp{m})
	if err != nil {
		t.Fatal(err)
	}
	for k, l := range s.Eigenvalues() {
		best := -1
		for j, v := range sp.Values {
			if best < 0 || cmplxAbs(v-l) < cmplxAbs(sp.Values[best]-l) {
				best = j
			}
		}
		got, ref := s.eigCond(k), sp.Cond[best]
		if math.Abs(got-ref) > 1e-8*ref {
			t.Errorf("λ = %v: cond %.10g from the Schur factor, %.10g from Dgeev's vectors", l, got, ref)
		}
	}
}

func cmplxAbs(z complex128) float64 { return math.Hypot(real(z), imag(z)) }

// randomDense is a reproducible n×n matrix with entries in [−1, 1).
func randomDense(n int, seed uint64) *mat.Dense {
	v := make([]float64, n*n)
	xorshiftFill(v, seed)
	for i := range v {
		v[i] = 2*v[i] - 1
	}
	return mat.NewDense(n, n, v)
}

// TestKreissWithinRounding: with α(A) = −1e-17, below the rounding of the
// Schur form (n·u·‖A‖_F × cond ≈ 4e-16 for [−1e-17 1; 0 −1]), the Kreiss
// constant is ∞ within rounding, not the 1e16-sized number a search at
// Re z ≈ 1e-23 would report. With α(A) = −0.01 the search runs, and K
// lies between the closed-form lower bound x‖(x − A)⁻¹‖ at a point of the
// real axis and the Kreiss upper bound by sup ‖e^{tA}‖ (its closed form
// for this 2×2: ‖e^{tA}‖ ≤ 1 + t e^{−0.01t}·… ≤ 1 + 1/(0.99·e) < 2, from
// e^{tA} = [e^{at}, (e^{at} − e^{−t})/(1 + a); 0, e^{−t}]).
func TestKreissWithinRounding(t *testing.T) {
	k, err := Kreiss(bg, op([][]float64{{-1e-17, 1}, {0, -1}}))
	if err != nil {
		t.Fatal(err)
	}
	if !k.ZeroWithinRounding || !math.IsInf(k.K, 1) {
		t.Errorf("α = −1e-17: K = %g, within rounding %v (allowance %g); want ∞ within rounding", k.K, k.ZeroWithinRounding, k.AbscissaTol)
	}
	if !(k.AbscissaTol > 1e-17 && k.AbscissaTol < 1e-14) {
		t.Errorf("allowance %g, want about 4e-16", k.AbscissaTol)
	}
	a := -0.01
	k, err = Kreiss(bg, op([][]float64{{a, 1}, {0, -1}}))
	if err != nil {
		t.Fatal(err)
	}
	if k.ZeroWithinRounding || math.IsInf(k.K, 0) {
		t.Fatalf("α = −0.01: K = %g, within rounding %v", k.K, k.ZeroWithinRounding)
	}
	// Lower bound: x‖(x − A)⁻¹‖₂ ≥ x·|(x − A)⁻¹_{12}| = x/((x − a)(x + 1)) at x = 0.1.
	x := 0.1
	lower := x / ((x - a) * (x + 1))
	// Upper bound: K ≤ sup_t ‖e^{tA}‖₂ ≤ ‖·‖_F ≤ √(1 + 1 + (sup (e^{at} − e^{−t})/(1 + a))²) < √3.
	if !(k.K >= lower*(1-1e-9) && k.K <= math.Sqrt(3)) {
		t.Errorf("K = %g outside [%g, √3]", k.K, lower)
	}
}

// TestNumericalAbscissaInterrupt: the matrix-free Lanczos on a clustered
// top of the spectrum (400 steps with full reorthogonalisation at order
// 10⁴ took 38 s) stops within 0.5 s of a cancellation.
func TestNumericalAbscissaInterrupt(t *testing.T) {
	const n = 10000
	a := noSparse{periodicCentral(n, func(i int) float64 { return -1 - math.Abs(float64(i-1234))/n })}
	ctx, cancel := context.WithCancel(bg)
	go func() { time.Sleep(100 * time.Millisecond); cancel() }()
	start := time.Now()
	_, err := NumericalAbscissaContext(ctx, a, nil)
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("got %v, want context.Canceled", err)
	}
	if el := time.Since(start); el > 600*time.Millisecond {
		t.Errorf("returned %v after the start, %v after the cancellation", el, el-100*time.Millisecond)
	}
}

package pencil

import (
	"context"
	"encoding/json"
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"os"
	"sort"
	"testing"
	"time"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/expo"
	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
	"semiflow/numerics/mmio"
	"semiflow/numerics/roundoff"
	"semiflow/numerics/solve"
	"semiflow/numerics/spectra"
)

var ctx = context.Background()

// tridiag returns the n×n tridiagonal Toeplitz matrix with sub-, main and
// superdiagonal entries a, b, c.
func tridiag(n int, a, b, c float64) *linop.CSR {
	var is, js []int
	var vs []float64
	for i := 0; i < n; i++ {
		if i > 0 {
			is, js, vs = append(is, i), append(js, i-1), append(vs, a)
		}
		is, js, vs = append(is, i), append(js, i), append(vs, b)
		if i < n-1 {
			is, js, vs = append(is, i), append(js, i+1), append(vs, c)
		}
	}
	return linop.NewCSRFromTriplets(n, n, is, js, vs)
}

// tridiagEig returns the eigenvalues b + 2√(ac) cos(kπ/(n+1)), k = 1..n, of
// tridiag(n, a, b, c) (closed form: the eigenvectors are sines).
func tridiagEig(n int, a, b, c float64) []float64 {
	out := make([]float64, n)
	for k := 1; k <= n; k++ {
		out[k-1] = b + 2*math.Sqrt(a*c)*math.Cos(float64(k)*math.Pi/float64(n+1))
	}
	return out
}

func relClose(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if d := math.Abs(got - want); !(d <= tol*math.Abs(want)) {
		t.Errorf("%s = %.15g, want %.15g (relative error %.2g > %.2g)", what, got, want, d/math.Abs(want), tol)
	}
}

// TestStringModesLinearElements: a string of unit tension and density on
// [0, 1], fixed ends, n linear elements' interior nodes: K = (1/h)
// tridiag(−1, 2, −1), consistent mass M = (h/6) tridiag(1, 4, 1). Both are
// Toeplitz with the sine eigenvectors, so the pencil's eigenvalues are
// ω_k² = (6/h²)(1 − cos θ_k)/(2 + cos θ_k), θ_k = kπh (closed form).
func TestStringModesLinearElements(t *testing.T) {
	n := 40
	h := 1 / float64(n+1)
	K := linop.ScaleCSR(1/h, tridiag(n, -1, 2, -1))
	M := linop.ScaleCSR(h/6, tridiag(n, 1, 4, 1))
	want := make([]float64, n)
	for k := 1; k <= n; k++ {
		th := float64(k) * math.Pi * h
		want[k-1] = 6 / (h * h) * (1 - math.Cos(th)) / (2 + math.Cos(th))
	}
	t.Run("firstorder", func(t *testing.T) {
		a, err := NewMass(ctx, M, linop.ScaleCSR(-1, K))
		if err != nil {
			t.Fatal(err)
		}
		sp, err := a.Spectrum(ctx)
		if err != nil {
			t.Fatal(err)
		}
		for k := 0; k < n; k++ { // decreasing real part: −ω_1², −ω_2², …
			relClose(t, "λ", -real(sp.Values[k]), want[k], 1e-12)
		}
	})
	t.Run("secondorder", func(t *testing.T) {
		g, err := NewSecond(ctx, M, nil, K)
		if err != nil {
			t.Fatal(err)
		}
		sp, err := g.Spectrum(ctx)
		if err != nil {
			t.Fatal(err)
		}
		var om []float64
		for _, z := range sp.Values {
			if real(z) != 0 {
				t.Fatalf("undamped eigenvalue %v off the imaginary axis", z)
			}
			if imag(z) > 0 {
				om = append(om, imag(z))
			}
		}
		sort.Float64s(om)
		for k := 0; k < n; k++ {
			relClose(t, "ω", om[k], math.Sqrt(want[k]), 1e-12)
		}
	})
}

// TestBeamModesFourthDifferences: a simply supported Euler–Bernoulli beam
// (EI = ρA = 1, length 1) by fourth differences, K = D², D the second
// difference with u = 0 at both ends (the ghost-point reflection gives
// u″ = 0 there). Its eigenvalues are ((4/h²) sin²(kπh/2))², so
// ω_k = (4/h²) sin²(kπh/2) → (kπ)², the continuum's closed form.
func TestBeamModesFourthDifferences(t *testing.T) {
	n := 63
	h := 1 / float64(n+1)
	D := linop.ScaleCSR(1/(h*h), tridiag(n, 1, -2, 1))
	K := linop.MulCSR(D, D)
	g, err := NewSecond(ctx, linop.ScaledIdentity(n, 1), nil, K)
	if err != nil {
		t.Fatal(err)
	}
	sp, err := g.Spectrum(ctx)
	if err != nil {
		t.Fatal(err)
	}
	var om []float64
	for _, z := range sp.Values {
		if imag(z) > 0 {
			om = append(om, imag(z))
		}
	}
	sort.Float64s(om)
	// A backward-stable symmetric eigensolver moves each ω² = λ(K) by at
	// most about n·u·‖K‖ (Weyl's theorem), ‖K‖ ≤ 16/h⁴: ω_k to a relative
	// n·u·‖K‖/(2ω_k²), 1e-8 for the lowest mode here (common practice, no
	// source). Implementations differ within it: gonum's QR was measured at
	// 1e-12, the system LAPACK's divide and conquer at 4.8e-11.
	normK := 16 / (h * h * h * h)
	for k := 1; k <= n; k++ {
		s := math.Sin(float64(k) * math.Pi * h / 2)
		want := 4 / (h * h) * s * s
		relClose(t, "ω", om[k-1], want, math.Max(1e-12, float64(n)*0x1p-53*normK/(2*want*want)))
	}
	// The lowest modes approach the continuum (kπ)² with the O(h²) error of
	// second differences: ω_k/(kπ)² − 1 ≈ −(kπh)²/12.
	for k := 1; k <= 3; k++ {
		c := math.Pow(float64(k)*math.Pi, 2)
		relClose(t, "ω vs continuum", om[k-1], c, 1.1*math.Pow(float64(k)*math.Pi*h, 2)/12)
	}
}

// rayleighString returns M, C = αM + βK and K of the linear-element string
// of TestStringModesLinearElements, and its ω_k.
func rayleighString(n int, alpha, beta float64) (M, C, K *linop.CSR, om []float64) {
	h := 1 / float64(n+1)
	K = linop.ScaleCSR(1/h, tridiag(n, -1, 2, -1))
	M = linop.ScaleCSR(h/6, tridiag(n, 1, 4, 1))
	C = linop.AddCSR(alpha, M, beta, K)
	for k := 1; k <= n; k++ {
		th := float64(k) * math.Pi * h
		om = append(om, math.Sqrt(6/(h*h)*(1-math.Cos(th))/(2+math.Cos(th))))
	}
	return
}

// TestRayleighDampingModes: with C = αM + βK the modes decouple and mode k
// has ζ_k = α/(2ω_k) + βω_k/2 and λ = −ζ_kω_k ± iω_k√(1 − ζ_k²) (closed
// form; overdamped modes, ζ > 1, have λ = −ζω ± ω√(ζ² − 1)).
func TestRayleighDampingModes(t *testing.T) {
	n := 30
	alpha, beta := 0.8, 2e-4
	M, C, K, om := rayleighString(n, alpha, beta)
	g, err := NewSecond(ctx, M, C, K)
	if err != nil {
		t.Fatal(err)
	}
	sp, err := g.Spectrum(ctx)
	if err != nil {
		t.Fatal(err)
	}
	var want []complex128
	for _, w := range om {
		z := alpha/(2*w) + beta*w/2
		if z < 1 {
			d := w * math.Sqrt(1-z*z)
			want = append(want, complex(-z*w, d), complex(-z*w, -d))
		} else {
			d := w * math.Sqrt(z*z-1)
			want = append(want, complex(-z*w+d, 0), complex(-z*w-d, 0))
		}
	}
	if len(sp.Values) != len(want) {
		t.Fatalf("%d eigenvalues, want %d", len(sp.Values), len(want))
	}
	for _, w := range want {
		best := math.Inf(1)
		for _, z := range sp.Values {
			best = math.Min(best, cmplx.Abs(z-w))
		}
		if best > 1e-9*cmplx.Abs(w) {
			t.Errorf("eigenvalue %v: nearest computed is %.2g away", w, best)
		}
	}
}

// denseOf returns the dense matrix of a by columns.
func denseOf(t *testing.T, a linop.Operator) *mat.Dense {
	d, err := linop.ToDense(a)
	if err != nil {
		t.Fatal(err)
	}
	return d
}

// TestShiftedSolvesAgainstDense: the pencil solves of zI − A and its
// adjoint agree with dense complex LU of the dense zI − A, for a band, a
// sparse (non-banded), a dense and a diagonal mass matrix, real and
// complex shifts.
func TestShiftedSolvesAgainstDense(t *testing.T) {
	n := 24
	rng := rand.New(rand.NewPCG(7, 11))
	band := linop.AddCSR(1, tridiag(n, 1, 6, 1), 0, tridiag(n, 0, 0, 0))
	// A non-banded sparse M: the band plus far corners.
	far := linop.NewCSRFromTriplets(n, n, []int{0, n - 1, 3, n - 4}, []int{n - 1, 0, n - 4, 3}, []float64{0.5, 0.5, 0.25, 0.25})
	sparse := linop.AddCSR(1, band, 1, far)
	dense := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			dense.Set(i, j, rng.Float64()-0.5)
		}
		dense.Set(i, i, dense.At(i, i)+float64(n))
	}
	masses := map[string]linop.Operator{
		"band": band, "sparse": sparse, "dense": linop.NewDense(dense), "diagonal": linop.ScaledIdentity(n, 2.5),
	}
	K := linop.AddCSR(1, tridiag(n, -1, 2, -1), 0.3, tridiag(n, 1, 0, -1)) // non-symmetric
	C := linop.ScaleCSR(0.1, tridiag(n, -1, 3, -1))
	for name, M := range masses {
		for _, z := range []complex128{0.7, complex(-0.3, 2.1)} {
			a, err := NewMass(ctx, M, K)
			if err != nil {
				t.Fatal(name, err)
			}
			g, err := NewSecond(ctx, M, C, K)
			if err != nil {
				t.Fatal(name, err)
			}
			for _, op := range []linop.Operator{a, g} {
				checkShifted(t, name, op, z, rng)
			}
		}
	}
}

func checkShifted(t *testing.T, name string, op linop.Operator, z complex128, rng *rand.Rand) {
	t.Helper()
	d := denseOf(t, op)
	n, _ := d.Dims()
	// Apply and ApplyT against the dense columns.
	x, y, yt := make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range x {
		x[i] = rng.Float64() - 0.5
	}
	op.ApplyT(yt, x)
	var want mat.VecDense
	want.MulVec(d.T(), mat.NewVecDense(n, x))
	for i := range yt {
		if math.Abs(yt[i]-want.AtVec(i)) > 1e-12*(1+math.Abs(want.AtVec(i))) {
			t.Fatalf("%s %T: ApplyT differs from the dense transpose at %d: %g vs %g", name, op, i, yt[i], want.AtVec(i))
		}
	}
	_ = y
	f, err := solve.NewShifted(op, z)
	if err != nil {
		t.Fatal(name, err)
	}
	ref := make([]complex128, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			ref[i*n+j] = -complex(d.At(i, j), 0)
		}
		ref[i*n+i] += z
	}
	rf, err := solve.FactorZDense(n, append([]complex128(nil), ref...))
	if err != nil {
		t.Fatal(err)
	}
	b := make([]complex128, n)
	for i := range b {
		b[i] = complex(rng.Float64()-0.5, rng.Float64()-0.5)
	}
	got, exp := make([]complex128, n), make([]complex128, n)
	if err := f.Solve(got, b); err != nil {
		t.Fatal(err)
	}
	_ = rf.Solve(exp, b)
	cmp(t, name+" Solve", got, exp)
	as, ok := f.(solve.AdjointSolver)
	if !ok {
		t.Fatalf("%s: the pencil solver has no adjoint solve", name)
	}
	if err := as.SolveH(got, b); err != nil {
		t.Fatal(err)
	}
	_ = rf.SolveH(exp, b)
	cmp(t, name+" SolveH", got, exp)
}

func cmp(t *testing.T, what string, got, want []complex128) {
	t.Helper()
	var d, s float64
	for i := range got {
		d = math.Max(d, cmplx.Abs(got[i]-want[i]))
		s = math.Max(s, cmplx.Abs(want[i]))
	}
	if d > 1e-10*s {
		t.Errorf("%s: differs from the dense solve by %.2g (scale %.2g)", what, d, s)
	}
}

// TestRayleighEnergyDecay: a Rayleigh-damped string started in mode k at
// rest has u(t) = q(t) φ_k with q(t) = e^{−ζωt}(cos ω_d t + (ζω/ω_d) sin
// ω_d t), ω_d = ω√(1 − ζ²), and energy E(t) = ½(q'² + ω²q²) φᵀMφ (closed
// form). Propagation (auto, dense, shift-and-invert and resolvent powers)
// must match both.
func TestRayleighEnergyDecay(t *testing.T) {
	alpha, beta := 0.5, 1e-4
	for _, c := range []struct {
		n       int
		auto    string
		methods []string
	}{
		{40, expo.MethodDense, []string{expo.MethodShiftInv}},
		{250, expo.MethodShiftInv, []string{expo.MethodResolvent}},
	} {
		M, C, K, om := rayleighString(c.n, alpha, beta)
		g, err := NewSecond(ctx, M, C, K)
		if err != nil {
			t.Fatal(err)
		}
		n := c.n
		h := 1 / float64(n+1)
		for _, k := range []int{1, 3} {
			w := om[k-1]
			z := alpha/(2*w) + beta*w/2
			wd := w * math.Sqrt(1-z*z)
			x0 := make([]float64, 2*n)
			for j := 0; j < n; j++ {
				x0[j] = math.Sin(float64(k) * math.Pi * float64(j+1) * h)
			}
			e0 := g.Energy(x0)
			times := []float64{0.5, 2}
			for _, method := range append([]string{""}, c.methods...) {
				sol, err := expo.Propagate(ctx, g, x0, times, expo.Options{Method: method, Tol: 1e-9})
				if err != nil {
					t.Fatal(method, err)
				}
				if method == "" && sol.Method != c.auto {
					t.Errorf("n = %d: auto chose %q (%s), want %q", n, sol.Method, sol.Reason, c.auto)
				}
				for i, tt := range times {
					e := math.Exp(-z * w * tt)
					q := e * (math.Cos(wd*tt) + z*w/wd*math.Sin(wd*tt))
					dq := -e * w * w / wd * math.Sin(wd*tt)
					u := sol.Values[i]
					var errU float64
					for j := 0; j < n; j++ {
						errU = math.Max(errU, math.Abs(u[j]-q*x0[j]))
						errU = math.Max(errU, math.Abs(u[n+j]-dq*x0[j]))
					}
					if errU > 1e-7*w {
						t.Errorf("n = %d, mode %d, %q, t = %g: state off the closed form by %.2g", n, k, sol.Method, tt, errU)
					}
					wantE := (dq*dq + w*w*q*q) / (w * w) * e0
					relClose(t, "energy", g.Energy(u), wantE, 1e-6)
				}
			}
		}
	}
}

// TestEnergyDissipative: in the energy inner product the Rayleigh-damped
// G satisfies WG + GᵀW = −2 diag(0, C) ≤ 0, so its numerical abscissa is 0
// (exactly, in exact arithmetic): the computed one must be zero within
// rounding, while the Euclidean one is large.
func TestEnergyDissipative(t *testing.T) {
	M, C, K, _ := rayleighString(20, 0.3, 1e-3)
	g, err := NewSecond(ctx, M, C, K)
	if err != nil {
		t.Fatal(err)
	}
	w, err := g.EnergyWeight()
	if err != nil {
		t.Fatal(err)
	}
	om, err := spectra.NumericalAbscissa(g, w)
	if err != nil {
		t.Fatal(err)
	}
	tau, err := spectra.RoundingThreshold(g, w)
	if err != nil {
		t.Fatal(err)
	}
	if roundoff.Sign(om, tau) != 0 {
		t.Errorf("ω_E(G) = %.3g, not zero within rounding %.3g", om, tau)
	}
	oe, err := spectra.NumericalAbscissa(g, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !(oe > 1) {
		t.Errorf("Euclidean ω(G) = %g: expected the non-normal growth of the plain 2-norm", oe)
	}
	// The energy norm agrees with Energy.
	x := make([]float64, 40)
	for i := range x {
		x[i] = float64(i%7) - 3
	}
	relClose(t, "energy", w.(*linop.BlockWeight).Norm(x)*w.(*linop.BlockWeight).Norm(x)/2, g.Energy(x), 1e-13)
}

func readMM(t *testing.T, name string) *linop.CSR {
	f, err := os.Open("../../testdata/structures/" + name)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	m, err := mmio.Read(f)
	if err != nil {
		t.Fatal(err)
	}
	return m.CSR()
}

// TestCantileverAgainstScipy: the Hermite-element cantilever of
// testdata/structures/make_beam.py, consistent and lumped mass, against
// scipy.linalg.eigh(K, M) on the same matrices (beam_eigh.json).
func TestCantileverAgainstScipy(t *testing.T) {
	var ref struct {
		Consistent []float64 `json:"omega2_consistent"`
		Lumped     []float64 `json:"omega2_lumped"`
		Continuum  []float64 `json:"cantilever_first_three_continuum"`
	}
	b, err := os.ReadFile("../../testdata/structures/beam_eigh.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	K := readMM(t, "beam_K.mtx")
	for _, c := range []struct {
		file string
		want []float64
	}{{"beam_M.mtx", ref.Consistent}, {"beam_Mlumped.mtx", ref.Lumped}} {
		M := readMM(t, c.file)
		a, err := NewMass(ctx, M, linop.ScaleCSR(-1, K))
		if err != nil {
			t.Fatal(err)
		}
		sp, err := a.Spectrum(ctx)
		if err != nil {
			t.Fatal(err)
		}
		n := len(c.want)
		// Both codes reduce by Cholesky, so each ω² is known to about
		// u·‖K‖‖M⁻¹‖ absolutely (ω² spans 7 decades here): relative to
		// ω²_k that is 64·u·ω²_max/ω²_k, the allowance for each side.
		for k := 0; k < n; k++ {
			tol := 2 * 64 * roundoff.Unit * c.want[n-1] / c.want[k]
			got := -real(sp.Values[k])
			relClose(t, c.file+" ω²", got, c.want[k], tol)
		}
	}
	// The consistent-mass model's lowest modes approach the continuum
	// (Hermite cubics converge like h⁴ in ω²).
	M := readMM(t, "beam_M.mtx")
	a, _ := NewMass(ctx, M, linop.ScaleCSR(-1, K))
	sp, _ := a.Spectrum(ctx)
	for k := 0; k < 3; k++ {
		relClose(t, "ω² vs continuum", -real(sp.Values[k]), ref.Continuum[k], 1e-3)
	}
}

// TestBadMass: a singular or indefinite mass matrix is reported.
func TestBadMass(t *testing.T) {
	n := 5
	zero := linop.NewCSRFromTriplets(n, n, []int{0, 1, 2, 3}, []int{0, 1, 2, 3}, []float64{1, 1, 1, 1})
	if _, err := NewMass(ctx, zero, tridiag(n, 1, -2, 1)); !errors.Is(err, ErrSingularMass) {
		t.Errorf("diagonal M with a zero entry: err = %v", err)
	}
	d := mat.NewDense(n, n, nil) // rank one
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			d.Set(i, j, float64((i+1)*(j+1)))
		}
	}
	if _, err := NewSecond(ctx, linop.NewDense(d), nil, tridiag(n, 1, -2, 1)); !errors.Is(err, ErrSingularMass) {
		t.Errorf("rank-one M: err = %v", err)
	}
	// tridiag(1, 2, 1) of order 5 is singular only in exact arithmetic
	// at cos(kπ/6) = −1, never; tridiag(1, 1, 1) has 1 + 2cos(2π/3) = 0.
	if _, err := NewMass(ctx, tridiag(n, 1, 1, 1), tridiag(n, 1, -2, 1)); !errors.Is(err, ErrSingularMass) {
		t.Errorf("singular band M: err = %v", err)
	}
	g, err := NewSecond(ctx, tridiag(n, 2, -1, 2), nil, tridiag(n, -1, 2, -1)) // eigenvalues −1 + 4cos(kπ/6): 2.46, 1, −1, −3, −4.46
	if err != nil {
		t.Fatal(err)
	}
	if _, err := g.EnergyWeight(); !errors.Is(err, ErrNotDefinite) {
		t.Errorf("indefinite M: EnergyWeight err = %v", err)
	}
}

// TestLargeStringStaysSparse: the linear-element string of
// TestStringModesLinearElements with 20000 nodes, lightly Rayleigh-damped:
// the lowest modes by shift-and-invert Krylov–Schur through the quadratic
// pencil, and a stiff propagation, without any dense matrix of the
// system's order (memguard.LargestSide). Closed forms as in
// TestRayleighDampingModes and TestRayleighEnergyDecay. (A fourth-difference
// beam of this order would not do: ‖K‖/λ_min(K) ≈ 16/(πh)⁴ ≈ 3e16 leaves no
// digit of its lowest modes in double precision, whatever the method; the
// propagation then says so through its error estimate.)
func TestLargeStringStaysSparse(t *testing.T) {
	if testing.Short() {
		t.Skip("large")
	}
	n := 20000
	alpha, beta := 0.05, 1e-7
	M, C, K, om := rayleighString(n, alpha, beta)
	memguard.ResetLargest()
	g, err := NewSecond(ctx, M, C, K)
	if err != nil {
		t.Fatal(err)
	}
	sp, err := spectra.Rightmost(ctx, g, &spectra.EigsOptions{Count: 4, ShiftInvert: true, Shift: 0})
	if err != nil {
		t.Fatal(err)
	}
	for k := 0; k < 2; k++ {
		w := om[k]
		z := alpha/(2*w) + beta*w/2
		want := complex(-z*w, w*math.Sqrt(1-z*z))
		best := math.Inf(1)
		for _, v := range sp.Values {
			best = math.Min(best, cmplx.Abs(v-want))
		}
		if best > 1e-8*cmplx.Abs(want) {
			t.Errorf("mode %d: λ = %v not found (nearest %.2g away) in %v", k+1, want, best, sp.Values)
		}
	}
	h := 1 / float64(n+1)
	x0 := make([]float64, 2*n)
	for j := 0; j < n; j++ {
		x0[j] = math.Sin(math.Pi * float64(j+1) * h)
	}
	tt := 0.7
	// Tolerance 1e-6: the solves with Q(γ⁻¹) carry about u·κ(K) ≈ 1e-8
	// of rounding here (κ(K) ≈ 4/(πh)²), which the estimate includes.
	sol, err := expo.Propagate(ctx, g, x0, []float64{tt}, expo.Options{Tol: 1e-6})
	if err != nil {
		t.Fatal(err)
	}
	if sol.Method != expo.MethodShiftInv || !sol.TolMet {
		t.Errorf("auto chose %q (%s), tolerance met: %v %s", sol.Method, sol.Reason, sol.TolMet, sol.Shortfall)
	}
	w := om[0]
	z := alpha/(2*w) + beta*w/2
	wd := w * math.Sqrt(1-z*z)
	e := math.Exp(-z * w * tt)
	q := e * (math.Cos(wd*tt) + z*w/wd*math.Sin(wd*tt))
	dq := -e * w * w / wd * math.Sin(wd*tt)
	var d float64 // ∞-norm error of the state, as the estimate measures it
	for j := 0; j < n; j++ {
		d = math.Max(d, math.Abs(sol.Values[0][j]-q*x0[j]))
		d = math.Max(d, math.Abs(sol.Values[0][n+j]-dq*x0[j]))
	}
	if d > 1e-6 || d > sol.ErrEst[0] {
		t.Errorf("mode 1 at t = %g off the closed form by %.2g (estimate %.2g)", tt, d, sol.ErrEst[0])
	}
	relClose(t, "energy", g.Energy(sol.Values[0]), (dq*dq+w*w*q*q)/(w*w)*g.Energy(x0), 1e-7)
	if s := memguard.LargestSide(); s >= n {
		t.Errorf("a dense matrix with a side of %d was asked for", s)
	}
}

// TestModeShapes: every eigenvector the pencil routes return satisfies its
// eigenproblem, (λ²M + λC + K)φ = 0 for the displacement part φ of a
// second-order system's state [φ; λφ], (K − λM)x = 0 for M u' = K u, to a
// residual of a few hundred units of roundoff relative to
// (|λ|²‖M‖ + |λ|‖C‖ + ‖K‖)‖φ‖ (backward stability of the routes).
func TestModeShapes(t *testing.T) {
	n := 12
	M, C, K, _ := rayleighString(n, 0.3, 2e-3)
	undamped, _ := NewSecond(ctx, M, nil, K)
	damped, _ := NewSecond(ctx, M, C, K)
	nonsym, _ := NewSecond(ctx, linop.AddCSR(1, M, 0.01, tridiag(n, 0, 0, 1)), C, K)
	mass, _ := NewMass(ctx, M, linop.ScaleCSR(-1, K))
	dense := func(a linop.Operator) *mat.Dense { return denseOf(t, a) }
	Md, Cd, Kd := dense(M), dense(C), dense(K)
	for name, g := range map[string]*Second{"undamped": undamped, "damped": damped, "non-symmetric M": nonsym} {
		sp, err := g.Spectrum(ctx)
		if err != nil {
			t.Fatal(err)
		}
		if sp.Right == nil {
			t.Fatalf("%s: no eigenvectors", name)
		}
		m := Md
		if name == "non-symmetric M" {
			m = dense(g.M)
		}
		c := Cd
		if name == "undamped" {
			c = mat.NewDense(n, n, nil)
		}
		for k, lam := range sp.Values {
			var res, scale float64
			for i := 0; i < n; i++ {
				var acc complex128
				for j := 0; j < n; j++ {
					q := lam*lam*complex(m.At(i, j), 0) + lam*complex(c.At(i, j), 0) + complex(Kd.At(i, j), 0)
					acc += q * sp.Right.At(j, k)
				}
				res = math.Max(res, cmplx.Abs(acc))
				// the velocity half is λ times the displacement half
				scale = math.Max(scale, cmplx.Abs(sp.Right.At(n+i, k)-lam*sp.Right.At(i, k)))
			}
			var phi float64
			for i := 0; i < n; i++ {
				phi = math.Max(phi, cmplx.Abs(sp.Right.At(i, k)))
			}
			l := cmplx.Abs(lam)
			bound := 500 * roundoff.Unit * (l*l*mat.Norm(m, 1) + l*mat.Norm(c, 1) + mat.Norm(Kd, 1)) * phi
			if res > bound || scale > 500*roundoff.Unit*(1+l)*phi*float64(n) {
				t.Errorf("%s, λ = %v: residual %.2g (bound %.2g), velocity half off by %.2g", name, lam, res, bound, scale)
			}
		}
	}
	sp, err := mass.Spectrum(ctx)
	if err != nil {
		t.Fatal(err)
	}
	for k, lam := range sp.Values {
		var res float64
		for i := 0; i < n; i++ {
			var acc complex128
			for j := 0; j < n; j++ {
				acc += complex(-Kd.At(i, j), 0)*sp.Right.At(j, k) - lam*complex(Md.At(i, j), 0)*sp.Right.At(j, k)
			}
			res = math.Max(res, cmplx.Abs(acc))
		}
		if bound := 500 * roundoff.Unit * (mat.Norm(Kd, 1) + cmplx.Abs(lam)*mat.Norm(Md, 1)); res > bound {
			t.Errorf("firstorder, λ = %v: residual %.2g > %.2g", lam, res, bound)
		}
	}
}

// TestSpectrumInterrupt: a dense pencil spectrum of order 1400 (several
// seconds of work) returns within half a second of an interrupt.
func TestSpectrumInterrupt(t *testing.T) {
	if testing.Short() {
		t.Skip("long")
	}
	M, C, K, _ := rayleighString(700, 0.3, 1e-4)
	g, err := NewSecond(ctx, M, C, K)
	if err != nil {
		t.Fatal(err)
	}
	c, cancel := context.WithCancel(ctx)
	time.AfterFunc(100*time.Millisecond, cancel)
	start := time.Now()
	_, err = g.Spectrum(c)
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("err = %v, want the cancellation", err)
	}
	if d := time.Since(start); d > 600*time.Millisecond {
		t.Errorf("returned %v after the start, 100 ms of it before the interrupt", d)
	}
}

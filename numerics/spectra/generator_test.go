package spectra

import (
	"encoding/json"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/roundoff"
)

// Lumer–Phillips (Pazy 1983, Thm 1.4.3): a normal stable A has
// ω(A) = α(A), so A − αI is dissipative and every Hille–Yosida quotient
// (λ−ω)^n‖R(λ)^n‖ = ((λ−ω)/(λ−α))^n ≤ 1 for ω ≥ α.
func TestGeneratorNormal(t *testing.T) {
	a := op([][]float64{{-1, 2}, {-2, -1}})
	rep, err := Generator(bg, a, nil)
	if err != nil {
		t.Fatal(err)
	}
	if rep.Omega != 0 || !rep.Dissipative || math.Abs(rep.NumericalAbscissa+1) > 1e-14 {
		t.Errorf("ω = %g dissipative %v ω(A) = %g", rep.Omega, rep.Dissipative, rep.NumericalAbscissa)
	}
	for _, h := range rep.HY {
		if h.M > 1+1e-12 {
			t.Errorf("n=%d: M_n = %g > 1", h.Power, h.M)
		}
	}
}

// Hille–Yosida necessity (Engel & Nagel, GTM 194, Thm II.3.8): if
// ‖e^{tA}‖ ≤ M e^{ωt} with M = sup_t e^{−ωt}‖e^{tA}‖, every estimate
// (λ−ω)^n‖R(λ)^n‖ is at most M. Closed form for A = [−1 a; 0 −1]:
// R(λ)^n = (λ+1)^{−n}I + n a (λ+1)^{−n−1}N, whose norm is (q + √(q²+4p²))/2
// with p = (λ+1)^{−n}, q = n a (λ+1)^{−n−1}.
func TestGeneratorHilleYosidaJordan(t *testing.T) {
	a := 6.0
	A := op([][]float64{{-1, a}, {0, -1}})
	rep, err := Generator(bg, A, &GeneratorOptions{Omega: 0, OmegaSet: true, Powers: 3})
	if err != nil {
		t.Fatal(err)
	}
	if rep.Dissipative || rep.NumericalAbscissa != a/2-1 {
		t.Errorf("dissipative %v, ω(A) = %g", rep.Dissipative, rep.NumericalAbscissa)
	}
	exactNorm := func(t float64) float64 { return math.Exp(-t) * (a*t + math.Sqrt(a*a*t*t+4)) / 2 }
	_, sup := goldenMax(exactNorm, 0, 5, 1e-12, 200)
	for _, h := range rep.HY {
		nf := float64(h.Power)
		p := math.Pow(h.Lambda+1, -nf)
		q := nf * a * math.Pow(h.Lambda+1, -nf-1)
		want := math.Pow(h.Lambda, nf) * (q + math.Sqrt(q*q+4*p*p)) / 2
		if relDiff(h.M, want) > 1e-12 {
			t.Errorf("n=%d at λ=%g: %g, closed form %g", h.Power, h.Lambda, h.M, want)
		}
		if h.M > sup*(1+1e-12) {
			t.Errorf("n=%d: M_n = %g exceeds sup e^{−ωt}‖e^{tA}‖ = %g", h.Power, h.M, sup)
		}
		// The sampled sup is close to the true sup over λ of the closed form.
		_, best := goldenMax(func(l float64) float64 {
			p := math.Pow(l+1, -nf)
			q := nf * a * math.Pow(l+1, -nf-1)
			return math.Pow(l, nf) * (q + math.Sqrt(q*q+4*p*p)) / 2
		}, 1e-3, 100, 1e-12, 300)
		if h.M < 0.97*best {
			t.Errorf("n=%d: sampled M_n = %g, true sup over λ %g", h.Power, h.M, best)
		}
	}
}

// Hille–Yosida necessity on seeded random non-normal matrices: the
// estimates never exceed sup_t e^{−ωt}‖e^{tA}‖ (computed by GrowthCurve).
func TestGeneratorRandomBound(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for trial := 0; trial < 3; trial++ {
		a := randomNonNormal(rng, 8, -2, 3)
		rep, err := Generator(bg, a, &GeneratorOptions{Omega: 0, OmegaSet: true})
		if err != nil {
			t.Fatal(err)
		}
		if rep.SpectralAbscissa >= 0 {
			continue
		}
		g, err := GrowthCurve(bg, a, linspace(0, 15, 151), &GrowthOptions{NoKreiss: true})
		if err != nil {
			t.Fatal(err)
		}
		if rep.M > g.Peak*(1+1e-8) {
			t.Errorf("trial %d: Hille–Yosida M = %g > sup‖e^{tA}‖ = %g", trial, rep.M, g.Peak)
		}
	}
}

// Closed form, two-state chain Q = [−a a; b −b]: π = (b, a)/(a+b), gap a+b,
// reversible, max_i TV distance max(a,b)/(a+b)·e^{−(a+b)t}, so
// t_mix(1/4) = ln(4 max(a,b)/(a+b))/(a+b).
func TestMarkovTwoState(t *testing.T) {
	a, b := 3.0, 1.0
	rep, err := Markov(bg, op([][]float64{{-a, a}, {b, -b}}))
	if err != nil {
		t.Fatal(err)
	}
	if relDiff(rep.Stationary[0], b/(a+b)) > 1e-14 || relDiff(rep.Stationary[1], a/(a+b)) > 1e-14 {
		t.Errorf("π = %v", rep.Stationary)
	}
	if relDiff(rep.Gap, a+b) > 1e-13 || !rep.Reversible {
		t.Errorf("gap %g reversible %v", rep.Gap, rep.Reversible)
	}
	want := math.Log(4*math.Max(a, b)/(a+b)) / (a + b)
	if relDiff(rep.MixingTime, want) > 2e-6 {
		t.Errorf("t_mix = %.10g, want %.10g", rep.MixingTime, want)
	}
	if rep.MixingTime > rep.MixingBound {
		t.Errorf("t_mix %g above the reversible bound %g", rep.MixingTime, rep.MixingBound)
	}
}

// Closed forms: the M/M/1/K queue (birth rate λ, death rate μ) has
// π_k ∝ (λ/μ)^k and is reversible; the 3-cycle with unit rates has uniform
// π, eigenvalues 0, −3/2 ± i√3/2 (circulant), gap 3/2, not reversible.
func TestMarkovQueueAndCycle(t *testing.T) {
	lam, mu, K := 1.0, 2.0, 6
	m := mat.NewDense(K+1, K+1, nil)
	for k := 0; k <= K; k++ {
		if k < K {
			m.Set(k, k+1, lam)
		}
		if k > 0 {
			m.Set(k, k-1, mu)
		}
		m.Set(k, k, -(map[bool]float64{true: lam}[k < K] + map[bool]float64{true: mu}[k > 0]))
	}
	rep, err := Markov(bg, denseOp{m})
	if err != nil {
		t.Fatal(err)
	}
	rho, z := lam/mu, 0.0
	for k := 0; k <= K; k++ {
		z += math.Pow(rho, float64(k))
	}
	for k, p := range rep.Stationary {
		if relDiff(p, math.Pow(rho, float64(k))/z) > 1e-12 {
			t.Errorf("π_%d = %g, want %g", k, p, math.Pow(rho, float64(k))/z)
		}
	}
	if !rep.Reversible || rep.MixingTime > rep.MixingBound {
		t.Errorf("reversible %v, t_mix %g, bound %g", rep.Reversible, rep.MixingTime, rep.MixingBound)
	}
	cyc, err := Markov(bg, op([][]float64{{-1, 1, 0}, {0, -1, 1}, {1, 0, -1}}))
	if err != nil {
		t.Fatal(err)
	}
	if cyc.Reversible || relDiff(cyc.Gap, 1.5) > 1e-13 || math.Abs(cyc.Stationary[2]-1.0/3) > 1e-15 {
		t.Errorf("cycle: reversible %v gap %g π %v", cyc.Reversible, cyc.Gap, cyc.Stationary)
	}
	if _, err := Markov(bg, op([][]float64{{-1, 2}, {1, -1}})); err == nil {
		t.Error("row sum ≠ 0 accepted")
	}
}

// Sparse path on a 2-D convection–diffusion operator (N = 1600): α(A) and
// ω(A) against the closed forms (eigenvalues of the Kronecker sum of
// tridiagonal Toeplitz matrices, and the largest eigenvalue of its
// symmetric part, itself a Kronecker sum of symmetric Toeplitz matrices).
func TestGeneratorSparse(t *testing.T) {
	x, lx, dx, ux := convDiff1D(40, 0.05, 1)
	y, ly, dy, uy := convDiff1D(40, 0.05, 0.3)
	a := linop.NewKronSum(x, y)
	rep, err := Generator(bg, a, nil)
	if err != nil {
		t.Fatal(err)
	}
	alpha := convDiffEigs(40, 40, lx, dx, ux, ly, dy, uy)[0]
	c := math.Cos(math.Pi / 41)
	omega := dx + 2*math.Abs((lx+ux)/2)*c + dy + 2*math.Abs((ly+uy)/2)*c
	if relDiff(rep.SpectralAbscissa, alpha) > 1e-8 || relDiff(rep.NumericalAbscissa, omega) > 1e-9 {
		t.Errorf("α = %.12g (want %.12g), ω = %.12g (want %.12g)", rep.SpectralAbscissa, alpha, rep.NumericalAbscissa, omega)
	}
	if rep.Dissipative != (omega <= 0) {
		t.Errorf("dissipative = %v with ω(A) = %g", rep.Dissipative, omega)
	}
}

// Hille–Yosida for a normal matrix (Engel & Nagel, GTM 194, Thm II.3.8,
// with ‖R(λ)^n‖ = max_k |λ − λ_k|^{−n} for normal A): every quotient
// (λ−ω)^n‖R(λ)^n‖ with ω = 0 ≥ α(A) is below 1 and tends to 1 as λ → ∞,
// so the optimal M is exactly 1. Sampling only a bounded range of λ gave
// 0.99; the estimate must be 1 exactly, never below.
func TestGeneratorHilleYosidaNormalExact(t *testing.T) {
	for _, a := range []denseOp{
		op([][]float64{{-1, 0, 0}, {0, -2, 0}, {0, 0, -3}}),
		op([][]float64{{-1, 2}, {-2, -1}}),
	} {
		rep, err := Generator(bg, a, &GeneratorOptions{Omega: 0.5, OmegaSet: true})
		if err != nil {
			t.Fatal(err)
		}
		if rep.M != 1 {
			t.Errorf("normal A: Hille–Yosida M = %.17g, want exactly 1", rep.M)
		}
		for _, h := range rep.HY {
			if h.M < 1 || h.M > 1+1e-14 {
				t.Errorf("n = %d: M_n = %.17g, want 1 (the limit λ → ∞)", h.Power, h.M)
			}
		}
		if !strings.Contains(rep.Sampled, "3 beyond up to") || !strings.Contains(rep.Method, rep.Sampled) {
			t.Errorf("the sampled λ are not stated: %q", rep.Method)
		}
	}
}

// Hille–Yosida for the scaled Jordan block A = −I + 3N (N the 3×3 shift),
// ω = 0: ω(A) = −1 + 3cos(π/4) > 0, so A is not dissipative; the estimates
// are lower bounds of M = sup_t ‖e^{tA}‖ (Engel & Nagel, Thm II.3.8), at
// least 1, and close to it. e^{tA} = e^{−t}(I + 3tN + 9t²N²/2) (the
// exponential of a Jordan block, Higham, Functions of Matrices, 2008,
// eq. 1.4), its 2-norm maximised over t by golden section.
func TestGeneratorHilleYosidaJordan3(t *testing.T) {
	J := op([][]float64{{-1, 3, 0}, {0, -1, 3}, {0, 0, -1}})
	rep, err := Generator(bg, J, &GeneratorOptions{Omega: 0, OmegaSet: true})
	if err != nil {
		t.Fatal(err)
	}
	norm := func(t float64) float64 {
		e := mat.NewDense(3, 3, []float64{1, 3 * t, 9 * t * t / 2, 0, 1, 3 * t, 0, 0, 1})
		e.Scale(math.Exp(-t), e)
		return norm2(e)
	}
	_, sup := goldenMax(norm, 0, 10, 1e-12, 300)
	if rep.M < 1 || rep.M > sup*(1+1e-10) || rep.M < 0.8*sup {
		t.Errorf("Hille–Yosida M = %g, sup ‖e^{tA}‖ = %g", rep.M, sup)
	}
	if rep.Dissipative || rep.AbscissaSign != -1 || relDiff(rep.NumericalAbscissa, -1+3*math.Cos(math.Pi/4)) > 1e-14 {
		t.Errorf("dissipative %v, sign of α %d, ω(A) = %.17g", rep.Dissipative, rep.AbscissaSign, rep.NumericalAbscissa)
	}
	t.Logf("M = %.6g against sup ‖e^{tA}‖ = %.6g", rep.M, sup)
}

// A damped oscillator u” + C u' + K u = 0 as the first-order system
// A = [0 I; −K −C] is dissipative in the energy inner product
// ⟨(x,v),(y,w)⟩ = xᵀKy + vᵀw: with R = diag(K^{1/2}, I),
// RAR⁻¹ = [0 K^{1/2}; −K^{1/2} −C], whose symmetric part is
// diag(0, −C), so ω(A) = 0 exactly (Lumer–Phillips; Pazy 1983, §1.4).
// The computed ω(A) is rounding (√k·1 against k/√k), of either sign; the
// verdict must be "dissipative" in every case and say "within rounding"
// when the computed value is positive.
func TestGeneratorEnergyDissipative(t *testing.T) {
	k := []float64{2, 3, 5, 7, 11, 13}
	c := []float64{0.3, 0, 0.1, 0.7, 0, 0.2}
	m := len(k)
	a := mat.NewDense(2*m, 2*m, nil)
	w := make([]float64, 2*m)
	for i := 0; i < m; i++ {
		a.Set(i, m+i, 1)
		a.Set(m+i, i, -k[i])
		a.Set(m+i, m+i, -c[i])
		if i+1 < m { // a spring between neighbours keeps K symmetric, not diagonal
			a.Set(m+i, i+1, 0)
		}
		w[i], w[m+i] = k[i], 1
	}
	wt, err := linop.NewDiagWeight(w)
	if err != nil {
		t.Fatal(err)
	}
	rep, err := Generator(bg, denseOp{a}, &GeneratorOptions{Weight: wt})
	if err != nil {
		t.Fatal(err)
	}
	if rep.Omega != 0 || !rep.Dissipative || math.Abs(rep.NumericalAbscissa) > rep.Rounding {
		t.Errorf("ω = %g, dissipative %v, ω(A) = %g (τ = %g)", rep.Omega, rep.Dissipative, rep.NumericalAbscissa, rep.Rounding)
	}
	if rep.NumericalAbscissa > 0 && (!rep.WithinRounding || !strings.Contains(rep.Verdict, "dissipative within rounding")) {
		t.Errorf("ω(A) = %g > 0 but the verdict does not say within rounding: %s", rep.NumericalAbscissa, rep.Verdict)
	}
	if rep.M != 1 {
		t.Errorf("M = %g, want 1 (Lumer–Phillips)", rep.M)
	}
	t.Logf("computed ω(A) = %.3g, τ = %.3g", rep.NumericalAbscissa, rep.Rounding)
}

// The verdict's wording at the threshold: A = [δ 1; −1 −1] has symmetric
// part diag(δ, −1), so ω(A) = δ exactly, and α(A) = (δ−1)/2 < 0. δ = 1e-17
// is below τ = n·u·‖A‖_F = 2·2⁻⁵³·√(3+δ²) ≈ 3.8e-16: dissipative within
// rounding; δ = 1e-12 is not; δ = 0 is dissipative outright.
func TestGeneratorWithinRoundingWording(t *testing.T) {
	for _, c := range []struct {
		delta      float64
		diss, near bool
		say        string
	}{
		{1e-17, true, true, "dissipative within rounding (ω(A) = 1e-17 ≤ 3.8e-16 = n·u·‖A‖)"},
		{1e-12, false, false, "not dissipative (ω(A) = 1e-12 > 3.8e-16 = n·u·‖A‖)"},
		{0, true, false, "ω(A) = 0 ≤ ω = 0: A − ωI is dissipative"},
	} {
		rep, err := Generator(bg, op([][]float64{{c.delta, 1}, {-1, -1}}), nil)
		if err != nil {
			t.Fatal(err)
		}
		if rep.Omega != 0 || rep.NumericalAbscissa != c.delta || rep.Dissipative != c.diss || rep.WithinRounding != c.near || !strings.Contains(rep.Verdict, c.say) {
			t.Errorf("δ = %g: ω = %g, ω(A) = %g dissipative %v within %v\nverdict: %s\nwant: %s", c.delta, rep.Omega, rep.NumericalAbscissa, rep.Dissipative, rep.WithinRounding, rep.Verdict, c.say)
		}
		if c.diss && rep.M != 1 || !c.diss && !(rep.M >= 1) {
			t.Errorf("δ = %g: M = %.17g", c.delta, rep.M)
		}
	}
	// α(A) zero within rounding: the rotation generator plus 1e-17 on the
	// diagonal has α = 5e-18, far below τ (the QR algorithm may return it
	// as 0 or as rounding); the verdict must not call it growth, and the
	// default ω is then 0.
	rep, err := Generator(bg, op([][]float64{{1e-17, 1}, {-1, 0}}), nil)
	if err != nil {
		t.Fatal(err)
	}
	if rep.AbscissaSign != 0 || rep.Omega != 0 || !rep.Dissipative || !strings.Contains(rep.Verdict, "neither decays nor grows") || strings.Contains(rep.Verdict, "so e^{tA} grows") {
		t.Errorf("rotation: sign %d, ω = %g, verdict %s", rep.AbscissaSign, rep.Omega, rep.Verdict)
	}
}

// The Jordan block J_n(λ) is defective: its left and right eigenvectors
// e_n and e_1 are orthogonal, so the condition number is infinite
// (Wilkinson 1965, §2.22). After a random orthogonal similarity the QR
// algorithm returns n distinct eigenvalues about u^{1/n} apart, with
// conditions near u^{−(n−1)/n} ≫ 1/√u. Either way every eigenvalue must be
// flagged and the accuracy statement must not be the first-order one; a
// symmetric matrix (condition 1) must not be flagged.
func TestDenseSpectrumDefectiveFlag(t *testing.T) {
	n := 4
	j := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		j.Set(i, i, -0.5)
		if i+1 < n {
			j.Set(i, i+1, 1)
		}
	}
	var qr mat.QR
	rng := rand.New(rand.NewPCG(7, 8))
	g := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for k := 0; k < n; k++ {
			g.Set(i, k, rng.NormFloat64())
		}
	}
	qr.Factorize(g)
	var q, qj, sim mat.Dense
	qr.QTo(&q)
	qj.Mul(q.T(), j)
	sim.Mul(&qj, &q)
	for name, a := range map[string]*mat.Dense{"J_4(-0.5)": j, "QᵀJ_4Q": &sim} {
		sp, err := DenseSpectrum(denseOp{a})
		if err != nil {
			t.Fatal(err)
		}
		for k, f := range sp.IllCond {
			if !f {
				t.Errorf("%s: λ_%d = %v with Cond %g not flagged", name, k, sp.Values[k], sp.Cond[k])
			}
		}
		if !strings.Contains(sp.Accuracy, "DEFECTIVE OR NEARLY") || !strings.Contains(sp.Accuracy, "pseudospectra") || strings.Contains(sp.Accuracy, "(first order, simple eigenvalues)") {
			t.Errorf("%s: accuracy %q", name, sp.Accuracy)
		}
		rep, err := Generator(bg, denseOp{a}, &GeneratorOptions{Omega: 0, OmegaSet: true, Powers: 1, Lambdas: 4})
		if err != nil {
			t.Fatal(err)
		}
		if name != "J_4(-0.5)" && !rep.AbscissaIllCond {
			t.Errorf("%s: α(A) = %g not marked ill-conditioned", name, rep.SpectralAbscissa)
		}
		if rep.AbscissaSign != -1 {
			t.Errorf("%s: α(A) = %g (allowance %g) should still be negative", name, rep.SpectralAbscissa, rep.AbscissaRounding)
		}
	}
	sym := op([][]float64{{2, -1, 0}, {-1, 2, -1}, {0, -1, 2}})
	sp, err := DenseSpectrum(sym)
	if err != nil {
		t.Fatal(err)
	}
	for k, f := range sp.IllCond {
		if f {
			t.Errorf("symmetric: λ_%d flagged (Cond %g)", k, sp.Cond[k])
		}
	}
	if !strings.Contains(sp.Accuracy, "first order, simple eigenvalues") {
		t.Errorf("symmetric: accuracy %q", sp.Accuracy)
	}
	if want := 1 / math.Sqrt(roundoff.Unit); relDiff(IllCondLimit, want) > 1e-15 {
		t.Errorf("IllCondLimit = %.17g, 1/√u = %.17g", IllCondLimit, want)
	}
}

// birthDeathRef is testdata/spectra/birthdeath.json, written by
// make_birthdeath.py with mpmath.
type birthDeathRef struct {
	MM1K []struct {
		Lam, Mu     float64
		K           int
		Eigenvalues []float64
	} `json:"mm1k"`
	Graded struct {
		N        int       `json:"n"`
		Birth    []float64 `json:"birth"`
		Death    []float64 `json:"death"`
		Largest  []string  `json:"largest"`
		Smallest string    `json:"smallest"`
		Gap      string    `json:"gap"`
	} `json:"graded"`
}

func readBirthDeath(t *testing.T) birthDeathRef {
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "spectra", "birthdeath.json"))
	if err != nil {
		t.Fatal(err)
	}
	var r birthDeathRef
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatal(err)
	}
	return r
}

// birthDeath returns the rate matrix with rates birth[k] (k → k+1) and
// death[k] (k+1 → k).
func birthDeath(birth, death []float64) *mat.Dense {
	n := len(birth) + 1
	q := mat.NewDense(n, n, nil)
	for k := 0; k+1 < n; k++ {
		q.Set(k, k+1, birth[k])
		q.Set(k+1, k, death[k])
		q.Set(k, k, q.At(k, k)-birth[k])
		q.Set(k+1, k+1, q.At(k+1, k+1)-death[k])
	}
	return q
}

// The M/M/1/K queue (states 0..K, rates λ up, μ down) has eigenvalues 0
// and −(λ+μ) + 2√(λμ) cos(jπ/(K+1)), j = 1..K (queueing texts, e.g.
// Kleinrock 1975; make_birthdeath.py confirms the formula against mpmath's
// eigenvalues at 40 digits and stores them): the whole spectrum through
// the relatively accurate chain route, and the gap (λ+μ) − 2√(λμ)cos(π/(K+1)) from Markov,
// each within the stated error bound.
func TestMarkovMM1KSpectrum(t *testing.T) {
	cases := readBirthDeath(t).MM1K
	// Beyond mpmath's reach (500 states) the formula alone: a drift of 5:1
	// makes π span 350 decades, where the non-symmetric QR algorithm on Q
	// misses the gap by 6% (scipy.linalg.eigvals, LAPACK dgeev).
	cases = append(cases, struct {
		Lam, Mu     float64
		K           int
		Eigenvalues []float64
	}{5, 1, 499, nil}, struct {
		Lam, Mu     float64
		K           int
		Eigenvalues []float64
	}{1, 5, 499, nil})
	for _, c := range cases {
		birth, death := make([]float64, c.K), make([]float64, c.K)
		for k := range birth {
			birth[k], death[k] = c.Lam, c.Mu
		}
		q := birthDeath(birth, death)
		gap := c.Lam + c.Mu - 2*math.Sqrt(c.Lam*c.Mu)*math.Cos(math.Pi/float64(c.K+1))
		if c.K < 20 { // the whole report (its mixing time takes dense exponentials)
			rep, err := Markov(bg, denseOp{q})
			if err != nil {
				t.Fatal(err)
			}
			if !rep.BirthDeath || !rep.Reversible || math.Abs(rep.Gap-gap) > rep.GapError || rep.GapError > 1e-13 {
				t.Errorf("λ=%g μ=%g K=%d: gap %.17g ± %.2g, closed form %.17g (birth–death %v)", c.Lam, c.Mu, c.K, rep.Gap, rep.GapError, gap, rep.BirthDeath)
			}
		}
		vals, rel := bdAscending(t, q)
		if got := -vals[len(vals)-2]; math.Abs(got-gap) > rel*gap {
			t.Errorf("λ=%g μ=%g K=%d: gap %.17g, closed form %.17g, bound %.2g", c.Lam, c.Mu, c.K, got, gap, rel*gap)
		}
		if want := (float64(c.K)*math.Log(c.Lam/c.Mu) - math.Log((math.Pow(c.Lam/c.Mu, float64(c.K+1))-1)/(c.Lam/c.Mu-1))); c.Lam < c.Mu && relDiff(birthDeathLogPiMin(q), want) > 1e-13 {
			// π_K = ρ^K (1−ρ)/(1−ρ^{K+1}), ρ = λ/μ < 1: the smallest entry.
			t.Errorf("log π_min = %.17g, closed form %.17g", birthDeathLogPiMin(q), want)
		}
		for i, want := range c.Eigenvalues { // mpmath, decreasing
			if got := vals[len(vals)-1-i]; math.Abs(got-want) > rel*math.Abs(want)+1e-15*math.Abs(vals[0]) {
				t.Errorf("λ=%g μ=%g K=%d: eigenvalue %d = %.17g, mpmath %.17g (bound %.2g)", c.Lam, c.Mu, c.K, i, got, want, rel*math.Abs(want))
			}
		}
	}
}

// A strongly graded 500-state birth–death chain (rates from 1 to 1e5, π
// spanning about 126 decades): the four largest and the smallest
// eigenvalue and the gap against mpmath at 50 digits (Sturm bisection on
// the exactly formed symmetric tridiagonal, make_birthdeath.py), each
// within the stated relative bound 24·n·u of the chain route. The
// non-symmetric QR algorithm on Q is logged for comparison.
func TestMarkovGraded500(t *testing.T) {
	g := readBirthDeath(t).Graded
	q := birthDeath(g.Birth, g.Death)
	if !isBirthDeath(q) {
		t.Fatal("not recognised as birth–death")
	}
	if err := linop.CheckGenerator(linop.CSRFromDense(q, 0)); err != nil {
		t.Fatal(err)
	}
	pi := birthDeathStationary(q)
	vals, rel := bdAscending(t, q)
	num := func(s string) float64 {
		x, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatal(err)
		}
		return x
	}
	n := g.N
	for i, s := range g.Largest {
		// mpmath's bisection stops at 1e-45·max(1, |x|): its stationary
		// eigenvalue is 0 to that width.
		if got, want := vals[n-1-i], num(s); math.Abs(got-want) > rel*math.Abs(want)+1e-44 {
			t.Errorf("eigenvalue %d from the top: %.17g, mpmath %.17g, bound %.2g", i, got, want, rel*math.Abs(want))
		}
	}
	if got, want := vals[0], num(g.Smallest); math.Abs(got-want) > rel*math.Abs(want) {
		t.Errorf("smallest eigenvalue %.17g, mpmath %.17g, bound %.2g", got, want, rel*math.Abs(want))
	}
	gap := num(g.Gap)
	tol := rel * gap
	if got := -vals[n-2]; math.Abs(got-gap) > tol {
		t.Errorf("gap %.17g, mpmath %.17g, bound %.2g", got, gap, tol)
	}
	// π Q = 0 to rounding: the product formula's π is a left null vector.
	res, scale := 0.0, 0.0
	for j := 0; j < n; j++ {
		s, a := 0.0, 0.0
		for i := max(j-1, 0); i <= min(j+1, n-1); i++ {
			s += pi[i] * q.At(i, j)
			a += math.Abs(pi[i] * q.At(i, j))
		}
		res, scale = math.Max(res, math.Abs(s)), math.Max(scale, a)
	}
	if res > roundoff.Threshold(n, scale) {
		t.Errorf("‖πQ‖∞ = %g, rounding %g", res, roundoff.Threshold(n, scale))
	}
	if sp, err := denseSpectrum(q); err == nil && !testing.Short() {
		iz, top := 0, math.Inf(-1)
		for k, l := range sp.Values {
			if cmplx.Abs(l) < cmplx.Abs(sp.Values[iz]) {
				iz = k
			}
		}
		for k, l := range sp.Values {
			if k != iz {
				top = math.Max(top, real(l))
			}
		}
		t.Logf("gap: chain route %.15g (error %.2g, bound %.2g); non-symmetric QR on Q %.15g (relative error %.2g)", -vals[n-2], math.Abs(-vals[n-2]-gap), tol, -top, math.Abs(-top-gap)/gap)
	}
}

// A reversible chain that is not birth–death: the star with centre 0 and
// m leaves, rates a (centre → each leaf) and b (leaf → centre). Its
// eigenvalues are 0, −b (multiplicity m−1: vectors on the leaves summing
// to 0) and −(ma + b) (the 2×2 block on centre and uniform leaves), so
// the gap is b; a tree, hence reversible (Kolmogorov's criterion). With
// a = 1e6, b = 1e-3 the chain is strongly graded (π_centre ≈ 1e-10); the
// symmetric route must give the gap within its stated bound.
func TestMarkovStarReversible(t *testing.T) {
	m, a, b := 6, 1e6, 1e-3
	q := mat.NewDense(m+1, m+1, nil)
	for i := 1; i <= m; i++ {
		q.Set(0, i, a)
		q.Set(i, 0, b)
		q.Set(i, i, -b)
	}
	q.Set(0, 0, -float64(m)*a)
	rep, err := Markov(bg, denseOp{q})
	if err != nil {
		t.Fatal(err)
	}
	if !rep.Reversible || rep.BirthDeath || math.Abs(rep.Gap-b) > rep.GapError || rep.GapError > 1e-6 {
		t.Errorf("reversible %v birth–death %v gap %.17g ± %.2g, closed form %g", rep.Reversible, rep.BirthDeath, rep.Gap, rep.GapError, b)
	}
	if want := b / (b + float64(m)*a); relDiff(rep.Stationary[0], want) > 1e-12 {
		t.Errorf("π_0 = %g, closed form %g", rep.Stationary[0], want)
	}
	if !strings.Contains(rep.Method, "symmetric QR algorithm") {
		t.Errorf("method %q", rep.Method)
	}
	t.Logf("gap %.17g (error %.2g, bound %.2g)", rep.Gap, math.Abs(rep.Gap-b), rep.GapError)
}

// Sparse path, skew-symmetric A (central differences for d/dx on a
// periodic grid, n = 1600 > 1500): A + Aᵀ = 0, so ω(A) = 0 exactly, and the
// eigenvalues i·sin(2πk/n)/h are imaginary, so α(A) = 0 (circulant
// matrix). The symmetric part leaves shift-and-invert Lanczos nothing to
// find (it failed before); the report must say dissipative with M = 1 and
// α zero within rounding.
func TestGeneratorSparseSkew(t *testing.T) {
	n := 1600
	h := 1.0 / float64(n)
	var is, js []int
	var vs []float64
	for i := 0; i < n; i++ {
		is, js, vs = append(is, i, i), append(js, (i+1)%n, (i+n-1)%n), append(vs, 1/(2*h), -1/(2*h))
	}
	a := linop.NewCSRFromTriplets(n, n, is, js, vs)
	rep, err := Generator(bg, a, nil)
	if err != nil {
		t.Fatal(err)
	}
	if rep.NumericalAbscissa != 0 || !rep.Dissipative || rep.M != 1 || rep.AbscissaSign != 0 || rep.Omega != 0 {
		t.Errorf("ω(A) = %g dissipative %v M = %g α = %g (sign %d, allowance %g) ω = %g", rep.NumericalAbscissa, rep.Dissipative, rep.M, rep.SpectralAbscissa, rep.AbscissaSign, rep.AbscissaRounding, rep.Omega)
	}
	if !strings.Contains(rep.Verdict, "is zero within rounding") || !strings.Contains(rep.Verdict, "dissipative") {
		t.Errorf("verdict %s", rep.Verdict)
	}
}

// The stationary distribution by GTH, entry by entry. A cycle 0 → 1 → … →
// n−1 → 0 with rates r_i has π_i ∝ 1/r_i (flow balance π_i r_i = π_{i−1}
// r_{i−1} around the cycle): with r_i = 10^{16i/(n−1)} the entries span 16
// decades and the chain is not reversible. Every entry must have relative
// error near n·u — which a subtracting solve need not give the smallest
// ones. The star of TestMarkovStarReversible and the 3-cycle have closed
// forms too; a reducible chain is refused.
func TestMarkovStationaryGTH(t *testing.T) {
	n := 40
	q := mat.NewDense(n, n, nil)
	r := make([]float64, n)
	z := 0.0
	for i := range r {
		r[i] = math.Pow(10, 16*float64(i)/float64(n-1))
		q.Set(i, (i+1)%n, r[i])
		q.Set(i, i, -r[i])
		z += 1 / r[i]
	}
	pi, err := linop.Stationary(linop.CSRFromDense(q, 0))
	if err != nil {
		t.Fatal(err)
	}
	worst := 0.0
	for i, p := range pi {
		worst = math.Max(worst, relDiff(p, 1/r[i]/z))
	}
	if worst > float64(n)*1e-15 {
		t.Errorf("graded cycle: largest relative error of π %g", worst)
	}
	rep, err := Markov(bg, denseOp{q})
	if err != nil {
		t.Fatal(err)
	}
	if rep.Reversible || rep.BirthDeath || !strings.Contains(rep.Method, "Grassmann–Taksar–Heyman") {
		t.Errorf("reversible %v birth–death %v method %q", rep.Reversible, rep.BirthDeath, rep.Method)
	}
	if _, err := Markov(bg, op([][]float64{{-1, 1, 0}, {0, -1, 1}, {0, 0, 0}})); err == nil || !strings.Contains(err.Error(), "not irreducible") {
		t.Errorf("absorbing chain: %v", err)
	}
	t.Logf("graded cycle: largest relative error of π %.2g", worst)
}

// spectrum() of a reversible rate matrix takes the symmetric route: the
// graded 500-state chain's eigenvalues against mpmath (make_birthdeath.py)
// and the M/M/1/K queue with λ/μ = 5, K = 499 against the closed form
// −(λ+μ) + 2√(λμ)cos(jπ/(K+1)), each within the stated absolute error; no
// eigenvalue flagged as defective although Q's condition numbers are huge;
// the eigenvectors satisfy Qx = λx and yᵀQ = λyᵀ on a small chain.
func TestDenseSpectrumReversibleRates(t *testing.T) {
	g := readBirthDeath(t).Graded
	sp, err := DenseSpectrum(denseOp{birthDeath(g.Birth, g.Death)})
	if err != nil {
		t.Fatal(err)
	}
	tol, ill := sp.AbscissaError()
	if ill || tol != sp.Rounding || !strings.Contains(sp.Method, "symmetric") {
		t.Errorf("allowance %g (ill %v), rounding %g, method %q", tol, ill, sp.Rounding, sp.Method)
	}
	for i, s := range g.Largest {
		want, _ := strconv.ParseFloat(s, 64)
		if got := sp.Values[i]; math.Abs(real(got)-want) > sp.Rounding || imag(got) != 0 || sp.IllCond[i] {
			t.Errorf("graded: λ_%d = %v, mpmath %.17g, bound %.2g (flagged %v)", i, got, want, sp.Rounding, sp.IllCond[i])
		}
	}
	lam, mu, K := 5.0, 1.0, 499
	b, d := make([]float64, K), make([]float64, K)
	for k := range b {
		b[k], d[k] = lam, mu
	}
	sp, err = DenseSpectrum(denseOp{birthDeath(b, d)})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(real(sp.Values[0])) > sp.Rounding {
		t.Errorf("M/M/1/K: top eigenvalue %v, want 0", sp.Values[0])
	}
	for j := 1; j <= K; j++ { // descending: j = 1 is the largest non-zero
		want := -(lam + mu) + 2*math.Sqrt(lam*mu)*math.Cos(float64(j)*math.Pi/float64(K+1))
		if got := real(sp.Values[j]); math.Abs(got-want) > sp.Rounding {
			t.Errorf("M/M/1/K: λ_%d = %.17g, closed form %.17g, bound %.2g", j, got, want, sp.Rounding)
			break
		}
	}
	if !(sp.Cond[1] > IllCondLimit) || sp.IllCond[1] {
		t.Errorf("M/M/1/K: Cond %g flagged %v (Q's condition is huge, the route's error is not)", sp.Cond[1], sp.IllCond[1])
	}
	// Eigenvector residuals on the 7-state M/M/1/6 queue (λ = 1, μ = 2).
	b, d = []float64{1, 1, 1, 1, 1, 1}, []float64{2, 2, 2, 2, 2, 2}
	q := birthDeath(b, d)
	sp, err = DenseSpectrum(denseOp{q})
	if err != nil {
		t.Fatal(err)
	}
	n := 7
	for k := 0; k < n; k++ {
		l := real(sp.Values[k])
		rx, ry := 0.0, 0.0
		for i := 0; i < n; i++ {
			var qx, yq float64
			for j := 0; j < n; j++ {
				qx += q.At(i, j) * real(sp.Right.At(j, k))
				yq += real(sp.Left.At(j, k)) * q.At(j, i)
			}
			rx = math.Hypot(rx, qx-l*real(sp.Right.At(i, k)))
			ry = math.Hypot(ry, yq-l*real(sp.Left.At(i, k)))
		}
		if rx > 1e-13 || ry > 1e-13 {
			t.Errorf("λ_%d = %g: ‖Qx − λx‖ = %g, ‖yᵀQ − λyᵀ‖ = %g", k, l, rx, ry)
		}
	}
}

// bdAscending returns the eigenvalues of the birth–death rate matrix q in
// ascending order by BirthDeathChain.Eigenvalues, and their relative error
// bound.
func bdAscending(t *testing.T, q *mat.Dense) ([]float64, float64) {
	t.Helper()
	c, ok := birthDeathOfDense(q)
	if !ok {
		t.Fatal("not recognised as a birth–death chain")
	}
	v, err := c.Eigenvalues(bg)
	if err != nil {
		t.Fatal(err)
	}
	slices.Reverse(v)
	return v, c.RelativeError()
}

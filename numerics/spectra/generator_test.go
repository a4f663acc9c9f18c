package spectra

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
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

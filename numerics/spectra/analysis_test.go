package spectra

import (
	"context"
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
	"time"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/expo"
	"semiflow/numerics/solve"
)

var bg = context.Background()

// Closed form: for T = [λ1 c; 0 λ2] the right eigenvector of λ1 is e1 and
// the left one is y = (1, c/(λ1−λ2)), so κ(λ1) = κ(λ2) = √(1 + c²/(λ1−λ2)²).
func TestDenseSpectrumCond(t *testing.T) {
	for _, c := range []float64{0, 1, 100} {
		sp, err := DenseSpectrum(op([][]float64{{-1, c}, {0, -3}}))
		if err != nil {
			t.Fatal(err)
		}
		want := math.Sqrt(1 + c*c/4)
		if sp.Values[0] != -1 || sp.Values[1] != -3 || sp.Abscissa != -1 {
			t.Errorf("c=%g: eigenvalues %v", c, sp.Values)
		}
		for k := range sp.Cond {
			if relDiff(sp.Cond[k], want) > 1e-12 {
				t.Errorf("c=%g: κ = %g, want %g", c, sp.Cond[k], want)
			}
		}
	}
}

// Closed form: the N×N Dirichlet second difference (1/h²)tridiag(1, −2, 1),
// h = 1/(N+1), has eigenvalues −4/h² sin²(kπh/2), k = 1..N, all perfectly
// conditioned (symmetric).
func TestDenseSpectrumLaplacian(t *testing.T) {
	n := 20
	h := 1 / float64(n+1)
	m := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		m.Set(i, i, -2/(h*h))
		if i > 0 {
			m.Set(i, i-1, 1/(h*h))
			m.Set(i-1, i, 1/(h*h))
		}
	}
	sp, err := DenseSpectrum(denseOp{m})
	if err != nil {
		t.Fatal(err)
	}
	for k := 1; k <= n; k++ {
		s := math.Sin(float64(k) * math.Pi * h / 2)
		want := -4 / (h * h) * s * s
		if got := sp.Values[k-1]; math.Abs(real(got)-want) > 1e-9*math.Abs(want) || imag(got) != 0 {
			t.Errorf("λ_%d = %v, want %g", k, got, want)
		}
		if math.Abs(sp.Cond[k-1]-1) > 1e-10 {
			t.Errorf("κ_%d = %g, want 1", k, sp.Cond[k-1])
		}
	}
}

// Haagerup & de la Harpe (Proc. AMS 1992): the numerical radius of the N×N
// nilpotent Jordan block is cos(π/(N+1)); its numerical range is the disc
// of that radius, so ω = cos(π/(N+1)) too.
func TestNumericalRadiusJordan(t *testing.T) {
	for _, n := range []int{2, 5, 12} {
		m := mat.NewDense(n, n, nil)
		for i := 0; i+1 < n; i++ {
			m.Set(i, i+1, 1)
		}
		nr, err := NumRange(denseOp{m}, nil, 16)
		if err != nil {
			t.Fatal(err)
		}
		want := math.Cos(math.Pi / float64(n+1))
		if relDiff(nr.Radius, want) > 1e-12 || relDiff(nr.Abscissa, want) > 1e-12 {
			t.Errorf("N=%d: r = %.15g, ω = %.15g, want %.15g", n, nr.Radius, nr.Abscissa, want)
		}
		for k, z := range nr.Boundary {
			if math.Abs(cmplx.Abs(z)-want) > 1e-10 {
				t.Errorf("N=%d: boundary point %d at |z| = %g", n, k, cmplx.Abs(z))
			}
		}
	}
}

// Elliptical range theorem (e.g. Horn & Johnson, Topics in Matrix
// Analysis, 1991, §1.3; cited from memory): W of
// [λ1 c; 0 λ2] is the ellipse with foci λ1, λ2 and minor axis |c|, so each
// boundary point has |z−λ1| + |z−λ2| = √(|c|² + |λ1−λ2|²), the major axis.
func TestEllipticalRange(t *testing.T) {
	l1, l2, c := -2.0, 1.0, 3.0
	nr, err := NumRange(op([][]float64{{l1, c}, {0, l2}}), nil, 36)
	if err != nil {
		t.Fatal(err)
	}
	major := math.Hypot(c, l1-l2)
	for k, z := range nr.Boundary {
		if d := cmplx.Abs(z-complex(l1, 0)) + cmplx.Abs(z-complex(l2, 0)); math.Abs(d-major) > 1e-12 {
			t.Errorf("point %d = %v: focal sum %g, want %g", k, z, d, major)
		}
	}
	// ω = λmax of [l1 c/2; c/2 l2] = (l1+l2)/2 + major/2.
	if want := (l1+l2)/2 + major/2; relDiff(nr.Abscissa, want) > 1e-13 {
		t.Errorf("ω = %g, want %g", nr.Abscissa, want)
	}
}

// A diagonal weight W = diag(w) on A = diag-similar: with D = diag(d) and
// B a normal matrix, A = D⁻¹BD has W-numerical abscissa (W = D²) equal to
// that of B, i.e. max Re λ(B), since R A R⁻¹ = B.
type diagW struct{ d []float64 }

func (w diagW) Len() int { return len(w.d) }
func (w diagW) Factor(dst, x []float64, _ bool) {
	for i := range x {
		dst[i] = w.d[i] * x[i]
	}
}
func (w diagW) FactorSolve(dst, x []float64, _ bool) {
	for i := range x {
		dst[i] = x[i] / w.d[i]
	}
}

func TestWeightedAbscissa(t *testing.T) {
	b := mat.NewDense(3, 3, []float64{-1, 2, 0, -2, -1, 0, 0, 0, -3}) // normal, α = −1
	d := []float64{1, 10, 0.1}
	a := mat.NewDense(3, 3, nil)
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			a.Set(i, j, b.At(i, j)*d[j]/d[i])
		}
	}
	plain, _ := NumericalAbscissa(denseOp{a}, nil)
	w, err := NumericalAbscissa(denseOp{a}, diagW{d})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(w+1) > 1e-13 || plain < 1 {
		t.Errorf("weighted ω = %g (want −1), Euclidean ω = %g (want > 1)", w, plain)
	}
}

// Normal matrices: ‖(zI−A)⁻¹‖ = 1/dist(z, σ(A)) along a vertical line, and
// (zI − A)⁻¹b by the Schur form agrees with the diagonal solve.
func TestResolventNormal(t *testing.T) {
	a := op([][]float64{{-1, 0, 0}, {0, -2, 3}, {0, -3, -2}})
	eig := []complex128{-1, complex(-2, 3), complex(-2, -3)}
	s, _ := NewSchur(a)
	p, err := s.ResolventLine(bg, 0.5, -5, 5, 21, nil)
	if err != nil {
		t.Fatal(err)
	}
	for k, z := range p.Z {
		d := math.Inf(1)
		for _, l := range eig {
			d = math.Min(d, cmplx.Abs(z-l))
		}
		if relDiff(p.Norm[k], 1/d) > 1e-9 {
			t.Errorf("‖R(%v)‖ = %g, want %g", z, p.Norm[k], 1/d)
		}
	}
	b := []complex128{1, 2i, -1}
	z := complex(0.3, 1)
	x := make([]complex128, 3)
	if err := s.ResolventSolve(x, b, z); err != nil {
		t.Fatal(err)
	}
	r := solve.Residual(a, z, x, b)
	if cnorm(r) > 1e-14 {
		t.Errorf("residual %g", cnorm(r))
	}
	x2, rel, err := ResolventApply(a, z, b)
	if err != nil {
		t.Fatal(err)
	}
	for i := range x {
		if cmplx.Abs(x[i]-x2[i]) > 1e-14 || rel > 1e-14 {
			t.Errorf("ResolventApply x[%d] = %v, Schur %v (rel residual %g)", i, x2[i], x[i], rel)
		}
	}
	if err := s.ResolventSolve(x, b, -1); err == nil {
		t.Error("no error at an eigenvalue")
	}
}

// Closed forms for A = [−1 a; 0 −1]: ‖e^{tA}‖ = e^{−t}(at + √(a²t² + 4))/2,
// ω(A) = a/2 − 1, and Kreiss constant K = sup_x x‖R(x)‖ with
// ‖R(z)‖ = (|a| + √(a² + 4|z+1|²))/(2|z+1|²) maximised on the real axis.
func TestGrowthJordan2(t *testing.T) {
	a := 10.0
	A := op([][]float64{{-1, a}, {0, -1}})
	times := linspace(0, 3, 31)
	g, err := GrowthCurve(bg, A, times, &GrowthOptions{Eps: []float64{0.1}})
	if err != nil {
		t.Fatal(err)
	}
	exact := func(t float64) float64 { return math.Exp(-t) * (a*t + math.Sqrt(a*a*t*t+4)) / 2 }
	for k, tt := range times {
		if relDiff(g.Norm[k], exact(tt)) > 1e-13 {
			t.Errorf("‖e^{%gA}‖ = %.16g, want %.16g", tt, g.Norm[k], exact(tt))
		}
	}
	// Peak of the closed form: golden section on a fine grid of the formula.
	_, peak := goldenMax(exact, 0, 3, 1e-12, 200)
	if relDiff(g.Peak, peak) > 1e-10 {
		t.Errorf("peak %.15g, want %.15g", g.Peak, peak)
	}
	if relDiff(g.InitialSlope, a/2-1) > 1e-13 || g.Abscissa != -1 {
		t.Errorf("ω = %g (want %g), α = %g", g.InitialSlope, a/2-1, g.Abscissa)
	}
	// ‖e^{t*A}u0‖ = peak for the returned initial condition.
	var ta, e mat.Dense
	ta.Scale(g.PeakTime, A.m)
	if _, err := expo.Exp(&e, &ta); err != nil {
		t.Fatal(err)
	}
	u := mat.NewVecDense(2, nil)
	u.MulVec(&e, mat.NewVecDense(2, g.Initial))
	if relDiff(mat.Norm(u, 2), g.Peak) > 1e-10 {
		t.Errorf("‖e^{t*A}u0‖ = %g, peak %g", mat.Norm(u, 2), g.Peak)
	}
	resNorm := func(z complex128) float64 {
		w := cmplx.Abs(z + 1)
		return (a + math.Sqrt(a*a+4*w*w)) / (2 * w * w)
	}
	_, K := goldenMax(func(lx float64) float64 { x := math.Exp(lx); return x * resNorm(complex(x, 0)) }, -10, 10, 1e-13, 300)
	if relDiff(g.Kreiss.K, K) > 1e-7 {
		t.Errorf("Kreiss K = %.12g, closed form %.12g", g.Kreiss.K, K)
	}
	if !(g.Kreiss.K <= g.Peak*(1+1e-9) && g.Peak <= g.Upper) {
		t.Errorf("Kreiss bounds fail: K = %g, peak = %g, eNK = %g", g.Kreiss.K, g.Peak, g.Upper)
	}
	// α_ε from the closed-form resolvent norm: rightmost real x with
	// ‖R(x)‖ = 1/ε (the rightmost point lies on the real axis by symmetry
	// and monotonicity in |z+1|).
	eb := g.EpsBounds[0]
	lo, hi := -1.0, 100.0
	for hi-lo > 1e-14 {
		mid := (lo + hi) / 2
		if resNorm(complex(mid, 0)) >= 1/eb.Eps {
			lo = mid
		} else {
			hi = mid
		}
	}
	if math.Abs(eb.Alpha-lo) > 1e-10 {
		t.Errorf("α_ε = %.15g, closed form %.15g", eb.Alpha, lo)
	}
	if eb.Bound > g.Peak {
		t.Errorf("α_ε/ε = %g exceeds the peak %g", eb.Bound, g.Peak)
	}
}

// Normal matrices: σ_ε(A) is the union of ε-discs about the eigenvalues, so
// α_ε = α + ε (closed form).
func TestPseudoAbscissaNormal(t *testing.T) {
	a := op([][]float64{{-1, 4, 0}, {-4, -1, 0}, {0, 0, -1.5}})
	for _, eps := range []float64{1e-3, 0.3, 2} {
		r, err := PseudoAbscissa(bg, a, eps)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(r.Alpha-(-1+eps)) > 1e-9 {
			t.Errorf("ε=%g: α_ε = %.15g, want %.15g", eps, r.Alpha, -1+eps)
		}
	}
}

// Kreiss matrix theorem (Spijker, BIT 1991): K ≤ sup_t ‖e^{tA}‖ ≤ e·N·K,
// on seeded random stable non-normal matrices; also α_ε/ε ≤ sup ‖e^{tA}‖
// (Trefethen & Embree 2005, Thm 15.4).
func TestKreissTheoremRandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	for trial := 0; trial < 4; trial++ {
		n := 6 + 2*trial
		var a denseOp
		for {
			a = randomNonNormal(rng, n, -1.5, 4)
			if al, _ := SpectralAbscissa(a); al < -0.05 {
				break
			}
		}
		times := linspace(0, 12, 121)
		g, err := GrowthCurve(bg, a, times, &GrowthOptions{Eps: []float64{1e-2, 1e-1}})
		if err != nil {
			t.Fatal(err)
		}
		if !(g.Kreiss.K <= g.Peak*(1+1e-8)) || !(g.Peak <= g.Upper) {
			t.Errorf("n=%d: K = %g, sup ≈ %g, eNK = %g", n, g.Kreiss.K, g.Peak, g.Upper)
		}
		for _, b := range g.EpsBounds {
			if b.Bound > g.Peak*(1+1e-8) {
				t.Errorf("n=%d ε=%g: α_ε/ε = %g > sup ≈ %g", n, b.Eps, b.Bound, g.Peak)
			}
		}
		if g.Norm[len(times)-1] > g.Peak {
			t.Errorf("peak below last sample")
		}
	}
}

// α_ε of the Grcar matrix against the grid: every grid point with
// σ_min ≤ ε (σ_min checked against scipy in TestGrcarAgainstScipy) lies in
// σ_ε, so α_ε ≥ their largest real part, and the rightmost boundary point
// found must itself satisfy σ_min = ε.
func TestPseudoAbscissaGrcar(t *testing.T) {
	a := grcar(32)
	s, _ := NewSchur(a)
	r := Region{0, 3.5, 0, 3.5, 141, 141}
	p, err := s.Pseudo(bg, r, &GridOptions{Tol: 1e-10})
	if err != nil {
		t.Fatal(err)
	}
	for _, eps := range []float64{1e-1, 1e-3} {
		gridMax := math.Inf(-1)
		for i, x := range p.Re {
			for j := range p.Im {
				if p.At(i, j) <= eps {
					gridMax = math.Max(gridMax, x)
				}
			}
		}
		res, err := PseudoAbscissa(bg, a, eps)
		if err != nil {
			t.Fatal(err)
		}
		h := p.Re[1] - p.Re[0]
		if res.Alpha < gridMax-1e-12 || res.Alpha > gridMax+2*h {
			t.Errorf("ε=%g: α_ε = %.12g, grid says [%g, %g]", eps, res.Alpha, gridMax, gridMax+2*h)
		}
		if sg := s.SigmaMin(res.Z, 1e-12); math.Abs(sg-eps) > 1e-8*eps {
			t.Errorf("ε=%g: σ_min at the rightmost point %v is %g", eps, res.Z, sg)
		}
	}
}

// Progress and cancellation on the resolvent-norm grid.
func TestResolventNormsProgress(t *testing.T) {
	s, _ := NewSchur(grcar(30))
	zs := make([]complex128, 50)
	for k := range zs {
		zs[k] = complex(float64(k)/10, 1)
	}
	last, calls := 0, 0
	_, err := s.ResolventNorms(bg, zs, &GridOptions{Progress: func(done, total int) {
		calls++
		if done <= last || total != len(zs) {
			t.Errorf("progress %d/%d after %d", done, total, last)
		}
		last = done
	}})
	if err != nil || last != len(zs) || calls != len(zs) {
		t.Errorf("err %v, last %d, calls %d", err, last, calls)
	}
	ctx, cancel := context.WithCancel(bg)
	cancel()
	if _, err := s.ResolventNorms(ctx, zs, nil); err != context.Canceled {
		t.Errorf("cancelled: err = %v", err)
	}
}

// Weighted norms: with A = D⁻¹BD and W = D², ‖e^{tA}‖_W = ‖e^{tB}‖₂; for B
// normal with eigenvalues −1 ± 2i that is e^{−t} exactly (closed form),
// while the Euclidean norm of e^{tA} is larger.
func TestGrowthWeighted(t *testing.T) {
	d := []float64{1, 20}
	b := [][]float64{{-1, 2}, {-2, -1}}
	a := op([][]float64{{b[0][0], b[0][1] * d[1] / d[0]}, {b[1][0] * d[0] / d[1], b[1][1]}})
	times := []float64{0, 0.3, 1, 2}
	g, err := GrowthCurve(bg, a, times, &GrowthOptions{Weight: diagW{d}, NoKreiss: true})
	if err != nil {
		t.Fatal(err)
	}
	e, _ := GrowthCurve(bg, a, times, &GrowthOptions{NoKreiss: true})
	for k, tt := range times {
		if relDiff(g.Norm[k], math.Exp(-tt)) > 1e-13 {
			t.Errorf("‖e^{%gA}‖_W = %.16g, want e^{−t} = %.16g", tt, g.Norm[k], math.Exp(-tt))
		}
		if tt > 0 && e.Norm[k] <= g.Norm[k] {
			t.Errorf("Euclidean norm %g not above the weighted %g", e.Norm[k], g.Norm[k])
		}
	}
	s, _ := NewSchurWeighted(a, diagW{d})
	z := complex(0.5, 1)
	want := 1 / math.Min(cmplx.Abs(z-complex(-1, 2)), cmplx.Abs(z-complex(-1, -2)))
	if got := s.ResolventNorm(z); relDiff(got, want) > 1e-9 {
		t.Errorf("weighted ‖R(z)‖ = %g, want 1/dist = %g", got, want)
	}
}

// The fast tridiagonal solver against the dense one on the Dirichlet
// second difference tridiag(1, −2, 1), whose largest eigenvalue is
// −4 sin²(π/(2(k+1))) (closed form), and on a random tridiagonal.
func TestTridiagTopFast(t *testing.T) {
	k := 50
	a, b := make([]float64, k), make([]float64, k-1)
	for i := range a {
		a[i] = -2
	}
	for i := range b {
		b[i] = 1
	}
	th, s := tridiagTopFast(a, b)
	sn := math.Sin(math.Pi / float64(2*(k+1)))
	if math.Abs(th+4*sn*sn) > 1e-14 {
		t.Errorf("θ = %.17g, want %.17g", th, -4*sn*sn)
	}
	rng := rand.New(rand.NewPCG(5, 6))
	for i := range a {
		a[i] = rng.NormFloat64()
	}
	for i := range b {
		b[i] = rng.NormFloat64()
	}
	th, s = tridiagTopFast(a, b)
	th2, _, s2 := tridiagTop(a, b)
	dot := 0.0
	for i := range s {
		dot += s[i] * s2[i]
	}
	if math.Abs(th-th2) > 1e-13*math.Abs(th2) || math.Abs(math.Abs(dot)-1) > 1e-10 {
		t.Errorf("θ = %g vs %g, |⟨s, s₂⟩| = %g", th, th2, math.Abs(dot))
	}
}

// The Lanczos path of the numerical range (n > 64) on the Jordan block:
// r = ω = cos(π/(N+1)) (Haagerup & de la Harpe, Proc. AMS 1992).
func TestNumericalRadiusJordanLanczos(t *testing.T) {
	n := 100
	m := mat.NewDense(n, n, nil)
	for i := 0; i+1 < n; i++ {
		m.Set(i, i+1, 1)
	}
	nr, err := NumRange(denseOp{m}, nil, 6)
	if err != nil {
		t.Fatal(err)
	}
	want := math.Cos(math.Pi / float64(n+1))
	if relDiff(nr.Radius, want) > 1e-11 || relDiff(nr.Abscissa, want) > 1e-11 {
		t.Errorf("r = %.15g, ω = %.15g, want %.15g", nr.Radius, nr.Abscissa, want)
	}
	for k, z := range nr.Boundary {
		if math.Abs(cmplx.Abs(z)-want) > 1e-8 {
			t.Errorf("boundary point %d at |z| = %.12g", k, cmplx.Abs(z))
		}
	}
}

// Residual checks of the returned eigenvectors: ‖Ax − λx‖ and ‖yᴴA − λyᴴ‖.
func TestDenseSpectrumVectors(t *testing.T) {
	a := grcar(12)
	sp, err := DenseSpectrum(a)
	if err != nil {
		t.Fatal(err)
	}
	n := 12
	for k, l := range sp.Values {
		var rx, ry float64
		for i := 0; i < n; i++ {
			var ax, ya complex128
			for j := 0; j < n; j++ {
				ax += complex(a.m.At(i, j), 0) * sp.Right.At(j, k)
				ya += cmplx.Conj(sp.Left.At(j, k)) * complex(a.m.At(j, i), 0)
			}
			rx += math.Pow(cmplx.Abs(ax-l*sp.Right.At(i, k)), 2)
			ry += math.Pow(cmplx.Abs(ya-l*cmplx.Conj(sp.Left.At(i, k))), 2)
		}
		if math.Sqrt(rx) > 1e-13 || math.Sqrt(ry) > 1e-13 {
			t.Errorf("λ_%d: right residual %g, left residual %g", k, math.Sqrt(rx), math.Sqrt(ry))
		}
	}
}

// A cancelled context stops NumRangeContext: before the first angle, and
// part way through a sweep of many angles (whose full run takes seconds).
func TestNumRangeContextCancel(t *testing.T) {
	a := grcar(100)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if nr, err := NumRangeContext(ctx, a, nil, 16); !errors.Is(err, context.Canceled) || nr != nil {
		t.Errorf("cancelled before the start: %v, %v", nr, err)
	}
	ctx, cancel = context.WithCancel(context.Background())
	defer cancel()
	time.AfterFunc(30*time.Millisecond, cancel)
	if nr, err := NumRangeContext(ctx, a, nil, 4096); !errors.Is(err, context.Canceled) || nr != nil {
		t.Errorf("cancelled during the sweep: %v, %v", nr != nil, err)
	}
}

// The rounding thresholds by their definition: RoundingThreshold is
// n·u·‖RAR⁻¹‖_F. For A = [−1 4; 0 −2] and W = diag(1, 4) (R = diag(1, 2))
// RAR⁻¹ = [−1 2; 0 −2], ‖·‖_F = 3, so τ = 2·2⁻⁵³·3. A symmetric matrix has
// every eigenvalue condition 1 (Wilkinson 1965, §2.8), so the α allowance
// is τ itself; [−1 4; 0 −2] has eigenvalue condition √(1 + 16) for the
// rightmost −1 (left vector (1, 4)/√17 against right e₁: |yᵀx| = 1/√17).
func TestRoundingThresholds(t *testing.T) {
	a := op([][]float64{{-1, 4}, {0, -2}})
	tau, err := RoundingThreshold(a, diagW{[]float64{1, 2}}) // the factor R
	if err != nil {
		t.Fatal(err)
	}
	if want := 2 * 0x1p-53 * 3.0; relDiff(tau, want) > 1e-15 {
		t.Errorf("τ = %g, want %g", tau, want)
	}
	sp, err := DenseSpectrum(a)
	if err != nil {
		t.Fatal(err)
	}
	fn := math.Sqrt(1 + 16 + 4)
	tol, ill := sp.AbscissaError()
	if want := 2 * 0x1p-53 * fn * math.Sqrt(17); ill || relDiff(tol, want) > 1e-12 || relDiff(sp.Rounding, 2*0x1p-53*fn) > 1e-15 {
		t.Errorf("α allowance %g (ill %v), want %g; rounding %g", tol, ill, want, sp.Rounding)
	}
	sym, err := DenseSpectrum(op([][]float64{{-1, 0}, {0, -2}}))
	if err != nil {
		t.Fatal(err)
	}
	if tol, _ := sym.AbscissaError(); relDiff(tol, 2*0x1p-53*math.Sqrt(5)) > 1e-12 {
		t.Errorf("symmetric: α allowance %g, want τ = %g", tol, 2*0x1p-53*math.Sqrt(5))
	}
}

// A peak between the first two samples: with the Jordan block's closed form
// (see TestGrowthJordan2; peak ≈ 3.7 near t = 0.9 for a = 10) sampled only at
// t = 0, 5, 10, the largest sample is ‖e^{0A}‖ = 1; ω(A) = 4 > 0 says the
// curve rises first, and the refinement between t = 0 and 5 must find the
// closed form's peak.
func TestGrowthPeakBeforeFirstSample(t *testing.T) {
	a := 10.0
	A := op([][]float64{{-1, a}, {0, -1}})
	g, err := GrowthCurve(bg, A, []float64{0, 5, 10}, &GrowthOptions{NoKreiss: true})
	if err != nil {
		t.Fatal(err)
	}
	exact := func(t float64) float64 { return math.Exp(-t) * (a*t + math.Sqrt(a*a*t*t+4)) / 2 }
	tp, peak := goldenMax(exact, 0, 5, 1e-12, 200)
	if relDiff(g.Peak, peak) > 1e-8 || math.Abs(g.PeakTime-tp) > 1e-3 {
		t.Errorf("peak %.12g at t = %.6g, closed form %.12g at t = %.6g", g.Peak, g.PeakTime, peak, tp)
	}
}

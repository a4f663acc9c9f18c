package spectra

import (
	"math"
	"sort"
	"testing"

	"semiflow/numerics/linop"
)

// convDiff1D is ν d²/dx² − c d/dx on (0, 1) with Dirichlet ends, central
// differences on N interior points: tridiagonal Toeplitz with sub-diagonal
// lo = ν/h² + c/(2h), diagonal −2ν/h², super-diagonal up = ν/h² − c/(2h).
func convDiff1D(n int, nu, c float64) (*linop.CSR, float64, float64, float64) {
	h := 1 / float64(n+1)
	lo, d, up := nu/(h*h)+c/(2*h), -2*nu/(h*h), nu/(h*h)-c/(2*h)
	var is, js []int
	var vs []float64
	for i := 0; i < n; i++ {
		is, js, vs = append(is, i), append(js, i), append(vs, d)
		if i > 0 {
			is, js, vs = append(is, i), append(js, i-1), append(vs, lo)
		}
		if i+1 < n {
			is, js, vs = append(is, i), append(js, i+1), append(vs, up)
		}
	}
	return linop.NewCSRFromTriplets(n, n, is, js, vs), lo, d, up
}

// Closed form: a tridiagonal Toeplitz matrix (lo, d, up) with lo·up > 0 has
// eigenvalues d + 2√(lo·up) cos(kπ/(N+1)), k = 1..N; the eigenvalues of a
// Kronecker sum X ⊕ Y are the sums λ_j(X) + μ_k(Y).
func convDiffEigs(nx, ny int, lx, dx, ux, ly, dy, uy float64) []float64 {
	var ev []float64
	for j := 1; j <= nx; j++ {
		for k := 1; k <= ny; k++ {
			ev = append(ev, dx+2*math.Sqrt(lx*ux)*math.Cos(float64(j)*math.Pi/float64(nx+1))+
				dy+2*math.Sqrt(ly*uy)*math.Cos(float64(k)*math.Pi/float64(ny+1)))
		}
	}
	sort.Sort(sort.Reverse(sort.Float64Slice(ev)))
	return ev
}

func TestRightmostConvectionDiffusion(t *testing.T) {
	nx, ny := 30, 24
	x, lx, dx, ux := convDiff1D(nx, 0.05, 1)
	y, ly, dy, uy := convDiff1D(ny, 0.05, 0.3)
	a := linop.NewKronSum(x, y)
	want := convDiffEigs(nx, ny, lx, dx, ux, ly, dy, uy)
	sp, err := Rightmost(bg, a, &EigsOptions{Count: 5, ShiftInvert: true, Shift: 0})
	if err != nil {
		t.Fatal(err)
	}
	for k := 0; k < 5; k++ {
		if math.Abs(real(sp.Values[k])-want[k]) > 1e-8*math.Abs(want[k]) || math.Abs(imag(sp.Values[k])) > 1e-8 {
			t.Errorf("shift-invert λ_%d = %v, closed form %g", k, sp.Values[k], want[k])
		}
		if sp.Residual[k] > 1e-6 {
			t.Errorf("residual %g", sp.Residual[k])
		}
	}
	if sp.Abscissa != real(sp.Values[0]) {
		t.Errorf("abscissa %g", sp.Abscissa)
	}
}

// Plain Krylov–Schur (no inversion) on a 1-D operator: the rightmost
// eigenvalues of −(ν D₂ − c D₁) are the largest-magnitude end of the
// spectrum, which Arnoldi finds quickly; compared with the closed form.
func TestRightmostPlain(t *testing.T) {
	n := 200
	a, lo, d, up := convDiff1D(n, 1, 20)
	neg := &linop.Scaled{Alpha: -1, A: a}
	sp, err := Rightmost(bg, neg, &EigsOptions{Count: 4, Krylov: 40})
	if err != nil {
		t.Fatal(err)
	}
	for k := 0; k < 4; k++ {
		// −λ for the most negative λ = d + 2√(lo·up) cos(kπ/(N+1)), k = N, N−1, ...
		want := -(d + 2*math.Sqrt(lo*up)*math.Cos(float64(n-k)*math.Pi/float64(n+1)))
		if math.Abs(real(sp.Values[k])-want) > 1e-8*math.Abs(want) {
			t.Errorf("λ_%d = %v, closed form %g (residual %g)", k, sp.Values[k], want, sp.Residual[k])
		}
	}
}

// Toh & Trefethen (SIAM J. Sci. Comput. 1996): σ_min(zI − A) ≤
// σ_min(zĨ − H̃_m), with equality once the Krylov space is all of R^n.
func TestPseudoKrylovInside(t *testing.T) {
	a := grcar(40)
	r := Region{-1, 3, -3, 3, 7, 6}
	dense, err := Pseudo(bg, a, r, &GridOptions{Tol: 1e-12})
	if err != nil {
		t.Fatal(err)
	}
	for _, m := range []int{15, 40} {
		kr, err := PseudoKrylov(bg, a, r, m, &GridOptions{Tol: 1e-12})
		if err != nil {
			t.Fatal(err)
		}
		for k := range kr.Sigma {
			if kr.Sigma[k] < dense.Sigma[k]*(1-1e-8) {
				t.Errorf("m=%d point %d: Krylov σ %g below the true %g", m, k, kr.Sigma[k], dense.Sigma[k])
			}
			if m == 40 && relDiff(kr.Sigma[k], dense.Sigma[k]) > 1e-6 && dense.Sigma[k] > 1e-10 {
				t.Errorf("m=n point %d: Krylov σ %g, dense %g", k, kr.Sigma[k], dense.Sigma[k])
			}
		}
	}
}

// Closed form: for the N×N tridiagonal Toeplitz (lo, d, up) the symmetric
// part is tridiagonal Toeplitz (m, d, m) with m = (lo+up)/2, whose largest
// eigenvalue is d + 2|m|cos(π/(N+1)). N = 3000 exercises the Lanczos path.
func TestNumericalAbscissaLarge(t *testing.T) {
	n := 3000
	a, lo, d, up := convDiff1D(n, 1, 50)
	got, err := NumericalAbscissa(a, nil)
	if err != nil {
		t.Fatal(err)
	}
	want := d + 2*math.Abs((lo+up)/2)*math.Cos(math.Pi/float64(n+1))
	if relDiff(got, want) > 1e-9 {
		t.Errorf("ω = %.15g, closed form %.15g", got, want)
	}
}

// linop's weights are accepted as weights here.
var (
	_ Weight = (*linop.DiagWeight)(nil)
	_ Weight = (*linop.SPDWeight)(nil)
)

// The numerical abscissa in linop's diagonal weight agrees with diagW.
func TestLinopWeight(t *testing.T) {
	d := []float64{1, 10, 0.1}
	w2 := make([]float64, 3)
	for i := range d {
		w2[i] = d[i] * d[i]
	}
	lw, err := linop.NewDiagWeight(w2)
	if err != nil {
		t.Fatal(err)
	}
	a := op([][]float64{{-1, 20, 0}, {-0.2, -1, 0}, {0, 0, -3}})
	x, err := NumericalAbscissa(a, lw)
	if err != nil {
		t.Fatal(err)
	}
	y, _ := NumericalAbscissa(a, diagW{d})
	if relDiff(x, y) > 1e-14 {
		t.Errorf("ω_W = %g with linop.DiagWeight, %g with diagW", x, y)
	}
}

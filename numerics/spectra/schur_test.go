package spectra

import (
	"context"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"sort"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// Residual check: A = Z T Zᴴ with Z unitary and T upper triangular.
func TestSchurResidual(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, n := range []int{1, 2, 5, 30} {
		a := randomNonNormal(rng, n, 0, 3)
		s, err := NewSchur(a)
		if err != nil {
			t.Fatal(err)
		}
		var maxRes, maxOrth float64
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				var zt, zz complex128
				for k := 0; k < n; k++ {
					var ztk complex128
					for l := 0; l < n; l++ {
						ztk += s.Z[i*n+l] * s.T[l*n+k]
					}
					zt += ztk * cmplx.Conj(s.Z[j*n+k])
					zz += cmplx.Conj(s.Z[k*n+i]) * s.Z[k*n+j]
				}
				maxRes = math.Max(maxRes, cmplx.Abs(zt-complex(a.m.At(i, j), 0)))
				if i == j {
					zz -= 1
				}
				maxOrth = math.Max(maxOrth, cmplx.Abs(zz))
				if i > j && s.T[i*n+j] != 0 {
					t.Fatalf("n=%d: T(%d,%d) = %v, want 0", n, i, j, s.T[i*n+j])
				}
			}
		}
		if maxRes > 1e-12*float64(n) || maxOrth > 1e-13*float64(n) {
			t.Errorf("n=%d: ‖A − ZTZᴴ‖max = %g, ‖ZᴴZ − I‖max = %g", n, maxRes, maxOrth)
		}
	}
}

// Normal matrices: ‖(zI − A)⁻¹‖ = 1/dist(z, σ(A)), i.e. σ_min(zI − A) =
// dist(z, σ(A)) (closed form, spectral theorem). A rotation-scaling block
// [a −b; b a] is normal with eigenvalues a ± ib.
func TestSigmaMinNormal(t *testing.T) {
	a := op([][]float64{
		{-1, -2, 0, 0},
		{2, -1, 0, 0},
		{0, 0, -3, 0},
		{0, 0, 0, 0.5},
	})
	eig := []complex128{complex(-1, 2), complex(-1, -2), -3, 0.5}
	s, err := NewSchur(a)
	if err != nil {
		t.Fatal(err)
	}
	for _, z := range []complex128{0, complex(1, 1), complex(-2, 0.3), complex(-1, 2.5), 10i} {
		want := math.Inf(1)
		for _, l := range eig {
			want = math.Min(want, cmplx.Abs(z-l))
		}
		got := s.SigmaMin(z, 1e-12)
		if relDiff(got, want) > 1e-9 {
			t.Errorf("σ_min at %v = %.15g, want dist = %.15g", z, got, want)
		}
	}
}

// Grcar matrix against Debian scipy (testdata/spectra/make_grcar.py):
// eigenvalues from LAPACK dgeev, σ_min on a coarse grid from zgesdd.
func TestGrcarAgainstScipy(t *testing.T) {
	for _, c := range loadGrcar(t) {
		a := grcar(c.N)
		s, err := NewSchur(a)
		if err != nil {
			t.Fatal(err)
		}
		if c.N <= 32 { // eigenvalues of larger Grcar matrices are too ill-conditioned to compare
			got := s.Eigenvalues()
			want := make([]complex128, c.N)
			for i := range want {
				want[i] = complex(c.EigRe[i], c.EigIm[i])
			}
			sortC(got)
			sortC(want)
			for i := range got {
				if cmplx.Abs(got[i]-want[i]) > 1e-8 {
					t.Errorf("n=%d eigenvalue %d: %v, scipy %v", c.N, i, got[i], want[i])
				}
			}
		}
		r := Region{Re0: c.Re[0], Re1: c.Re[len(c.Re)-1], Im0: c.Im[0], Im1: c.Im[len(c.Im)-1], NRe: len(c.Re), NIm: len(c.Im)}
		ps, err := s.Pseudo(context.Background(), r, &GridOptions{Tol: 1e-10, Levels: []float64{1e-2}})
		if err != nil {
			t.Fatal(err)
		}
		for i := range c.Re {
			for j := range c.Im {
				// Relative 1e-7, or absolute n·u·‖G‖ for σ at rounding level
				// (a backward-stable SVD only resolves σ to about u‖A‖).
				got, want := ps.At(i, j), c.Sigma[i][j]
				if d := relDiff(got, want); d > 1e-7 && math.Abs(got-want) > float64(c.N)*4*0x1p-53 {
					t.Errorf("n=%d σ_min(%g%+gi) = %.12g, scipy %.12g (rel %g)", c.N, c.Re[i], c.Im[j], ps.At(i, j), c.Sigma[i][j], d)
				}
			}
		}
		if len(ps.Contours) != 1 || len(ps.Contours[0].Lines) == 0 {
			t.Errorf("n=%d: no ε = 1e-2 contour", c.N)
		}
	}
}

func sortC(x []complex128) {
	sort.Slice(x, func(i, j int) bool {
		if math.Abs(real(x[i])-real(x[j])) > 1e-6 {
			return real(x[i]) < real(x[j])
		}
		return imag(x[i]) < imag(x[j])
	})
}

// Marching squares on a function with known level sets: σ(z) = |z| on a
// grid gives one closed contour that is a circle of radius ε.
func TestContourCircle(t *testing.T) {
	re := linspace(-2, 2, 41)
	im := linspace(-2, 2, 41)
	f := make([]float64, len(re)*len(im))
	for i, x := range re {
		for j, y := range im {
			f[i*len(im)+j] = math.Hypot(x, y)
		}
	}
	cs := contours(re, im, f, []float64{1, 0.5})
	for _, c := range cs {
		if len(c.Lines) != 1 || !c.Lines[0].Closed {
			t.Fatalf("level %g: %d lines (closed %v), want one closed", c.Level, len(c.Lines), len(c.Lines) > 0 && c.Lines[0].Closed)
		}
		for k := range c.Lines[0].Re {
			r := math.Hypot(c.Lines[0].Re[k], c.Lines[0].Im[k])
			if math.Abs(r-c.Level) > 0.02 {
				t.Errorf("level %g: point at radius %g", c.Level, r)
			}
		}
	}
}

func TestPseudoCancel(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	_, err := Pseudo(ctx, grcar(50), Region{-1, 3, -3, 3, 20, 20}, nil)
	if err != context.Canceled {
		t.Fatalf("err = %v, want context.Canceled", err)
	}
}

func TestPseudoPanics(t *testing.T) {
	mustPanic(t, ErrShape, func() { NewSchur(denseOp{mat.NewDense(2, 3, nil)}) })
	mustPanic(t, ErrOption, func() { Pseudo(context.Background(), grcar(4), Region{1, 0, 0, 1, 5, 5}, nil) })
}

func mustPanic(t *testing.T, want error, f func()) {
	t.Helper()
	defer func() {
		t.Helper()
		if r := recover(); r != want {
			t.Errorf("panic %v, want %v", r, want)
		}
	}()
	f()
}

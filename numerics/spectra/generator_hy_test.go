package spectra

import (
	"context"
	"math/rand/v2"
	"strconv"
	"testing"
	"time"

	"gonum.org/v1/gonum/mat"
)

// convDiff returns the n×n central-difference convection–diffusion matrix
// ν D2 − c D1 on (0, 1) with Dirichlet ends (a standard non-normal test
// operator; its eigenvalues are real and its numerical range reaches far
// right of them when c/ν is large).
func convDiff(n int, nu, c float64) *mat.Dense {
	h := 1 / float64(n+1)
	m := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		m.Set(i, i, -2*nu/(h*h))
		if i+1 < n {
			m.Set(i, i+1, nu/(h*h)-c/(2*h))
			m.Set(i+1, i, nu/(h*h)+c/(2*h))
		}
	}
	return m
}

// ‖R(λ)^p‖₂ through the Hessenberg form and Golub–Kahan–Lanczos against
// the SVD of the dense R(λ)^p (gonum), and the solves against LU: a random
// non-normal matrix and a convection–diffusion one, p = 1..4.
func TestResolventPowerNormsHess(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for name, m := range map[string]*mat.Dense{
		"random":   randomNonNormal(rng, 60, -1, 3).m,
		"convdiff": convDiff(80, 0.05, 1),
		"grcar":    grcar(50).m,
	} {
		t.Run(name, func(t *testing.T) {
			n, _ := m.Dims()
			h, err := hessenbergOf(bg, m)
			if err != nil {
				t.Fatal(err)
			}
			f := newHessLU(n)
			sp, _ := denseSpectrum(m)
			for _, lam := range []float64{sp.Abscissa + 0.01, sp.Abscissa + 1, sp.Abscissa + 100} {
				got, _, err := resolventPowerNormsHess(bg, f, h, lam, 4)
				if err != nil {
					t.Fatal(err)
				}
				sh := mat.NewDense(n, n, nil)
				sh.Scale(-1, m)
				for i := 0; i < n; i++ {
					sh.Set(i, i, sh.At(i, i)+lam)
				}
				var r mat.Dense
				if err := r.Inverse(sh); err != nil {
					t.Fatal(err)
				}
				pw := mat.DenseCopyOf(&r)
				for p := 1; p <= 4; p++ {
					if p > 1 {
						var q mat.Dense
						q.Mul(pw, &r)
						pw = &q
					}
					want := norm2(pw)
					if e := relDiff(got[p-1], want); !(e <= 1e-6) {
						t.Errorf("λ = %g, p = %d: ‖R^p‖ = %.12g, SVD %.12g (relative %.2g)", lam, p, got[p-1], want, e)
					}
				}
			}
		})
	}
}

// The Hille–Yosida sampling stops within 0.5 s of a cancellation: a
// context cancelled 50 ms into the samples of a generator report on the
// 300×300 Grcar matrix (not dissipative) without a work budget.
func TestGeneratorHYCancel(t *testing.T) {
	m := grcar(300).m
	ctx, cancel := context.WithCancel(context.Background())
	var start time.Time
	opt := &GeneratorOptions{Progress: func(done, total int) {
		if done == 1 {
			start = time.Now()
			time.AfterFunc(50*time.Millisecond, cancel)
		}
	}}
	_, err := Generator(ctx, denseOp{m}, opt)
	if err == nil {
		t.Skip("finished before the cancellation")
	}
	if err != context.Canceled {
		t.Fatalf("error %v, want context.Canceled", err)
	}
	if d := time.Since(start) - 50*time.Millisecond; d > 500*time.Millisecond {
		t.Errorf("stopped %v after the cancellation", d)
	}
}

// A work budget leaves λ out, says so, and keeps both ends of the range.
func TestGeneratorHYBudget(t *testing.T) {
	m := grcar(100).m
	full, err := Generator(bg, denseOp{m}, nil)
	if err != nil {
		t.Fatal(err)
	}
	cut, err := Generator(bg, denseOp{m}, &GeneratorOptions{Work: 1})
	if err != nil {
		t.Fatal(err)
	}
	if full.Skipped != 0 || cut.Skipped != 40-2 {
		t.Errorf("skipped %d without a budget, %d with one (want 0 and 38)", full.Skipped, cut.Skipped)
	}
	if !(cut.M <= full.M) || !(cut.M >= 1) {
		t.Errorf("M = %g with the budget, %g without", cut.M, full.M)
	}
	t.Logf("M = %.6g with 2 λ, %.6g with 40; %s", cut.M, full.M, cut.Sampled)
}

// Generator on Grcar matrices of order 254 and 400 (the orders that took
// 18–39 s before the Hessenberg route), without a budget.
func BenchmarkGenerator(b *testing.B) {
	for _, n := range []int{254, 400} {
		m := grcar(n)
		b.Run(strconv.Itoa(n), func(b *testing.B) {
			c0 := cpuSeconds()
			for b.Loop() {
				if _, err := Generator(bg, m, nil); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric((cpuSeconds()-c0)/float64(b.N), "cpu-s/op")
		})
	}
}

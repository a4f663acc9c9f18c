package spectra

import (
	"errors"
	"strings"
	"testing"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// TestOrder1e10Guarded: the Kronecker sum of two convection–diffusion
// operators of order 10⁵ has order 10¹⁰, so one work vector is 80 GB. The
// large-operator analyses ask the memory guard before making their work
// vectors and fail with its message instead of ending the process. By
// arithmetic, 4 vectors × 10¹⁰ × 8 B = 3.2e11 B ≈ 298 GiB.
func TestOrder1e10Guarded(t *testing.T) {
	x, _, _, _ := convDiff1D(100_000, 1, 1)
	k := linop.NewKronSum(x, x)
	if n, _ := k.Dims(); n != 1e10 {
		t.Fatalf("order %d", n)
	}
	old := memguard.SetLimit(12 << 30)
	defer memguard.SetLimit(old)
	region := Region{Re0: -3, Re1: 0, Im0: -1, Im1: 1, NRe: 3, NIm: 3}
	for name, run := range map[string]func() error{
		"numerical abscissa": func() error { _, err := NumericalAbscissa(k, nil); return err },
		"rightmost":          func() error { _, err := Rightmost(bg, k, &EigsOptions{Count: 2}); return err },
		"pseudospectra":      func() error { _, err := PseudoKrylov(bg, k, region, 20, nil); return err },
		"growth":             func() error { _, err := GrowthEstimate(bg, k, []float64{0, 1}, 0, 0, nil); return err },
	} {
		t.Run(name, func(t *testing.T) {
			err := run()
			if !errors.Is(err, memguard.ErrTooLarge) || !strings.Contains(err.Error(), "of order 10000000000) needs") || !strings.Contains(err.Error(), "limit is 12 GiB") {
				t.Errorf("%s: %v, want the memory guard's refusal of vectors of order 10000000000", name, err)
			}
		})
	}
	if err := func() error { _, err := NumericalAbscissa(k, nil); return err }(); !strings.Contains(err.Error(), "(4 vectors of order 10000000000) needs 298 GiB") {
		t.Errorf("numerical abscissa: %v, want 4 vectors needing 298 GiB", err)
	}
	// A sum's products hold one more vector of order n (linop.Scratch):
	// 5 × 10¹⁰ × 8 B = 4e11 B ≈ 373 GiB.
	sum := &linop.Sum{Terms: []linop.Operator{k, k}}
	if _, err := NumericalAbscissa(sum, nil); err == nil || !strings.Contains(err.Error(), "(5 vectors of order 10000000000) needs 373 GiB") {
		t.Errorf("numerical abscissa of a sum: %v, want 5 vectors needing 373 GiB", err)
	}
}

// TestResolventApplyGuarded: (zI − A)⁻¹b holds six complex vectors of
// order n (the solution, the correction, the residual and the temporaries
// of a residual) and the temporaries of A's products. A Kronecker sum of
// order 10⁶ plus a diagonal (one temporary for the sum) needs
// 10⁶·(6·16 + 8) B ≈ 99 MiB, refused under a 64 MiB limit before the
// factorisation starts (by arithmetic).
func TestResolventApplyGuarded(t *testing.T) {
	x, _, _, _ := convDiff1D(1000, 1, 1)
	a := &linop.Sum{Terms: []linop.Operator{linop.NewKronSum(x, x), &linop.Diag{D: make([]float64, 1e6)}}}
	b := make([]complex128, 1e6)
	old := memguard.SetLimit(64 << 20)
	defer memguard.SetLimit(old)
	_, _, err := ResolventApply(a, 1, b)
	if !errors.Is(err, memguard.ErrTooLarge) || !strings.Contains(err.Error(), "(6 complex vectors of order 1000000) needs 99 MiB") {
		t.Errorf("ResolventApply: %v, want the guard's refusal of 99 MiB", err)
	}
}

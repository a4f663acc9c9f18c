package spectra

import (
	"context"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/grid"
	"semiflow/numerics/linop"
)

// TestPseudoAbscissaStiffNonNormal guards the boundary walk on a stiff,
// strongly non-normal operator: J ⊕ νD², with J = [[0, −1], [0, 0]] and D²
// the Chebyshev second derivative with Dirichlet ends (23 interior points,
// ν = 0.01). Its numerical range is hundreds of units wide while σ_ε near
// the imaginary axis is thin, so a walk with steps scaled to W(A) jumps
// over it. The checks are self-contained (common practice, no published
// values): the returned point lies on the ε-level set; when σ_min(0) < ε
// the abscissa is ≥ 0 (0 ∈ σ_ε); and a fine scan of the real axis from
// ω(A) + ε down to α_ε finds no point of σ_ε to the right of α_ε.
func TestPseudoAbscissaStiffNonNormal(t *testing.T) {
	c, err := grid.NewChebyshev(-1, 1, 24)
	if err != nil {
		t.Fatal(err)
	}
	d2 := mat.DenseCopyOf(c.Interior(c.Diff2()).Mat())
	d2.Scale(0.01, d2)
	j := linop.NewDense(mat.NewDense(2, 2, []float64{0, -1, 0, 0}))
	a, err := linop.ToDense(&linop.KronSum{X: j, Y: linop.NewDense(d2)})
	if err != nil {
		t.Fatal(err)
	}
	op := linop.NewDense(a)
	s, err := NewSchur(op)
	if err != nil {
		t.Fatal(err)
	}
	om, err := NumericalAbscissa(op, nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, eps := range []float64{1e-3, 3e-3, 1e-2} {
		r, err := PseudoAbscissa(context.Background(), op, eps)
		if err != nil {
			t.Fatal(err)
		}
		if sg := s.SigmaMin(r.Z, 1e-12); math.Abs(sg-eps) > 1e-6*eps {
			t.Errorf("ε=%g: σ_min at the returned point %v is %g, not ε", eps, r.Z, sg)
		}
		if s.SigmaMin(0, 1e-12) < eps && r.Alpha < 0 {
			t.Errorf("ε=%g: 0 ∈ σ_ε but α_ε = %g < 0", eps, r.Alpha)
		}
		h := eps / 8
		for x := om + eps; x > r.Alpha+h; x -= h {
			if sg := s.SigmaMin(complex(x, 0), 1e-10); sg < eps*(1-1e-8) {
				t.Errorf("ε=%g: σ_min(%g) = %g < ε to the right of α_ε = %g", eps, x, sg, r.Alpha)
				break
			}
		}
	}
}

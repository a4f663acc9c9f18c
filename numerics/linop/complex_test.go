package linop

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// phiRef is the realification [[B, −C], [C, B]] written out entry by entry,
// the definition the Complex type must agree with.
func phiRef(b, c *mat.Dense) *mat.Dense {
	r, k := b.Dims()
	out := mat.NewDense(2*r, 2*k, nil)
	for i := 0; i < r; i++ {
		for j := 0; j < k; j++ {
			out.Set(i, j, b.At(i, j))
			out.Set(i, k+j, -c.At(i, j))
			out.Set(r+i, j, c.At(i, j))
			out.Set(r+i, k+j, b.At(i, j))
		}
	}
	return out
}

func TestComplexRealification(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	b, c := randDense(rng, 5, 4), randDense(rng, 5, 4)
	zero := mat.NewDense(5, 4, nil)
	sb, sc := randSparse(rng, 5, 4, 9), randSparse(rng, 5, 4, 7)
	db, _ := sb.ToDense()
	dc, _ := sc.ToDense()
	cases := []struct {
		name string
		a    *Complex
		b, c *mat.Dense
	}{
		{"dense B + iC", NewComplex(NewDense(b), NewDense(c)), b, c},
		{"real part only", NewComplex(NewDense(b), nil), b, zero},
		{"imaginary part only", NewComplex(nil, NewDense(c)), zero, c},
		{"sparse parts", NewComplex(sb, sc), db, dc},
		{"sum and scaled parts", NewComplex(&Sum{Terms: []Operator{sb, NewDense(b)}}, &Scaled{Alpha: 2, A: sc}),
			func() *mat.Dense { var m mat.Dense; m.Add(db, b); return &m }(),
			func() *mat.Dense { var m mat.Dense; m.Scale(2, dc); return &m }()},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			ref := phiRef(tc.b, tc.c)
			checkAgainst(t, tc.name, tc.a, ref)
			d, err := tc.a.ToDense()
			if err != nil || !mat.EqualApprox(d, ref, 1e-14) {
				t.Errorf("ToDense differs from [[B, −C], [C, B]] (err %v)", err)
			}
			// Φ(A)[x; y] is [Re; Im] of (B + iC)(x + iy), by complex arithmetic.
			r, k := tc.b.Dims()
			x := randVec(rng, 2*k)
			got := make([]float64, 2*r)
			tc.a.Apply(got, x)
			for i := 0; i < r; i++ {
				var s complex128
				for j := 0; j < k; j++ {
					s += complex(tc.b.At(i, j), tc.c.At(i, j)) * complex(x[j], x[k+j])
				}
				if cmplx.Abs(s-complex(got[i], got[r+i])) > 1e-12*(1+cmplx.Abs(s)) {
					t.Fatalf("row %d: Φ(A)x gives %v, complex product %v", i, complex(got[i], got[r+i]), s)
				}
			}
		})
	}
	t.Run("scratch", func(t *testing.T) {
		if got := Scratch(NewComplex(NewDense(b), NewDense(c))); got != 1 {
			t.Errorf("Scratch of B + iC = %d vectors, want 1 (the temporary of one part)", got)
		}
		if got := Scratch(NewComplex(NewDense(b), nil)); got != 0 {
			t.Errorf("Scratch of a real part alone = %d, want 0", got)
		}
	})
}

// TestComplexWeight: diag(W, W) on [Re x; Im x] gives √(x* W x), computed
// here in complex arithmetic, and R⁻¹ undoes R.
func TestComplexWeight(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	m := randDense(rng, 4, 4)
	var spd mat.SymDense
	spd.SymOuterK(1, m)
	for i := 0; i < 4; i++ {
		spd.SetSym(i, i, spd.At(i, i)+1)
	}
	sw, err := NewSPDWeight(&spd)
	if err != nil {
		t.Fatal(err)
	}
	dw, _ := NewDiagWeight([]float64{1, 2, 3, 4})
	for _, w := range []Weight{sw, dw} {
		cw := ComplexWeight{W: w}
		x := randVec(rng, 8)
		var q complex128 // x* W x
		for i := 0; i < 4; i++ {
			for j := 0; j < 4; j++ {
				wij := spd.At(i, j)
				if w == Weight(dw) {
					wij = 0
					if i == j {
						wij = float64(i + 1)
					}
				}
				q += cmplx.Conj(complex(x[i], x[4+i])) * complex(wij, 0) * complex(x[j], x[4+j])
			}
		}
		if got, want := cw.Norm(x), math.Sqrt(real(q)); math.Abs(got-want) > 1e-13*want {
			t.Errorf("‖x‖ = %.15g, √(x*Wx) = %.15g", got, want)
		}
		if math.Abs(imag(q)) > 1e-12*real(q) {
			t.Errorf("x*Wx = %v is not real for a real symmetric W", q)
		}
		rx, back := make([]float64, 8), make([]float64, 8)
		cw.Factor(rx, x, false)
		cw.FactorSolve(back, rx, false)
		for i := range x {
			if math.Abs(back[i]-x[i]) > 1e-12 {
				t.Fatalf("R⁻¹Rx ≠ x at %d", i)
			}
		}
	}
}

package linop

import (
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// A product of four factors with inner dimensions 5, 6 and 5 reuses its two
// temporaries at different lengths; the reference is gonum's dense product.
func TestProductRectangularChain(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	f0, f1, f2, f3 := randDense(rng, 6, 5), randDense(rng, 5, 6), randDense(rng, 6, 5), randDense(rng, 5, 4)
	var p01, p012, ref mat.Dense
	p01.Mul(f0, f1)
	p012.Mul(&p01, f2)
	ref.Mul(&p012, f3)
	p := &Product{Factors: []Operator{NewDense(f0), CSRFromDense(f1, 0), NewDense(f2), NewDense(f3)}}
	for range 3 { // the second and third runs take pooled temporaries
		checkAgainst(t, "Product(6×5·5×6·6×5·5×4)", p, &ref)
	}
}

// Composite operators keep their temporaries between products: after the
// first product neither Apply nor ApplyT allocates, and Scratch counts the
// vectors they hold.
func TestScratchReused(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	const n = 40
	d := NewDense(randDense(rng, n, n))
	diag := &Diag{D: randVec(rng, n)}
	w, err := NewDiagWeight(randPositive(rng, n))
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name    string
		op      Operator
		scratch int
	}{
		{"Dense", d, 0},
		{"Sum", &Sum{Terms: []Operator{d, diag}}, 1},
		{"Sum of one term", &Sum{Terms: []Operator{d}}, 0},
		{"Sum of sums", &Sum{Terms: []Operator{d, &Sum{Terms: []Operator{diag, d}}}}, 2},
		{"Scaled sum", &Scaled{Alpha: 2, A: &Sum{Terms: []Operator{d, diag}}}, 1},
		{"Product of two", &Product{Factors: []Operator{d, diag}}, 1},
		{"Product of three", &Product{Factors: []Operator{d, diag, d}}, 2},
		{"weighted adjoint", &Adjoint{A: d, W: w}, 1},
		{"adjoint", &Adjoint{A: d}, 0},
		{"similarity", &Similarity{A: d, W: w}, 1},
	}
	x, y := randVec(rng, n), make([]float64, n)
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if got := Scratch(c.op); got != c.scratch {
				t.Errorf("Scratch = %d, want %d", got, c.scratch)
			}
			c.op.Apply(y, x)
			c.op.ApplyT(y, x)
			if a := testing.AllocsPerRun(20, func() { c.op.Apply(y, x); c.op.ApplyT(y, x) }); a > 0 {
				t.Errorf("%.1f allocations per Apply and ApplyT after the first", a)
			}
		})
	}
}

// A Kronecker sum whose X has no CSR form moves a column of order nx and
// its image: 2·nx floats, less than one vector of order nx·ny.
func TestScratchKronSum(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	x := NewDense(randDense(rng, 3, 3))
	y := &Sum{Terms: []Operator{NewDense(randDense(rng, 7, 7)), Identity(7)}}
	k := NewKronSum(x, y)
	if got := k.ScratchFloats(); got != 2*3+7 {
		t.Errorf("ScratchFloats = %d, want 2·3 + 7", got)
	}
	if got := Scratch(k); got != 1 {
		t.Errorf("Scratch = %d, want 1 (13 floats of a vector of 21, to the nearest vector)", got)
	}
	big := NewKronSum(NewDense(randDense(rng, 30, 30)), NewDense(randDense(rng, 40, 40)))
	if got := Scratch(big); got != 0 {
		t.Errorf("Scratch of a Kronecker sum of order 1200 = %d, want 0 (60 floats)", got)
	}
}

func randPositive(rng *rand.Rand, n int) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = 0.5 + rng.Float64()
	}
	return v
}

package linop

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestBlock compares a 2×3 grid of blocks (dense, sparse, a Kronecker sum,
// a diagonal, zeros) with the matrix assembled entry by entry from the
// definition of a block matrix: products, transposed products, the sparse
// and the dense forms.
func TestBlock(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	randDense := func(r, c int) *mat.Dense {
		m := mat.NewDense(r, c, nil)
		for i := 0; i < r; i++ {
			for j := 0; j < c; j++ {
				m.Set(i, j, rng.NormFloat64())
			}
		}
		return m
	}
	rows, cols := []int{4, 6}, []int{4, 6, 3}
	k := NewKronSum(CSRFromDense(randDense(2, 2), 0), CSRFromDense(randDense(3, 3), 0))
	blocks := [][]Operator{
		{ScaledIdentity(4, 2.5), nil, CSRFromDense(randDense(4, 3), 0)},
		{CSRFromDense(randDense(6, 4), 0), k, NewDense(randDense(6, 3))},
	}
	b := NewBlock(blocks, rows, cols)
	// The matrix from its blocks, entry by entry.
	want := mat.NewDense(10, 13, nil)
	ro := 0
	for i := range blocks {
		co := 0
		for j := range blocks[i] {
			if blocks[i][j] != nil {
				d, err := ToDense(blocks[i][j])
				if err != nil {
					t.Fatal(err)
				}
				for p := 0; p < rows[i]; p++ {
					for q := 0; q < cols[j]; q++ {
						want.Set(ro+p, co+q, d.At(p, q))
					}
				}
			}
			co += cols[j]
		}
		ro += rows[i]
	}
	if r, c := b.Dims(); r != 10 || c != 13 {
		t.Fatalf("dims %d×%d, want 10×13", r, c)
	}
	x := make([]float64, 13)
	y := make([]float64, 10)
	for i := range x {
		x[i] = rng.NormFloat64()
	}
	for i := range y {
		y[i] = rng.NormFloat64()
	}
	got, ref := make([]float64, 10), make([]float64, 10)
	b.Apply(got, x)
	mat.NewVecDense(10, ref).MulVec(want, mat.NewVecDense(13, x))
	gotT, refT := make([]float64, 13), make([]float64, 13)
	b.ApplyT(gotT, y)
	mat.NewVecDense(13, refT).MulVec(want.T(), mat.NewVecDense(10, y))
	for _, c := range []struct {
		name     string
		got, ref []float64
	}{{"A x", got, ref}, {"Aᵀ y", gotT, refT}} {
		for i := range c.got {
			if math.Abs(c.got[i]-c.ref[i]) > 1e-13*(1+math.Abs(c.ref[i])) {
				t.Errorf("%s[%d] = %g, want %g", c.name, i, c.got[i], c.ref[i])
			}
		}
	}
	s, err := b.ToCSR()
	if err != nil {
		t.Fatal(err)
	}
	if err := s.Validate(); err != nil {
		t.Fatalf("sparse form: %v", err)
	}
	d, err := b.ToDense()
	if err != nil {
		t.Fatal(err)
	}
	for i := 0; i < 10; i++ {
		for j := 0; j < 13; j++ {
			if s.At(i, j) != want.At(i, j) || d.At(i, j) != want.At(i, j) {
				t.Fatalf("entry (%d, %d): sparse %g, dense %g, want %g", i, j, s.At(i, j), d.At(i, j), want.At(i, j))
			}
		}
	}
	if n, ok := NormInf(b); !ok || math.Abs(n-mat.Norm(want, math.Inf(1))) > 1e-13*n {
		t.Errorf("‖A‖∞ = %g (%v), want %g", n, ok, mat.Norm(want, math.Inf(1)))
	}
}

// TestBlockShape: a block whose size disagrees with its row or column
// panics with ErrShape.
func TestBlockShape(t *testing.T) {
	defer func() {
		if r := recover(); r != ErrShape {
			t.Errorf("recover() = %v, want ErrShape", r)
		}
	}()
	NewBlock([][]Operator{{Identity(2), Identity(3)}}, []int{2}, []int{2, 2})
}

func TestSplit(t *testing.T) {
	x := []float64{1, 2, 3, 4, 5}
	p := Split(x, []int{2, 0, 3})
	if len(p) != 3 || len(p[0]) != 2 || len(p[1]) != 0 || p[2][2] != 5 {
		t.Errorf("Split = %v", p)
	}
}

// TestBlockDiagonalAfter: a diagonal block that follows another block in
// its row (or, transposed, its column) adds its products in place; an
// all-zero block row gives zeros. Compared with the matrix written out by
// hand: [[C, 2I, 0], [3I, 0, 0], [0, 0, 0]] with C = [[1, 2], [3, 4]].
func TestBlockDiagonalAfter(t *testing.T) {
	c := CSRFromDense(mat.NewDense(2, 2, []float64{1, 2, 3, 4}), 0)
	b := NewBlock([][]Operator{
		{c, ScaledIdentity(2, 2), nil},
		{ScaledIdentity(2, 3), nil, nil},
		{nil, nil, nil},
	}, []int{2, 2, 1}, []int{2, 2, 1})
	want := mat.NewDense(5, 5, []float64{
		1, 2, 2, 0, 0,
		3, 4, 0, 2, 0,
		3, 0, 0, 0, 0,
		0, 3, 0, 0, 0,
		0, 0, 0, 0, 0,
	})
	x := []float64{1, -2, 3, 5, 7}
	for _, trans := range []bool{false, true} {
		got := []float64{9, 9, 9, 9, 9} // overwritten, zero rows included
		ref := mat.NewVecDense(5, nil)
		if trans {
			b.ApplyT(got, x)
			ref.MulVec(want.T(), mat.NewVecDense(5, x))
		} else {
			b.Apply(got, x)
			ref.MulVec(want, mat.NewVecDense(5, x))
		}
		for i := range got {
			if got[i] != ref.AtVec(i) {
				t.Errorf("transposed %v: entry %d = %g, want %g", trans, i, got[i], ref.AtVec(i))
			}
		}
	}
}

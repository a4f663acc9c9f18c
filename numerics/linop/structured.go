package linop

import (
	"fmt"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/memguard"
)

// KronSum is the Kronecker sum X ⊕ Y = X ⊗ I_ny + I_nx ⊗ Y of a square
// nx×nx operator X and a square ny×ny operator Y, acting on vectors indexed
// k = ix*ny + iy. On a tensor grid it is, for instance, the 2-D Laplacian
// built from two 1-D second differences. Apply panics with ErrShape if X
// or Y is not square.
type KronSum struct{ X, Y Operator }

// MaxOrder is the largest order of a Kronecker sum, 2⁵³: beyond it an
// order is no longer exact in floating point (the memory guard's sums and
// the language's sizes are), and nx·ny soon overflows an int.
const MaxOrder = 1 << 53

// NewKronSum returns X ⊕ Y. It panics with ErrShape if X or Y is not
// square or if the order nx·ny exceeds MaxOrder.
func NewKronSum(x, y Operator) *KronSum {
	nx, cx := x.Dims()
	ny, cy := y.Dims()
	if nx != cx || ny != cy || float64(nx)*float64(ny) > MaxOrder {
		panic(ErrShape)
	}
	return &KronSum{X: x, Y: y}
}

func (k *KronSum) sizes() (nx, ny int) {
	nx, cx := k.X.Dims()
	ny, cy := k.Y.Dims()
	if nx != cx || ny != cy {
		panic(ErrShape)
	}
	return nx, ny
}

// Dims returns (nx*ny, nx*ny).
func (k *KronSum) Dims() (r, c int) {
	nx, ny := k.sizes()
	return nx * ny, nx * ny
}

// Apply sets dst = (X ⊗ I + I ⊗ Y) x.
func (k *KronSum) Apply(dst, x []float64) { k.apply(dst, x, false) }

// ApplyT sets dst = (Xᵀ ⊗ I + I ⊗ Yᵀ) x.
func (k *KronSum) ApplyT(dst, x []float64) { k.apply(dst, x, true) }

func (k *KronSum) apply(dst, x []float64, trans bool) {
	nx, ny := k.sizes()
	n := nx * ny
	if len(x) != n || len(dst) != n {
		panic(ErrShape)
	}
	// I ⊗ Y acts on each contiguous block x[ix*ny : (ix+1)*ny].
	for ix := 0; ix < nx; ix++ {
		blk := dst[ix*ny : (ix+1)*ny]
		if trans {
			k.Y.ApplyT(blk, x[ix*ny:(ix+1)*ny])
		} else {
			k.Y.Apply(blk, x[ix*ny:(ix+1)*ny])
		}
	}
	// X ⊗ I acts across blocks: with a CSR X add X[ix, jx] x_jx to block ix.
	if c, ok := k.X.(*CSR); ok && !trans {
		for ix := 0; ix < nx; ix++ {
			d := dst[ix*ny : (ix+1)*ny]
			for p := c.RowPtr[ix]; p < c.RowPtr[ix+1]; p++ {
				v, src := c.Val[p], x[c.ColIdx[p]*ny:(c.ColIdx[p]+1)*ny]
				for iy, s := range src {
					d[iy] += v * s
				}
			}
		}
		return
	}
	if c, ok := k.X.(*CSR); ok && trans {
		for ix := 0; ix < nx; ix++ {
			src := x[ix*ny : (ix+1)*ny]
			for p := c.RowPtr[ix]; p < c.RowPtr[ix+1]; p++ {
				v, d := c.Val[p], dst[c.ColIdx[p]*ny:(c.ColIdx[p]+1)*ny]
				for iy, s := range src {
					d[iy] += v * s
				}
			}
		}
		return
	}
	col := make([]float64, nx)
	out := make([]float64, nx)
	for iy := 0; iy < ny; iy++ {
		for ix := 0; ix < nx; ix++ {
			col[ix] = x[ix*ny+iy]
		}
		if trans {
			k.X.ApplyT(out, col)
		} else {
			k.X.Apply(out, col)
		}
		for ix := 0; ix < nx; ix++ {
			dst[ix*ny+iy] += out[ix]
		}
	}
}

// ToCSR returns X ⊗ I + I ⊗ Y in CSR form; it fails if X or Y has no sparse form.
func (k *KronSum) ToCSR() (*CSR, error) {
	nx, ny := k.sizes()
	x, err := ToCSR(k.X)
	if err != nil {
		return nil, err
	}
	y, err := ToCSR(k.Y)
	if err != nil {
		return nil, err
	}
	// X ⊗ I and I ⊗ Y hold nnz(X)·ny and nx·nnz(Y) entries (value and
	// column index each) and nx·ny+1 row pointers each; their sum is built
	// from both. Formed in floating point: the order may be large.
	n := float64(nx) * float64(ny)
	entries := float64(x.NNZ())*float64(ny) + float64(nx)*float64(y.NNZ())
	if err := memguard.Bytes(2*entries*16+3*(n+1)*8, fmt.Sprintf("sparse form of a Kronecker sum of order %d", nx*ny)); err != nil {
		return nil, err
	}
	return AddCSR(1, Kron(x, Identity(ny)), 1, Kron(Identity(nx), y)), nil
}

// Sum is the operator Σ_k Terms[k]. All terms must have the same dimensions
// (Apply panics with ErrShape otherwise) and there must be at least one.
// A product holds one temporary vector for the terms after the first,
// reused from product to product (ScratchFloats).
type Sum struct {
	Terms []Operator
	buf   scratchPool
}

// Dims returns the common dimensions of the terms.
func (s *Sum) Dims() (r, c int) {
	if len(s.Terms) == 0 {
		panic(ErrShape)
	}
	r, c = s.Terms[0].Dims()
	for _, t := range s.Terms[1:] {
		if tr, tc := t.Dims(); tr != r || tc != c {
			panic(ErrShape)
		}
	}
	return r, c
}

// Apply sets dst = Σ_k Terms[k] x.
func (s *Sum) Apply(dst, x []float64) { s.apply(dst, x, false) }

// ApplyT sets dst = Σ_k Terms[k]ᵀ x.
func (s *Sum) ApplyT(dst, x []float64) { s.apply(dst, x, true) }

func (s *Sum) apply(dst, x []float64, trans bool) {
	r, c := s.Dims()
	if trans {
		r, c = c, r
	}
	if len(x) != c || len(dst) != r {
		panic(ErrShape)
	}
	var tmp []float64
	if len(s.Terms) > 1 {
		b := s.buf.get(r)
		defer s.buf.put(b)
		tmp = *b
	}
	for k, t := range s.Terms {
		out := dst
		if k > 0 {
			out = tmp
		}
		if trans {
			t.ApplyT(out, x)
		} else {
			t.Apply(out, x)
		}
		if k > 0 {
			for i, v := range tmp {
				dst[i] += v
			}
		}
	}
}

// ToCSR returns the sum in CSR form; it fails if a term has no sparse form.
func (s *Sum) ToCSR() (*CSR, error) {
	r, c := s.Dims()
	// The row pointers of the accumulated sum and of the next term's sum
	// with it, before any term is converted (each term asks for its own).
	if err := memguard.Vectors(2, r+1, 8, fmt.Sprintf("row pointers of the sparse form of a sum of order %d", r)); err != nil {
		return nil, err
	}
	acc := &CSR{Rows: r, Cols: c, RowPtr: make([]int, r+1)}
	for _, t := range s.Terms {
		m, err := ToCSR(t)
		if err != nil {
			return nil, err
		}
		acc = AddCSR(1, acc, 1, m)
	}
	return acc, nil
}

// Scaled is the operator Alpha·A.
type Scaled struct {
	Alpha float64
	A     Operator
}

// Dims returns the dimensions of A.
func (s *Scaled) Dims() (r, c int) { return s.A.Dims() }

// Apply sets dst = α A x.
func (s *Scaled) Apply(dst, x []float64) {
	s.A.Apply(dst, x)
	for i := range dst {
		dst[i] *= s.Alpha
	}
}

// ApplyT sets dst = α Aᵀ x.
func (s *Scaled) ApplyT(dst, x []float64) {
	s.A.ApplyT(dst, x)
	for i := range dst {
		dst[i] *= s.Alpha
	}
}

// ToCSR returns α A in CSR form; it fails if A has no sparse form.
func (s *Scaled) ToCSR() (*CSR, error) {
	m, err := ToCSR(s.A)
	if err != nil {
		return nil, err
	}
	return ScaleCSR(s.Alpha, m), nil
}

// Product is the operator Factors[0] Factors[1] ⋯ Factors[m−1]; Apply
// applies the last factor first. Adjacent dimensions must agree (Dims
// panics with ErrShape otherwise) and there must be at least one factor.
// The intermediate vectors alternate between two temporaries reused from
// product to product (ScratchFloats).
type Product struct {
	Factors []Operator
	buf     scratchPool
}

// Dims returns (rows of the first factor, columns of the last).
func (p *Product) Dims() (r, c int) {
	if len(p.Factors) == 0 {
		panic(ErrShape)
	}
	r, c = p.Factors[0].Dims()
	for _, f := range p.Factors[1:] {
		fr, fc := f.Dims()
		if fr != c {
			panic(ErrShape)
		}
		c = fc
	}
	return r, c
}

// Apply sets dst = F₀ F₁ ⋯ F_{m−1} x.
func (p *Product) Apply(dst, x []float64) {
	r, c := p.Dims()
	if len(x) != c || len(dst) != r {
		panic(ErrShape)
	}
	m := len(p.Factors)
	p.chain(dst, x, func(i int) (Operator, int) {
		f := p.Factors[m-1-i]
		fr, _ := f.Dims()
		return f, fr
	}, Operator.Apply)
}

// ApplyT sets dst = F_{m−1}ᵀ ⋯ F₀ᵀ x.
func (p *Product) ApplyT(dst, x []float64) {
	r, c := p.Dims()
	if len(x) != r || len(dst) != c {
		panic(ErrShape)
	}
	p.chain(dst, x, func(i int) (Operator, int) {
		f := p.Factors[i]
		_, fc := f.Dims()
		return f, fc
	}, Operator.ApplyT)
}

// chain applies the factors in the order step(0), step(1), …, each to the
// previous result (step returns the factor and the length of its result),
// the last into dst; the intermediate results alternate between two
// pooled temporaries.
func (p *Product) chain(dst, x []float64, step func(i int) (Operator, int), apply func(Operator, []float64, []float64)) {
	m := len(p.Factors)
	var tmp [2]*[]float64
	defer func() {
		for _, b := range tmp {
			if b != nil {
				p.buf.put(b)
			}
		}
	}()
	cur := x
	for i := 0; i < m; i++ {
		f, n := step(i)
		out := dst
		if i < m-1 {
			if tmp[i%2] == nil {
				tmp[i%2] = p.buf.get(n)
			}
			b := tmp[i%2]
			if cap(*b) < n {
				*b = make([]float64, n)
			}
			out = (*b)[:n]
		}
		apply(f, out, cur)
		cur = out
	}
}

// ToCSR returns the product in CSR form; it fails if a factor has no sparse form.
func (p *Product) ToCSR() (*CSR, error) {
	p.Dims()
	acc, err := ToCSR(p.Factors[len(p.Factors)-1])
	if err != nil {
		return nil, err
	}
	for k := len(p.Factors) - 2; k >= 0; k-- {
		f, err := ToCSR(p.Factors[k])
		if err != nil {
			return nil, err
		}
		acc = MulCSR(f, acc)
	}
	return acc, nil
}

// Diag is multiplication by a diagonal: (D x)_i = D[i] x_i, for instance a
// coefficient function sampled on the points of a grid.
type Diag struct{ D []float64 }

// Dims returns (len(D), len(D)).
func (d *Diag) Dims() (r, c int) { return len(d.D), len(d.D) }

// Apply sets dst_i = D_i x_i.
func (d *Diag) Apply(dst, x []float64) {
	if len(x) != len(d.D) || len(dst) != len(d.D) {
		panic(ErrShape)
	}
	for i, v := range d.D {
		dst[i] = v * x[i]
	}
}

// ApplyT is Apply (a diagonal is symmetric).
func (d *Diag) ApplyT(dst, x []float64) { d.Apply(dst, x) }

// ToCSR returns the diagonal matrix in CSR form.
func (d *Diag) ToCSR() (*CSR, error) {
	n := len(d.D)
	a := Identity(n)
	copy(a.Val, d.D)
	return a, nil
}

// ToDense returns the diagonal matrix, or an error from the memory guard.
func (d *Diag) ToDense() (*mat.Dense, error) {
	a, _ := d.ToCSR()
	return a.ToDense()
}

// Sparser is implemented by operators with an explicit sparse form.
type Sparser interface {
	ToCSR() (*CSR, error)
}

// Denser is implemented by operators that can produce their dense matrix
// faster than by applying them to unit vectors. The error comes from the
// memory guard.
type Denser interface {
	ToDense() (*mat.Dense, error)
}

// ErrNotSparse is returned by ToCSR for operators with no sparse form.
var ErrNotSparse = fmt.Errorf("linop: operator has no sparse form")

// KronFactors returns the factors F_1, …, F_d of a Kronecker sum
// F_1 ⊕ F_2 ⊕ … ⊕ F_d, flattening nested sums on either side:
// X ⊕ (Y ⊕ Z) and (X ⊕ Y) ⊕ Z are both X ⊗ I ⊗ I + I ⊗ Y ⊗ I + I ⊗ I ⊗ Z
// on vectors indexed k = (ix·ny + iy)·nz + iz, the last factor's index
// fastest.
func KronFactors(k *KronSum) []Operator {
	var out []Operator
	var walk func(op Operator)
	walk = func(op Operator) {
		if s, ok := op.(*KronSum); ok {
			walk(s.X)
			walk(s.Y)
			return
		}
		out = append(out, op)
	}
	walk(k)
	return out
}

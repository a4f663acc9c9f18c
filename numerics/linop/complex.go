package linop

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/memguard"
)

// Complex is a complex linear operator A = B + iC : Cᶜ → Cʳ (B, C real)
// carried as its realification
//
//	Φ(A) = [B  −C]
//	       [C   B],
//
// a real operator R^{2c} → R^{2r} acting on [Re x; Im x]: Φ(A)[x; y] is
// [Re; Im] of A(x + iy). It is applied block by block; the 2r×2c matrix is
// never formed unless asked for (ToDense, ToCSR).
//
// Φ is an injective algebra homomorphism: Φ(A₁ + A₂) = Φ(A₁) + Φ(A₂),
// Φ(A₁A₂) = Φ(A₁)Φ(A₂), Φ(A*) = Φ(A)ᵀ, and so e^{tΦ(A)} = Φ(e^{tA}) for
// real t. With U = [I I; −iI iI]/√2 unitary, Φ(A) = U diag(A, Ā) Uᴴ, so
// Φ(A) has A's singular values each twice (the same 2-norms, ‖e^{tA}‖ and
// numerical abscissa), spectrum spec A ∪ conj(spec A), and resolvent
// norm ‖(z − Φ(A))⁻¹‖ = max(‖(z − A)⁻¹‖, ‖(z̄ − A)⁻¹‖). Spectra,
// pseudospectra and resolvent norms at non-real z therefore need A itself:
// the spectra package recognises a *Complex and works with B + iC.
type Complex struct {
	// Re and Im are B and C, of equal dimensions; either may be nil for a
	// zero part, not both.
	Re, Im Operator
	buf    scratchPool
}

// NewComplex returns the operator re + i·im; either part may be nil (zero).
// It panics with ErrShape if both are nil or their dimensions differ.
func NewComplex(re, im Operator) *Complex {
	a := &Complex{Re: re, Im: im}
	a.parts()
	return a
}

// parts returns the dimensions r, c of B and C.
func (a *Complex) parts() (r, c int) {
	switch {
	case a.Re == nil && a.Im == nil:
		panic(ErrShape)
	case a.Re == nil:
		return a.Im.Dims()
	case a.Im == nil:
		return a.Re.Dims()
	}
	r, c = a.Re.Dims()
	if ir, ic := a.Im.Dims(); ir != r || ic != c {
		panic(ErrShape)
	}
	return r, c
}

// ComplexDims returns the dimensions of A = B + iC (half those of Φ(A)).
func (a *Complex) ComplexDims() (r, c int) { return a.parts() }

// Dims returns (2r, 2c), the dimensions of Φ(A).
func (a *Complex) Dims() (r, c int) {
	r, c = a.parts()
	return 2 * r, 2 * c
}

// Apply sets dst = Φ(A) x: [B x₁ − C x₂; C x₁ + B x₂] for x = [x₁; x₂].
func (a *Complex) Apply(dst, x []float64) { a.apply(dst, x, false) }

// ApplyT sets dst = Φ(A)ᵀ x = Φ(A*) x: [Bᵀx₁ + Cᵀx₂; −Cᵀx₁ + Bᵀx₂].
func (a *Complex) ApplyT(dst, x []float64) { a.apply(dst, x, true) }

func (a *Complex) apply(dst, x []float64, trans bool) {
	r, c := a.parts()
	if trans {
		r, c = c, r
	}
	if len(x) != 2*c || len(dst) != 2*r {
		panic(ErrShape)
	}
	x1, x2 := x[:c], x[c:]
	d1, d2 := dst[:r], dst[r:]
	app := func(op Operator, d, v []float64) {
		if trans {
			op.ApplyT(d, v)
		} else {
			op.Apply(d, v)
		}
	}
	// sign of C in the first block row: −C for Φ(A), +Cᵀ for Φ(A)ᵀ.
	sign := -1.0
	if trans {
		sign = 1
	}
	switch {
	case a.Im == nil:
		app(a.Re, d1, x1)
		app(a.Re, d2, x2)
	case a.Re == nil:
		app(a.Im, d1, x2)
		app(a.Im, d2, x1)
		if sign < 0 {
			for i := range d1 {
				d1[i] = -d1[i]
			}
		} else {
			for i := range d2 {
				d2[i] = -d2[i]
			}
		}
	default:
		b := a.buf.get(r)
		defer a.buf.put(b)
		tmp := *b
		app(a.Re, d1, x1)
		app(a.Im, tmp, x2)
		for i, v := range tmp {
			d1[i] += sign * v
		}
		app(a.Re, d2, x2)
		app(a.Im, tmp, x1)
		for i, v := range tmp {
			d2[i] -= sign * v
		}
	}
}

// ScratchFloats is one vector of A's order when both parts are present,
// plus what the parts need.
func (a *Complex) ScratchFloats() int {
	need := 0
	if a.Re != nil {
		need = scratchFloats(a.Re)
	}
	if a.Im != nil {
		need = max(need, scratchFloats(a.Im))
	}
	if a.Re != nil && a.Im != nil {
		r, c := a.parts()
		need += max(r, c)
	}
	return need
}

// ToCSR returns Φ(A) in sparse form when both parts have one.
func (a *Complex) ToCSR() (*CSR, error) {
	r, c := a.parts()
	var re, im *CSR
	var err error
	if a.Re != nil {
		if re, err = ToCSR(a.Re); err != nil {
			return nil, err
		}
	}
	if a.Im != nil {
		if im, err = ToCSR(a.Im); err != nil {
			return nil, err
		}
	}
	nnz := 0
	if re != nil {
		nnz += 2 * re.NNZ()
	}
	if im != nil {
		nnz += 2 * im.NNZ()
	}
	if err := memguard.Bytes(float64(nnz)*16+float64(2*r+1)*8, "the sparse form of a complex operator"); err != nil {
		return nil, err
	}
	ii := make([]int, 0, nnz)
	jj := make([]int, 0, nnz)
	vv := make([]float64, 0, nnz)
	put := func(m *CSR, di, dj int, s float64) {
		if m == nil {
			return
		}
		for i := 0; i < m.Rows; i++ {
			for k := m.RowPtr[i]; k < m.RowPtr[i+1]; k++ {
				ii = append(ii, i+di)
				jj = append(jj, m.ColIdx[k]+dj)
				vv = append(vv, s*m.Val[k])
			}
		}
	}
	put(re, 0, 0, 1)
	put(re, r, c, 1)
	put(im, 0, c, -1)
	put(im, r, 0, 1)
	return NewCSRFromTriplets(2*r, 2*c, ii, jj, vv), nil
}

// ToDense returns the 2r×2c matrix of Φ(A).
func (a *Complex) ToDense() (*mat.Dense, error) {
	b, c, err := a.DenseParts()
	if err != nil {
		return nil, err
	}
	r, k := b.Dims()
	if err := memguard.DenseReal(2*r, 2*k); err != nil {
		return nil, err
	}
	out := mat.NewDense(2*r, 2*k, nil)
	for i := 0; i < r; i++ {
		for j := 0; j < k; j++ {
			x, y := b.At(i, j), c.At(i, j)
			out.Set(i, j, x)
			out.Set(i, k+j, -y)
			out.Set(r+i, j, y)
			out.Set(r+i, k+j, x)
		}
	}
	return out, nil
}

// DenseParts returns the matrices of B and C (a zero matrix for a nil
// part).
func (a *Complex) DenseParts() (b, c *mat.Dense, err error) {
	r, k := a.parts()
	part := func(op Operator) (*mat.Dense, error) {
		if op == nil {
			if err := memguard.DenseReal(r, k); err != nil {
				return nil, err
			}
			if r == 0 || k == 0 {
				return &mat.Dense{}, nil
			}
			return mat.NewDense(r, k, nil), nil
		}
		return ToDense(op)
	}
	if b, err = part(a.Re); err != nil {
		return nil, nil, err
	}
	if c, err = part(a.Im); err != nil {
		return nil, nil, err
	}
	return b, c, nil
}

// ComplexWeight is the weight diag(W, W) on R^{2n} for a real weight W on
// Rⁿ: for complex x, y carried as [Re; Im] it gives Re(x* W y), and
// ‖[Re x; Im x]‖ = √(x* W x), the W-norm of Cⁿ; with W = RᵀR its factor is
// diag(R, R), so the weighted real form of A is the real form of R A R⁻¹.
type ComplexWeight struct{ W Weight }

func (c ComplexWeight) halves(dst, x []float64) (d1, d2, x1, x2 []float64) {
	n := c.W.Len()
	if len(dst) != 2*n || len(x) != 2*n {
		panic(ErrShape)
	}
	return dst[:n], dst[n:], x[:n], x[n:]
}

// Len returns 2n.
func (c ComplexWeight) Len() int { return 2 * c.W.Len() }

// Mul sets dst = diag(W, W) x.
func (c ComplexWeight) Mul(dst, x []float64) {
	d1, d2, x1, x2 := c.halves(dst, x)
	c.W.Mul(d1, x1)
	c.W.Mul(d2, x2)
}

// Solve sets dst = diag(W, W)⁻¹ x.
func (c ComplexWeight) Solve(dst, x []float64) {
	d1, d2, x1, x2 := c.halves(dst, x)
	c.W.Solve(d1, x1)
	c.W.Solve(d2, x2)
}

// Factor sets dst = diag(R, R) x, or its transpose times x.
func (c ComplexWeight) Factor(dst, x []float64, trans bool) {
	d1, d2, x1, x2 := c.halves(dst, x)
	c.W.Factor(d1, x1, trans)
	c.W.Factor(d2, x2, trans)
}

// FactorSolve sets dst = diag(R, R)⁻¹ x, or with the transpose.
func (c ComplexWeight) FactorSolve(dst, x []float64, trans bool) {
	d1, d2, x1, x2 := c.halves(dst, x)
	c.W.FactorSolve(d1, x1, trans)
	c.W.FactorSolve(d2, x2, trans)
}

// Inner returns x₁ᵀWy₁ + x₂ᵀWy₂.
func (c ComplexWeight) Inner(x, y []float64) float64 {
	_, _, x1, x2 := c.halves(x, x)
	_, _, y1, y2 := c.halves(y, y)
	return c.W.Inner(x1, y1) + c.W.Inner(x2, y2)
}

// Norm returns √(x₁ᵀWx₁ + x₂ᵀWx₂).
func (c ComplexWeight) Norm(x []float64) float64 {
	_, _, x1, x2 := c.halves(x, x)
	return math.Hypot(c.W.Norm(x1), c.W.Norm(x2))
}

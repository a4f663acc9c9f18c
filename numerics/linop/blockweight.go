package linop

import "math"

// BlockWeight is the block-diagonal weight W = diag(W_0, W_1, …) on vectors
// cut into consecutive parts of the blocks' lengths: ⟨x, y⟩_W = Σ_k
// ⟨x_k, y_k⟩_{W_k}, with factor R = diag(R_0, R_1, …). The energy of a
// second-order system, ½(vᵀMv + uᵀKu) for the state [u; v], is ½‖x‖²_W with
// W = diag(K, M). Every method panics with ErrShape if a vector's length is
// not Len().
type BlockWeight struct {
	parts []Weight
	sizes []int
}

// NewBlockWeight returns diag(parts…).
func NewBlockWeight(parts ...Weight) *BlockWeight {
	b := &BlockWeight{parts: append([]Weight(nil), parts...)}
	for _, w := range parts {
		b.sizes = append(b.sizes, w.Len())
	}
	return b
}

// Len returns the sum of the blocks' lengths.
func (b *BlockWeight) Len() int { return total(b.sizes) }

func (b *BlockWeight) each(dst, x []float64, f func(w Weight, d, y []float64)) {
	ds, xs := Split(dst, b.sizes), Split(x, b.sizes)
	for k, w := range b.parts {
		f(w, ds[k], xs[k])
	}
}

// Mul sets dst = W x.
func (b *BlockWeight) Mul(dst, x []float64) {
	b.each(dst, x, func(w Weight, d, y []float64) { w.Mul(d, y) })
}

// Solve sets dst = W⁻¹ x.
func (b *BlockWeight) Solve(dst, x []float64) {
	b.each(dst, x, func(w Weight, d, y []float64) { w.Solve(d, y) })
}

// Factor sets dst = R x, or Rᵀ x if trans.
func (b *BlockWeight) Factor(dst, x []float64, trans bool) {
	b.each(dst, x, func(w Weight, d, y []float64) { w.Factor(d, y, trans) })
}

// FactorSolve sets dst = R⁻¹ x, or R⁻ᵀ x if trans.
func (b *BlockWeight) FactorSolve(dst, x []float64, trans bool) {
	b.each(dst, x, func(w Weight, d, y []float64) { w.FactorSolve(d, y, trans) })
}

// Inner returns Σ_k x_kᵀ W_k y_k.
func (b *BlockWeight) Inner(x, y []float64) float64 {
	xs, ys := Split(x, b.sizes), Split(y, b.sizes)
	var s float64
	for k, w := range b.parts {
		s += w.Inner(xs[k], ys[k])
	}
	return s
}

// Norm returns √(Σ_k ‖x_k‖²_{W_k}).
func (b *BlockWeight) Norm(x []float64) float64 {
	xs := Split(x, b.sizes)
	var s float64
	for k, w := range b.parts {
		s = math.Hypot(s, w.Norm(xs[k]))
	}
	return s
}

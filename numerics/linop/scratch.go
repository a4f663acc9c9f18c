package linop

import (
	"runtime"
	"sync"
)

// Scratcher is implemented by operators whose Apply or ApplyT needs
// temporary storage beyond dst and x (a sum of terms, a product of
// factors, an adjoint in a weight): ScratchFloats returns the largest
// number of float64 values one product holds at once, its terms' needs
// included.
type Scratcher interface {
	ScratchFloats() int
}

// Scratch returns how many vectors of A's order (its larger dimension) one
// Apply or ApplyT of A holds beyond dst and x, to the nearest whole vector:
// 0 for dense, CSR (serial), diagonal and Kronecker sums of such factors
// (whose column buffers have the order of a factor, far below A's), 1 for
// a sum of two terms, and so on. A routine that asks the memory guard for k work
// vectors of order n asks for k + Scratch(A), so every vector of order n
// that lives during the computation is counted. An operator of another
// package that is not a Scratcher counts as needing none.
func Scratch(a Operator) int {
	f := scratchFloats(a)
	if f == 0 {
		return 0
	}
	r, c := a.Dims()
	n := max(r, c, 1)
	return (f + n/2) / n
}

func scratchFloats(a Operator) int {
	if s, ok := a.(Scratcher); ok {
		return s.ScratchFloats()
	}
	return 0
}

// scratchPool hands out reusable float64 buffers, so that a composite
// operator's temporaries are not allocated afresh (and left to the
// collector) at every product. Safe for concurrent use: each concurrent
// product takes its own buffer. The zero value is ready to use.
type scratchPool struct{ p sync.Pool }

func (s *scratchPool) get(n int) *[]float64 {
	if b, ok := s.p.Get().(*[]float64); ok && cap(*b) >= n {
		*b = (*b)[:n]
		return b
	}
	b := make([]float64, n)
	return &b
}

func (s *scratchPool) put(b *[]float64) { s.p.Put(b) }

// ScratchFloats of a Sum is one vector of its row order for the terms after
// the first, plus the most any term needs.
func (s *Sum) ScratchFloats() int {
	r, c := s.Dims()
	need := 0
	for _, t := range s.Terms {
		need = max(need, scratchFloats(t))
	}
	if len(s.Terms) > 1 {
		need += max(r, c)
	}
	return need
}

// ScratchFloats of a Product is the two intermediate vectors its products
// alternate between (the largest inner dimension each), plus the most any
// factor needs.
func (p *Product) ScratchFloats() int {
	p.Dims()
	need, inner := 0, 0
	for k, f := range p.Factors {
		need = max(need, scratchFloats(f))
		if k > 0 {
			fr, _ := f.Dims()
			inner = max(inner, fr)
		}
	}
	switch len(p.Factors) {
	case 1:
		return need
	case 2:
		return need + inner
	}
	return need + 2*inner
}

// ScratchFloats of a Scaled operator is that of A.
func (s *Scaled) ScratchFloats() int { return scratchFloats(s.A) }

// ScratchFloats of a Kronecker sum is a column and its image when X is not
// in CSR form, plus what X or Y needs.
func (k *KronSum) ScratchFloats() int {
	nx, _ := k.sizes()
	need := max(scratchFloats(k.X), scratchFloats(k.Y))
	if _, ok := k.X.(*CSR); !ok {
		need += 2 * nx
	}
	return need
}

// ScratchFloats of an adjoint is one vector when a weight is applied,
// plus what A needs.
func (a *Adjoint) ScratchFloats() int {
	r, c := a.A.Dims()
	if a.W == nil {
		return scratchFloats(a.A)
	}
	return max(r, c) + scratchFloats(a.A)
}

// ScratchFloats of a similarity is one vector, plus what A needs.
func (s *Similarity) ScratchFloats() int {
	n, _ := s.A.Dims()
	return n + scratchFloats(s.A)
}

// ScratchFloats of a CSR matrix is the per-core buffers of its parallel
// transposed product (one vector of its column order for each core but
// the first), zero when the matrix is too small to be split.
func (a *CSR) ScratchFloats() int {
	workers := runtime.GOMAXPROCS(0)
	if a.NNZ() < parallelNNZ || workers < 2 || a.Rows < 2*workers {
		return 0
	}
	return (workers - 1) * a.Cols
}

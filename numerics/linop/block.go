package linop

import (
	"fmt"

	"gonum.org/v1/gonum/mat"
	"semiflow/numerics/memguard"
)

// Block is the operator of a grid of blocks,
//
//	A = [ B_00  B_01  … ]
//	    [ B_10  B_11  … ]
//	    [  …             ]
//
// with block row i of RowSizes[i] rows and block column j of ColSizes[j]
// columns; a nil block is zero. The blocks keep their own structure (a
// Kronecker sum stays one), so A x is formed block by block,
// (A x)_i = Σ_j B_ij x_j, and the sparse and dense forms are assembled only
// when asked for (ToCSR, ToDense).
type Block struct {
	Blocks             [][]Operator
	RowSizes, ColSizes []int
}

// NewBlock returns the block operator of blocks with the given block-row
// and block-column sizes. It panics with ErrShape when the grid is not
// rows × cols, a size is negative, or a block's dimensions differ from its
// block row's and column's sizes.
func NewBlock(blocks [][]Operator, rows, cols []int) *Block {
	if len(blocks) != len(rows) {
		panic(ErrShape)
	}
	for i, row := range blocks {
		if len(row) != len(cols) || rows[i] < 0 {
			panic(ErrShape)
		}
		for j, b := range row {
			if cols[j] < 0 {
				panic(ErrShape)
			}
			if b == nil {
				continue
			}
			if r, c := b.Dims(); r != rows[i] || c != cols[j] {
				panic(ErrShape)
			}
		}
	}
	return &Block{Blocks: blocks, RowSizes: append([]int(nil), rows...), ColSizes: append([]int(nil), cols...)}
}

// Dims returns (Σ RowSizes, Σ ColSizes).
func (b *Block) Dims() (r, c int) { return total(b.RowSizes), total(b.ColSizes) }

func total(s []int) int {
	n := 0
	for _, k := range s {
		n += k
	}
	return n
}

// Split returns the parts of x, a vector of length total(sizes), as
// sub-slices (not copies) of the given sizes. It panics with ErrShape when
// the lengths disagree.
func Split(x []float64, sizes []int) [][]float64 {
	if len(x) != total(sizes) {
		panic(ErrShape)
	}
	out := make([][]float64, len(sizes))
	off := 0
	for k, n := range sizes {
		out[k] = x[off : off+n : off+n]
		off += n
	}
	return out
}

// Apply sets dst = A x block by block.
func (b *Block) Apply(dst, x []float64) { b.apply(dst, x, false) }

// ApplyT sets dst = Aᵀ x: (Aᵀ x)_j = Σ_i B_ijᵀ x_i.
func (b *Block) ApplyT(dst, x []float64) { b.apply(dst, x, true) }

func (b *Block) apply(dst, x []float64, trans bool) {
	outSizes, inSizes := b.RowSizes, b.ColSizes
	if trans {
		outSizes, inSizes = inSizes, outSizes
	}
	out, in := Split(dst, outSizes), Split(x, inSizes)
	var tmp []float64
	for i := range out {
		o := out[i]
		// The first block writes o itself; a diagonal block adds its
		// products in place; any other block goes through tmp.
		written := false
		for j := range in {
			var blk Operator
			if trans {
				blk = b.Blocks[j][i]
			} else {
				blk = b.Blocks[i][j]
			}
			if blk == nil {
				continue
			}
			if d, ok := blk.(*Diag); ok && written {
				for k, v := range d.D {
					o[k] += v * in[j][k]
				}
				continue
			}
			t := o
			if written {
				if len(tmp) < len(o) {
					tmp = make([]float64, len(o))
				}
				t = tmp[:len(o)]
			}
			if trans {
				blk.ApplyT(t, in[j])
			} else {
				blk.Apply(t, in[j])
			}
			if written {
				for k, v := range t {
					o[k] += v
				}
			}
			written = true
		}
		if !written {
			for k := range o {
				o[k] = 0
			}
		}
	}
}

// ToCSR assembles the sparse form of A from the sparse forms of its
// blocks; it fails when a block has none, and asks the memory guard for
// the assembled entries first.
func (b *Block) ToCSR() (*CSR, error) {
	r, c := b.Dims()
	parts := make([][]*CSR, len(b.Blocks))
	nnz := 0.0
	for i, row := range b.Blocks {
		parts[i] = make([]*CSR, len(row))
		for j, blk := range row {
			if blk == nil {
				continue
			}
			m, err := ToCSR(blk)
			if err != nil {
				return nil, fmt.Errorf("block (%d, %d): %w", i, j, err)
			}
			parts[i][j] = m
			nnz += float64(m.NNZ())
		}
	}
	if err := memguard.Bytes(nnz*16+float64(r+1)*8, fmt.Sprintf("sparse form of a %d×%d block operator", r, c)); err != nil {
		return nil, err
	}
	out := &CSR{Rows: r, Cols: c, RowPtr: make([]int, r+1)}
	out.ColIdx = make([]int, 0, int(nnz))
	out.Val = make([]float64, 0, int(nnz))
	row := 0
	for i, size := range b.RowSizes {
		for k := 0; k < size; k++ {
			off := 0
			for j, m := range parts[i] {
				if m != nil {
					for p := m.RowPtr[k]; p < m.RowPtr[k+1]; p++ {
						out.ColIdx = append(out.ColIdx, off+m.ColIdx[p])
						out.Val = append(out.Val, m.Val[p])
					}
				}
				off += b.ColSizes[j]
			}
			row++
			out.RowPtr[row] = len(out.Val)
		}
	}
	return out, nil
}

// ToDense assembles the dense matrix of A from its blocks, after asking
// the memory guard for it.
func (b *Block) ToDense() (*mat.Dense, error) {
	r, c := b.Dims()
	if err := memguard.DenseReal(r, c); err != nil {
		return nil, err
	}
	if r == 0 || c == 0 {
		return &mat.Dense{}, nil
	}
	out := mat.NewDense(r, c, nil)
	ro := 0
	for i, row := range b.Blocks {
		co := 0
		for j, blk := range row {
			if blk != nil && b.RowSizes[i] > 0 && b.ColSizes[j] > 0 {
				d, err := ToDense(blk)
				if err != nil {
					return nil, err
				}
				out.Slice(ro, ro+b.RowSizes[i], co, co+b.ColSizes[j]).(*mat.Dense).Copy(d)
			}
			co += b.ColSizes[j]
		}
		ro += b.RowSizes[i]
	}
	return out, nil
}

// ScaledIdentity returns c·I of order n as a diagonal operator (n values).
func ScaledIdentity(n int, c float64) *Diag {
	d := make([]float64, n)
	for i := range d {
		d[i] = c
	}
	return &Diag{D: d}
}

package builtin

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/mat"

	"semiflow/lang/eval"
	"semiflow/lang/objects"
	"semiflow/lang/value"
	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// blockFamily: operators assembled from blocks, identity and diagonal
// operators, and vectors stacked and split to match.
var blockFamily = []*Builtin{
	{
		Name:   "blocks",
		Params: []value.Param{rest("rows", "the block rows, each a list [B_i0, B_i1, …] of operators, matrices or numbers")},
		Doc: "The operator assembled from a grid of blocks, one list per block row: blocks([0, 1], [-K, -C]) is [0 I; −K −C], the first-order form of u'' + C u' + K u = 0 for the vector [u, u']. " +
			"A block is an operator, a matrix (any shape), 0 (a zero block of whatever size its row and column have) or a number c (c·I, a square block). " +
			"The sizes of the block rows and columns come from the operators and matrices in them, then from the c·I blocks (square), and in a square grid of blocks block row i has the size of block column i when nothing else fixes it. " +
			"The blocks keep their structure (a Kronecker sum stays one): a product A·x is formed block by block, and the sparse or dense form is assembled only when an analysis asks for it. " +
			"split(w, A) cuts a vector into the parts A's block columns act on.",
		Examples: []Example{
			{"blocks([0, 1], [{-2, 1 | 1, -2}, -0.5]) * [1, 0, 0, 1]", "[0, 1, -2, 0.5]"},
			{"blocks([0, 1], [-laplacian(interval(0, 1, 5)), 0])", "operator blocks: 6×6, 2×2 blocks (sizes 3, 3)\n  entries {  0,   0,   0, 1, 0, 0 |\n             0,   0,   0, 0, 1, 0 |\n             0,   0,   0, 0, 0, 1 |\n            32, -16,   0, 0, 0, 0 |\n           -16,  32, -16, 0, 0, 0 |\n             0, -16,  32, 0, 0, 0}"},
		},
		Impl: blocksImpl,
	},
	{
		Name:     "identity",
		Params:   []value.Param{req("n", "the order, a whole number ≥ 1")},
		Doc:      "The identity operator I of order n (stored as its diagonal).",
		Examples: []Example{{"identity(3) * [4, 5, 6]", "[4, 5, 6]"}, {"identity(3)", "operator I: 3×3, diagonal\n  entries {1, 0, 0 |\n           0, 1, 0 |\n           0, 0, 1}"}},
		Impl: func(c *eval.Call) (value.Value, error) {
			n, err := argCount(c, 0)
			if err != nil {
				return nil, err
			}
			if n < 1 {
				return nil, value.ValueErrorf("identity: n must be at least 1")
			}
			if err := memguard.Floats(n, "the diagonal of an identity operator"); err != nil {
				return nil, prefix(c, err)
			}
			return &objects.Operator{Op: linop.ScaledIdentity(n, 1), Label: "I"}, nil
		},
	},
	{
		Name:     "diagonal",
		Params:   []value.Param{req("d", "the diagonal entries: a real vector, range or list of numbers")},
		Doc:      "The diagonal operator diag(d): (diag(d) u)_i = d_i u_i. Entries must be finite.",
		Examples: []Example{{"diagonal([1, 2, 3]) * [1, 1, 1]", "[1, 2, 3]"}, {"diagonal(1 .. 3)", "operator diag(d): 3×3, diagonal\n  entries {1, 0, 0 |\n           0, 2, 0 |\n           0, 0, 3}"}},
		Impl: func(c *eval.Call) (value.Value, error) {
			v, err := c.Arg(0)
			if err != nil {
				return nil, err
			}
			re, err := finiteReals(c, "d", "; operators are real", v)
			if err != nil {
				return nil, err
			}
			if len(re) == 0 {
				return nil, value.ValueErrorf("diagonal: d is empty; an operator needs at least one row")
			}
			return &objects.Operator{Op: &linop.Diag{D: append([]float64(nil), re...)}, Label: "diag(d)"}, nil
		},
	},
	{
		Name:   "stack",
		Params: []value.Param{rest("parts", "vectors, ranges or numbers, in order")},
		Doc:    "The vector of the parts one after another: stack(u, v) = [u_0, …, u_{n−1}, v_0, …]; numbers count as one entry. The result is complex when a part is.",
		Examples: []Example{
			{"stack([1, 2], 3, 0 .. 1)", "[1, 2, 3, 0, 1]"},
			{"stack([1, 2], [0, 1i])", "[1+0i, 2+0i, 0+0i, 0+1i]"},
		},
		Impl: stackImpl,
	},
	{
		Name: "split",
		Params: []value.Param{
			req("w", "a vector"),
			req("sizes", "the lengths of the parts (whole numbers adding up to len(w)), or a block operator, whose block columns give them"),
		},
		Doc: "The list of consecutive parts of w with the given lengths, the inverse of stack: split(stack(u, v), [len(u), len(v)]) = [u, v]. " +
			"With a block operator A, the parts are those A's block columns act on, so [u, v] = split(sol.final, A) takes the state of a first-order system apart.",
		Examples: []Example{
			{"split([1, 2, 3, 4, 5], [2, 3])", "[[1, 2], [3, 4, 5]]"},
			{"split([1, 2, 3, 4], blocks([0, 1], [{-1, 0 | 0, -1}, 0]))", "[[1, 2], [3, 4]]"},
		},
		Impl: splitImpl,
	},
}

// blockEntry is one entry of the grid: an operator, or c·I (op nil).
type blockEntry struct {
	op    linop.Operator
	scale float64
	r, c  int // -1 when the entry does not fix the size
}

func blocksImpl(c *eval.Call) (value.Value, error) {
	if len(c.Rest) == 0 {
		return nil, value.ValueErrorf("blocks: give at least one block row, e.g. blocks([A, 0], [0, B])")
	}
	grid := make([][]blockEntry, len(c.Rest))
	ncol := -1
	for i, rv := range c.Rest {
		row, err := blockRow(c, i, rv)
		if err != nil {
			return nil, err
		}
		if ncol >= 0 && len(row) != ncol {
			return nil, value.ValueErrorf("blocks: block row %d has %s but block row 0 has %d", i, count(len(row), "block"), ncol)
		}
		ncol = len(row)
		grid[i] = row
	}
	rows, cols, err := blockSizes(grid)
	if err != nil {
		return nil, err
	}
	if total(rows) != total(cols) {
		return nil, value.ValueErrorf("blocks: the blocks make a %d×%d operator; an operator must be square (block rows %s, block columns %s)", total(rows), total(cols), sizesText(rows), sizesText(cols))
	}
	ops := make([][]linop.Operator, len(grid))
	for i, row := range grid {
		ops[i] = make([]linop.Operator, len(row))
		for j, e := range row {
			switch {
			case e.op != nil:
				ops[i][j] = e.op
			case e.scale != 0:
				if err := memguard.Floats(rows[i], "the diagonal of a multiple of the identity"); err != nil {
					return nil, prefix(c, err)
				}
				ops[i][j] = linop.ScaledIdentity(rows[i], e.scale)
			}
		}
		if err := c.Tick(len(row)); err != nil {
			return nil, err
		}
	}
	return &objects.Operator{Op: linop.NewBlock(ops, rows, cols), Label: "blocks"}, nil
}

func total(s []int) int {
	n := 0
	for _, k := range s {
		n += k
	}
	return n
}

func sizesText(s []int) string {
	parts := make([]string, len(s))
	for i, k := range s {
		parts[i] = fmt.Sprint(k)
	}
	return strings.Join(parts, ", ")
}

// blockRow reads block row i: a list (or a vector of numbers).
func blockRow(c *eval.Call, i int, rv value.Value) ([]blockEntry, error) {
	var items []value.Value
	switch t := rv.(type) {
	case value.List:
		items = t
	case *value.Vec, *value.Range:
		s := t.(value.Indexable)
		for k := 0; k < s.Len(); k++ {
			items = append(items, s.Index(k))
		}
	default:
		return nil, value.TypeErrorf("blocks: block row %d must be a list [B_%d0, B_%d1, …], not %s", i, i, i, value.TypeName(rv))
	}
	if len(items) == 0 {
		return nil, value.ValueErrorf("blocks: block row %d is empty", i)
	}
	row := make([]blockEntry, len(items))
	for j, it := range items {
		switch t := it.(type) {
		case value.Num:
			x := float64(t)
			if math.IsNaN(x) || math.IsInf(x, 0) {
				return nil, value.ValueErrorf("blocks: block (%d, %d) is %s; a number block must be finite", i, j, value.FormatNum(x))
			}
			row[j] = blockEntry{scale: x, r: -1, c: -1}
		case *objects.Operator:
			if len(t.Lift) > 0 {
				return nil, value.ValueErrorf("blocks: block (%d, %d) carries boundary data, which a block operator cannot pass on; build it on a grid with homogeneous ends and give the data as a forcing", i, j)
			}
			if t.IsComplex() {
				return nil, value.TypeErrorf("blocks: block (%d, %d) is a complex operator; blocks are real operators, matrices or numbers (build a complex block operator as blocks of real parts plus 1i times blocks of imaginary parts)", i, j)
			}
			r, k := t.Op.Dims()
			row[j] = blockEntry{op: t.Op, r: r, c: k}
		case *value.Matrix:
			d := mat.NewDense(t.Rows, t.Cols, append([]float64(nil), t.Data...))
			row[j] = blockEntry{op: linop.NewDense(d), r: t.Rows, c: t.Cols}
		default:
			return nil, value.TypeErrorf("blocks: block (%d, %d) must be an operator, a matrix or a number, not %s", i, j, value.TypeName(it))
		}
	}
	return row, nil
}

// blockSizes infers the sizes of the block rows and columns: from the
// operators and matrices first, then across the c·I blocks (square) until
// nothing changes. It names the first block that disagrees, and a row or
// column whose size nothing fixes.
func blockSizes(grid [][]blockEntry) (rows, cols []int, err error) {
	rows = make([]int, len(grid))
	cols = make([]int, len(grid[0]))
	for i := range rows {
		rows[i] = -1
	}
	for j := range cols {
		cols[j] = -1
	}
	for i, row := range grid {
		for j, e := range row {
			if e.op == nil {
				continue
			}
			if rows[i] >= 0 && rows[i] != e.r {
				return nil, nil, value.ValueErrorf("blocks: block (%d, %d) has %d rows but block row %d has %d", i, j, e.r, i, rows[i])
			}
			if cols[j] >= 0 && cols[j] != e.c {
				return nil, nil, value.ValueErrorf("blocks: block (%d, %d) has %d columns but block column %d has %d", i, j, e.c, j, cols[j])
			}
			rows[i], cols[j] = e.r, e.c
		}
	}
	for changed := true; changed; {
		changed = false
		for i, row := range grid {
			for j, e := range row {
				if e.op != nil || e.scale == 0 {
					continue
				}
				switch {
				case rows[i] >= 0 && cols[j] >= 0 && rows[i] != cols[j]:
					return nil, nil, value.ValueErrorf("blocks: block (%d, %d) is %s·I, a square block, but block row %d has %d rows and block column %d has %d columns", i, j, value.FormatNum(e.scale), i, rows[i], j, cols[j])
				case rows[i] >= 0 && cols[j] < 0:
					cols[j], changed = rows[i], true
				case cols[j] >= 0 && rows[i] < 0:
					rows[i], changed = cols[j], true
				}
			}
		}
		if !changed && len(rows) == len(cols) {
			// A square grid splits the state the same way on both sides:
			// block row i and block column i have the same size.
			for i := range rows {
				switch {
				case rows[i] < 0 && cols[i] >= 0:
					rows[i], changed = cols[i], true
				case cols[i] < 0 && rows[i] >= 0:
					cols[i], changed = rows[i], true
				}
			}
		}
	}
	for i, r := range rows {
		if r < 0 {
			return nil, nil, value.ValueErrorf("blocks: the size of block row %d is not fixed by any block: put an operator or a matrix in it, e.g. identity(n)", i)
		}
	}
	for j, k := range cols {
		if k < 0 {
			return nil, nil, value.ValueErrorf("blocks: the size of block column %d is not fixed by any block: put an operator or a matrix in it, e.g. identity(n)", j)
		}
	}
	return rows, cols, nil
}

func stackImpl(c *eval.Call) (value.Value, error) {
	var re []float64
	var cx []complex128
	n := 0.0
	for k, p := range c.Rest {
		pr, pc, err := numbers(c, fmt.Sprintf("part %d", k), p)
		if err != nil {
			return nil, err
		}
		n += float64(len(pr) + len(pc))
		if err := c.CheckSize(n, "stack: the vector"); err != nil {
			return nil, err
		}
		if pc != nil && cx == nil {
			cx = toComplex(re)
		}
		switch {
		case cx != nil && pc != nil:
			cx = append(cx, pc...)
		case cx != nil:
			cx = append(cx, toComplex(pr)...)
		default:
			re = append(re, pr...)
		}
	}
	if cx != nil {
		return value.ComplexVec(cx), nil
	}
	return value.RealVec(re), nil
}

func splitImpl(c *eval.Call) (value.Value, error) {
	w, err := c.Arg(0)
	if err != nil {
		return nil, err
	}
	re, cx, err := numbers(c, "w", w)
	if err != nil {
		return nil, err
	}
	s, err := c.Arg(1)
	if err != nil {
		return nil, err
	}
	var sizes []int
	if a, ok := s.(*objects.Operator); ok {
		b, ok := a.Op.(*linop.Block)
		if !ok {
			return nil, value.TypeErrorf("split: sizes must be a list of lengths or a block operator (made by blocks), not an operator %s", a.Label)
		}
		sizes = b.ColSizes
	} else {
		ls, lc, err := numbers(c, "sizes", s)
		if err != nil {
			return nil, err
		}
		if lc != nil {
			return nil, value.TypeErrorf("split: sizes must be whole numbers, not complex")
		}
		for k, x := range ls {
			if x < 0 || x != math.Trunc(x) || x > float64(len(re)+len(cx)) {
				return nil, value.ValueErrorf("split: sizes[%d] = %s is not a length (a whole number from 0 to len(w) = %d)", k, value.FormatNum(x), len(re)+len(cx))
			}
			sizes = append(sizes, int(x))
		}
	}
	n := len(re) + len(cx)
	if total(sizes) != n {
		return nil, value.ValueErrorf("split: the sizes %s add up to %d but w has %d entries", sizesText(sizes), total(sizes), n)
	}
	out := make(value.List, len(sizes))
	off := 0
	for k, m := range sizes {
		if cx != nil {
			out[k] = value.ComplexVec(append([]complex128(nil), cx[off:off+m]...))
		} else {
			out[k] = value.RealVec(append([]float64(nil), re[off:off+m]...))
		}
		off += m
	}
	return out, nil
}

// count is "1 block", "2 blocks".
func count(n int, what string) string {
	if n == 1 {
		return "1 " + what
	}
	return fmt.Sprintf("%d %ss", n, what)
}

package solve

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/cmplx"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// SparseLU is the factorisation P M Q = L U of a sparse complex n×n matrix
// M, computed column by column by the left-looking algorithm of Gilbert and
// Peierls (SIAM J. Sci. Stat. Comput. 9, 1988) in the form given by Davis,
// Direct Methods for Sparse Linear Systems (SIAM 2006): for each column a
// sparse triangular solve whose nonzero pattern is found by depth-first
// search in the graph of L, then threshold partial pivoting that keeps the
// diagonal of the fill-reducing column order Q whenever it is within a
// factor Tol of the largest candidate. L has a unit diagonal.
type SparseLU struct {
	n      int
	q      []int // column order: column k of M Q is column q[k] of M
	pinv   []int // row i of M is row pinv[i] of P M
	lp, li []int // L by columns; li holds pivot positions after factoring
	lx     []complex128
	up, ui []int // U by columns, diagonal last
	ux     []complex128
}

// SparseTol is the pivot threshold of SparseLU: the diagonal candidate is
// kept when its magnitude is at least SparseTol times the largest in its
// column.
const SparseTol = 0.1

// CSC is a complex n×n matrix in compressed-column form: column j has the
// row indices RowIdx[ColPtr[j]:ColPtr[j+1]] and values Val[ColPtr[j]:ColPtr[j+1]].
type CSC struct {
	N      int
	ColPtr []int
	RowIdx []int
	Val    []complex128
}

// shiftedCSC returns zI − A in compressed-column form.
func shiftedCSC(a *linop.CSR, z complex128) *CSC {
	t := a.Transpose() // rows of Aᵀ are the columns of A
	n := a.Rows
	m := &CSC{N: n, ColPtr: make([]int, n+1)}
	m.RowIdx = make([]int, 0, t.NNZ()+n)
	m.Val = make([]complex128, 0, t.NNZ()+n)
	for j := 0; j < n; j++ {
		diag := false
		for p := t.RowPtr[j]; p < t.RowPtr[j+1]; p++ {
			i := t.ColIdx[p]
			if i == j {
				diag = true
				m.RowIdx = append(m.RowIdx, i)
				m.Val = append(m.Val, z-complex(t.Val[p], 0))
				continue
			}
			if !diag && i > j {
				diag = true
				m.RowIdx = append(m.RowIdx, j)
				m.Val = append(m.Val, z)
			}
			m.RowIdx = append(m.RowIdx, i)
			m.Val = append(m.Val, complex(-t.Val[p], 0))
		}
		if !diag {
			m.RowIdx = append(m.RowIdx, j)
			m.Val = append(m.Val, z)
		}
		m.ColPtr[j+1] = len(m.RowIdx)
	}
	return m
}

// NewSparseShifted factors zI − A for a square operator A with a sparse
// form by the supernodal factorisation (Supernodal: fill-reducing order
// chosen by predicted fill among approximate minimum degree and nested
// dissection, real arithmetic for real z), falling back to the frontal
// factorisation with delayed pivots (Multifrontal) when a pivot inside a
// supernode is too small. It returns an error wrapping ErrSingular (naming
// z) if zI − A is singular to working precision, the context's error if
// ctx is cancelled, or an error from the memory guard. It panics with
// ErrShape if A is not square.
func NewSparseShifted(ctx context.Context, a linop.Operator, z complex128) (AdjointSolver, error) {
	r, c := a.Dims()
	if r != c {
		panic(ErrShape)
	}
	csr, err := linop.ToCSR(a)
	if err != nil {
		return nil, err
	}
	return newSparse(ctx, a, csr, z, Options{})
}

// sparseOrder picks the fill-reducing order: grid nested dissection when
// the operator, or a term or factor of it, is a Kronecker sum of its size
// (for instance a 2-D Laplacian plus a coefficient), RCM otherwise; with
// Options.Grid the caller names the grid of a plain sparse matrix.
func sparseOrder(a linop.Operator, csr *linop.CSR, grid [2]int) []int {
	if grid[0]*grid[1] == csr.Rows && grid[0] > 0 {
		return GridOrder(csr, grid[0], grid[1])
	}
	if k, ok := a.(*linop.KronSum); ok {
		if q := kronOrder(k); q != nil {
			return q
		}
	}
	if nx, ny, ok := gridOf(a); ok {
		return GridOrder(csr, nx, ny)
	}
	return RCM(csr)
}

// newSparse factors zI − A by the supernodal factorisation, falling back
// to the frontal one with delayed pivots when a pivot inside a supernode's
// diagonal block is too small (FrontalMethod forces the latter).
func newSparse(ctx context.Context, a linop.Operator, csr *linop.CSR, z complex128, opt Options) (AdjointSolver, error) {
	if opt.Method != FrontalMethod {
		s, err := newSupernodal(ctx, a, csr, z, opt)
		if err == nil {
			return s, nil
		}
		if !errors.Is(err, errFallback) {
			return nil, withShift(err, z)
		}
	}
	q := sparseOrder(a, csr, opt.Grid)
	mf, err := factorMultifrontal(ctx, csr, z, q, opt.Progress)
	if err != nil {
		return nil, withShift(err, z)
	}
	return mf, nil
}

func factorSparseCSC(ctx context.Context, m *CSC, q []int, progress func(done, total int)) (*SparseLU, error) {
	n := m.N
	if q == nil {
		q = make([]int, n)
		for k := range q {
			q[k] = k
		}
	}
	if len(q) != n || len(m.ColPtr) != n+1 || len(m.RowIdx) != len(m.Val) || m.ColPtr[n] != len(m.Val) {
		panic(ErrShape)
	}
	var amax float64
	for _, v := range m.Val {
		amax = math.Max(amax, abs1(v))
	}
	tol := pivotTol * float64(n) * amax
	f := &SparseLU{n: n, q: q, pinv: make([]int, n), lp: make([]int, n+1), up: make([]int, n+1)}
	guess := 4*len(m.Val) + n
	f.li, f.lx = make([]int, 0, guess), make([]complex128, 0, guess)
	f.ui, f.ux = make([]int, 0, guess), make([]complex128, 0, guess)
	for i := range f.pinv {
		f.pinv[i] = -1
	}
	x := make([]complex128, n)
	xi := make([]int, 2*n) // reach output and DFS stack
	mark := make([]int, n) // visited stamp: mark[i] == k+1 in step k
	pstack := make([]int, n)
	limit := memguard.Limit()
	for k := 0; k < n; k++ {
		if k&255 == 0 {
			if err := ctx.Err(); err != nil {
				return nil, err
			}
			if progress != nil && k > 0 {
				progress(k, n)
			}
			if need := int64(cap(f.lx)+cap(f.ux)) * 24; need > limit {
				return nil, memguard.CheckBytes(need, fmt.Sprintf("sparse LU factors of order %d", n))
			}
		}
		f.lp[k] = len(f.li)
		f.up[k] = len(f.ui)
		col := q[k]
		// Reach: the rows of x = L⁻¹ M(:, col), in topological order xi[top:n].
		top := n
		for p := m.ColPtr[col]; p < m.ColPtr[col+1]; p++ {
			if i := m.RowIdx[p]; mark[i] != k+1 {
				top = f.dfs(i, k+1, top, xi, pstack, mark)
			}
		}
		for p := top; p < n; p++ {
			x[xi[p]] = 0
		}
		for p := m.ColPtr[col]; p < m.ColPtr[col+1]; p++ {
			x[m.RowIdx[p]] += m.Val[p]
		}
		for p := top; p < n; p++ {
			j := xi[p]
			J := f.pinv[j]
			if J < 0 {
				continue
			}
			xj := x[j]
			if xj == 0 {
				continue
			}
			for t := f.lp[J] + 1; t < f.lp[J+1]; t++ {
				x[f.li[t]] -= f.lx[t] * xj
			}
		}
		// Split into U (pivoted rows) and pivot candidates.
		ipiv, best := -1, -1.0
		for p := top; p < n; p++ {
			i := xi[p]
			if f.pinv[i] >= 0 {
				f.ui = append(f.ui, f.pinv[i])
				f.ux = append(f.ux, x[i])
				continue
			}
			if v := abs1(x[i]); v > best {
				ipiv, best = i, v
			}
		}
		if ipiv < 0 || best <= tol || best == 0 {
			return nil, &SingularError{Pivot: k, N: n, Method: "sparse"}
		}
		if f.pinv[col] < 0 && mark[col] == k+1 && abs1(x[col]) >= SparseTol*best {
			ipiv = col
		}
		piv := x[ipiv]
		f.ui = append(f.ui, k)
		f.ux = append(f.ux, piv)
		f.pinv[ipiv] = k
		f.li = append(f.li, ipiv)
		f.lx = append(f.lx, 1)
		for p := top; p < n; p++ {
			i := xi[p]
			if f.pinv[i] < 0 {
				f.li = append(f.li, i)
				f.lx = append(f.lx, x[i]/piv)
			}
			x[i] = 0
		}
	}
	f.lp[n] = len(f.li)
	f.up[n] = len(f.ui)
	if progress != nil {
		progress(n, n)
	}
	for p, i := range f.li {
		f.li[p] = f.pinv[i]
	}
	return f, nil
}

// dfs visits the graph of L from row j (node j has the children of column
// pinv[j] of L, when j is pivotal) and pushes the finished nodes onto
// xi[..top), returning the new top.
func (f *SparseLU) dfs(j, stamp, top int, xi, pstack, mark []int) int {
	head := 0
	stack := xi[len(xi)/2:]
	stack[0] = j
	for head >= 0 {
		j = stack[head]
		J := f.pinv[j]
		if mark[j] != stamp {
			mark[j] = stamp
			if J < 0 {
				pstack[head] = 0
			} else {
				pstack[head] = f.lp[J] + 1
			}
		}
		done := true
		if J >= 0 {
			// Pivotal rows belong to finished columns J < k, so lp[J+1] is set.
			for p := pstack[head]; p < f.lp[J+1]; p++ {
				i := f.li[p]
				if mark[i] == stamp {
					continue
				}
				pstack[head] = p + 1
				head++
				stack[head] = i
				done = false
				break
			}
		}
		if done {
			head--
			top--
			xi[top] = j
		}
	}
	return top
}

// FactorSparse factors the complex n×n matrix m (duplicate entries are
// summed) in the column order q (a permutation; nil for the identity),
// calling progress(done, n) every 256 columns if it is not nil. It
// returns an error wrapping ErrSingular for a negligible pivot and the
// context's error when ctx is cancelled. It panics with ErrShape on
// inconsistent lengths.
func FactorSparse(ctx context.Context, m *CSC, q []int, progress func(done, total int)) (*SparseLU, error) {
	return factorSparseCSC(ctx, m, q, progress)
}

// NNZ returns the numbers of stored entries of L and U (fill included).
func (f *SparseLU) NNZ() (l, u int) { return len(f.li), len(f.ui) }

// Len returns n.
func (f *SparseLU) Len() int { return f.n }

// Solve sets dst = M⁻¹ b (dst and b may be the same slice). It panics with
// ErrShape on a length mismatch.
func (f *SparseLU) Solve(dst, b []complex128) error {
	n := f.n
	if len(dst) != n || len(b) != n {
		panic(ErrShape)
	}
	y := make([]complex128, n)
	for i, v := range b {
		y[f.pinv[i]] = v
	}
	for k := 0; k < n; k++ {
		yk := y[k]
		if yk == 0 {
			continue
		}
		for p := f.lp[k] + 1; p < f.lp[k+1]; p++ {
			y[f.li[p]] -= f.lx[p] * yk
		}
	}
	for k := n - 1; k >= 0; k-- {
		last := f.up[k+1] - 1
		y[k] /= f.ux[last]
		yk := y[k]
		if yk == 0 {
			continue
		}
		for p := f.up[k]; p < last; p++ {
			y[f.ui[p]] -= f.ux[p] * yk
		}
	}
	for k, j := range f.q {
		dst[j] = y[k]
	}
	return nil
}

// SolveH sets dst = M⁻ᴴ b (dst and b may be the same slice). It panics with
// ErrShape on a length mismatch.
func (f *SparseLU) SolveH(dst, b []complex128) error {
	n := f.n
	if len(dst) != n || len(b) != n {
		panic(ErrShape)
	}
	y := make([]complex128, n)
	for k, j := range f.q {
		y[k] = b[j]
	}
	for k := 0; k < n; k++ {
		last := f.up[k+1] - 1
		s := y[k]
		for p := f.up[k]; p < last; p++ {
			s -= cmplx.Conj(f.ux[p]) * y[f.ui[p]]
		}
		y[k] = s / cmplx.Conj(f.ux[last])
	}
	for k := n - 1; k >= 0; k-- {
		s := y[k]
		for p := f.lp[k] + 1; p < f.lp[k+1]; p++ {
			s -= cmplx.Conj(f.lx[p]) * y[f.li[p]]
		}
		y[k] = s
	}
	for i := range dst {
		dst[i] = y[f.pinv[i]]
	}
	return nil
}

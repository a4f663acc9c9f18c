package linop

import (
	"fmt"
	"math"
	"runtime"
	"sort"
	"sync"

	"gonum.org/v1/gonum/mat"
	"semiflow/numerics/memguard"
)

// CSR is a sparse r×c matrix in compressed sparse row form: the entries of
// row i are Val[RowPtr[i]:RowPtr[i+1]] in the columns ColIdx[RowPtr[i]:RowPtr[i+1]].
// Constructors in this package produce strictly increasing columns within
// each row and no duplicates; code that fills the fields by hand should
// keep to that (Validate checks it).
type CSR struct {
	Rows, Cols int
	RowPtr     []int // length Rows+1, RowPtr[0] = 0
	ColIdx     []int
	Val        []float64
}

// parallelNNZ is the number of stored entries above which Apply splits the
// rows over the available cores.
const parallelNNZ = 1 << 15

// NewCSRFromTriplets builds the r×c matrix with entries A[i[k], j[k]] += v[k];
// duplicate positions are summed. Entries that sum to zero are kept as
// explicit zeros. It panics with ErrShape if i, j and v differ in length,
// and panics if an index lies outside the matrix or r, c are negative.
func NewCSRFromTriplets(r, c int, i, j []int, v []float64) *CSR {
	if len(i) != len(j) || len(i) != len(v) {
		panic(ErrShape)
	}
	if r < 0 || c < 0 {
		panic("linop: negative dimension")
	}
	count := make([]int, r+1)
	for k := range i {
		if i[k] < 0 || i[k] >= r || j[k] < 0 || j[k] >= c {
			panic(fmt.Sprintf("linop: triplet %d at (%d, %d) outside %d×%d", k, i[k], j[k], r, c))
		}
		count[i[k]+1]++
	}
	for k := 0; k < r; k++ {
		count[k+1] += count[k]
	}
	col := make([]int, len(i))
	val := make([]float64, len(i))
	next := append([]int(nil), count[:r]...)
	for k := range i {
		p := next[i[k]]
		col[p], val[p] = j[k], v[k]
		next[i[k]]++
	}
	// Sort each row by column and merge duplicates in place.
	a := &CSR{Rows: r, Cols: c, RowPtr: make([]int, r+1)}
	out := 0
	for row := 0; row < r; row++ {
		lo, hi := count[row], count[row+1]
		sort.Sort(rowSorter{col[lo:hi], val[lo:hi]})
		for p := lo; p < hi; p++ {
			if out > a.RowPtr[row] && col[out-1] == col[p] {
				val[out-1] += val[p]
				continue
			}
			col[out], val[out] = col[p], val[p]
			out++
		}
		a.RowPtr[row+1] = out
	}
	a.ColIdx = col[:out:out]
	a.Val = val[:out:out]
	return a
}

type rowSorter struct {
	c []int
	v []float64
}

func (s rowSorter) Len() int           { return len(s.c) }
func (s rowSorter) Less(a, b int) bool { return s.c[a] < s.c[b] }
func (s rowSorter) Swap(a, b int) {
	s.c[a], s.c[b] = s.c[b], s.c[a]
	s.v[a], s.v[b] = s.v[b], s.v[a]
}

// CSRFromDense returns the entries of m with |m_ij| > drop in CSR form.
func CSRFromDense(m mat.Matrix, drop float64) *CSR {
	r, c := m.Dims()
	a := &CSR{Rows: r, Cols: c, RowPtr: make([]int, r+1)}
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			if v := m.At(i, j); math.Abs(v) > drop || (drop == 0 && v != 0) {
				a.ColIdx = append(a.ColIdx, j)
				a.Val = append(a.Val, v)
			}
		}
		a.RowPtr[i+1] = len(a.ColIdx)
	}
	return a
}

// Identity returns the n×n identity in CSR form.
func Identity(n int) *CSR {
	a := &CSR{Rows: n, Cols: n, RowPtr: make([]int, n+1), ColIdx: make([]int, n), Val: make([]float64, n)}
	for k := 0; k < n; k++ {
		a.RowPtr[k+1] = k + 1
		a.ColIdx[k] = k
		a.Val[k] = 1
	}
	return a
}

// Validate reports whether the fields describe a well-formed matrix with
// strictly increasing columns in each row.
func (a *CSR) Validate() error {
	if a.Rows < 0 || a.Cols < 0 || len(a.RowPtr) != a.Rows+1 || a.RowPtr[0] != 0 {
		return fmt.Errorf("linop: CSR row pointer of length %d for %d rows", len(a.RowPtr), a.Rows)
	}
	nnz := a.RowPtr[a.Rows]
	if len(a.ColIdx) != nnz || len(a.Val) != nnz {
		return fmt.Errorf("linop: CSR with %d column indices and %d values for %d entries", len(a.ColIdx), len(a.Val), nnz)
	}
	for i := 0; i < a.Rows; i++ {
		if a.RowPtr[i+1] < a.RowPtr[i] {
			return fmt.Errorf("linop: CSR row pointer decreases at row %d", i)
		}
		for p := a.RowPtr[i]; p < a.RowPtr[i+1]; p++ {
			j := a.ColIdx[p]
			if j < 0 || j >= a.Cols {
				return fmt.Errorf("linop: CSR column %d outside [0, %d) in row %d", j, a.Cols, i)
			}
			if p > a.RowPtr[i] && a.ColIdx[p-1] >= j {
				return fmt.Errorf("linop: CSR columns not increasing in row %d", i)
			}
		}
	}
	return nil
}

// Dims returns the dimensions of the matrix.
func (a *CSR) Dims() (r, c int) { return a.Rows, a.Cols }

// NNZ returns the number of stored entries.
func (a *CSR) NNZ() int { return a.RowPtr[a.Rows] }

// At returns the entry A[i, j]. It panics if (i, j) lies outside the matrix.
func (a *CSR) At(i, j int) float64 {
	if i < 0 || i >= a.Rows || j < 0 || j >= a.Cols {
		panic(ErrShape)
	}
	lo, hi := a.RowPtr[i], a.RowPtr[i+1]
	k := lo + sort.SearchInts(a.ColIdx[lo:hi], j)
	if k < hi && a.ColIdx[k] == j {
		return a.Val[k]
	}
	return 0
}

// Apply sets dst = A x, splitting the rows over the available cores when the
// matrix is large. It panics with ErrShape on a length mismatch.
func (a *CSR) Apply(dst, x []float64) {
	if len(x) != a.Cols || len(dst) != a.Rows {
		panic(ErrShape)
	}
	workers := runtime.GOMAXPROCS(0)
	if a.NNZ() < parallelNNZ || workers < 2 || a.Rows < 2*workers {
		a.applyRows(dst, x, 0, a.Rows)
		return
	}
	// Split into chunks of about equal numbers of entries.
	var wg sync.WaitGroup
	nnz := a.NNZ()
	lo := 0
	for w := 0; w < workers; w++ {
		hi := a.Rows
		if w < workers-1 {
			target := nnz * (w + 1) / workers
			hi = lo + sort.SearchInts(a.RowPtr[lo:a.Rows], target)
		}
		if hi > lo {
			wg.Add(1)
			go func(lo, hi int) {
				defer wg.Done()
				a.applyRows(dst, x, lo, hi)
			}(lo, hi)
		}
		lo = hi
	}
	wg.Wait()
}

func (a *CSR) applyRows(dst, x []float64, lo, hi int) {
	rp, ci, v := a.RowPtr, a.ColIdx, a.Val
	for i := lo; i < hi; i++ {
		var s float64
		p1 := rp[i+1]
		for p := rp[i]; p < p1; p++ {
			s += v[p] * x[ci[p]]
		}
		dst[i] = s
	}
}

// ApplyT sets dst = Aᵀ x. For large matrices the rows are split over the
// cores, each scattering into its own buffer, and the buffers are summed.
// It panics with ErrShape on a length mismatch.
func (a *CSR) ApplyT(dst, x []float64) {
	if len(x) != a.Rows || len(dst) != a.Cols {
		panic(ErrShape)
	}
	workers := runtime.GOMAXPROCS(0)
	if a.NNZ() < parallelNNZ || workers < 2 || a.Rows < 2*workers {
		a.scatterRows(dst, x, 0, a.Rows)
		return
	}
	bufs := make([][]float64, workers)
	bufs[0] = dst
	var wg sync.WaitGroup
	nnz := a.NNZ()
	lo := 0
	for w := 0; w < workers; w++ {
		hi := a.Rows
		if w < workers-1 {
			hi = lo + sort.SearchInts(a.RowPtr[lo:a.Rows], nnz*(w+1)/workers)
		}
		if w > 0 {
			bufs[w] = make([]float64, a.Cols)
		}
		wg.Add(1)
		go func(buf []float64, lo, hi int) {
			defer wg.Done()
			a.scatterRows(buf, x, lo, hi)
		}(bufs[w], lo, hi)
		lo = hi
	}
	wg.Wait()
	// Sum the buffers into dst, split by columns.
	for w := 0; w < workers; w++ {
		c0, c1 := a.Cols*w/workers, a.Cols*(w+1)/workers
		wg.Add(1)
		go func() {
			defer wg.Done()
			d := dst[c0:c1]
			for _, b := range bufs[1:] {
				for j, v := range b[c0:c1] {
					d[j] += v
				}
			}
		}()
	}
	wg.Wait()
}

// scatterRows sets dst = Σ_{lo ≤ i < hi} x_i A[i, :].
func (a *CSR) scatterRows(dst, x []float64, lo, hi int) {
	for k := range dst {
		dst[k] = 0
	}
	for i := lo; i < hi; i++ {
		xi := x[i]
		if xi == 0 {
			continue
		}
		for p := a.RowPtr[i]; p < a.RowPtr[i+1]; p++ {
			dst[a.ColIdx[p]] += a.Val[p] * xi
		}
	}
}

// ToCSR returns a copy of a.
func (a *CSR) ToCSR() (*CSR, error) { return a.Clone(), nil }

// Clone returns a deep copy of a.
func (a *CSR) Clone() *CSR {
	return &CSR{
		Rows: a.Rows, Cols: a.Cols,
		RowPtr: append([]int(nil), a.RowPtr...),
		ColIdx: append([]int(nil), a.ColIdx...),
		Val:    append([]float64(nil), a.Val...),
	}
}

// ToDense returns A as a dense matrix, or an error from the memory guard.
func (a *CSR) ToDense() (*mat.Dense, error) {
	if err := memguard.DenseReal(a.Rows, a.Cols); err != nil {
		return nil, err
	}
	if a.Rows == 0 || a.Cols == 0 {
		return &mat.Dense{}, nil
	}
	m := mat.NewDense(a.Rows, a.Cols, nil)
	for i := 0; i < a.Rows; i++ {
		for p := a.RowPtr[i]; p < a.RowPtr[i+1]; p++ {
			m.Set(i, a.ColIdx[p], m.At(i, a.ColIdx[p])+a.Val[p])
		}
	}
	return m, nil
}

// Transpose returns Aᵀ as a new CSR matrix.
func (a *CSR) Transpose() *CSR {
	t := &CSR{Rows: a.Cols, Cols: a.Rows, RowPtr: make([]int, a.Cols+1),
		ColIdx: make([]int, a.NNZ()), Val: make([]float64, a.NNZ())}
	for _, j := range a.ColIdx {
		t.RowPtr[j+1]++
	}
	for j := 0; j < a.Cols; j++ {
		t.RowPtr[j+1] += t.RowPtr[j]
	}
	next := append([]int(nil), t.RowPtr[:a.Cols]...)
	for i := 0; i < a.Rows; i++ {
		for p := a.RowPtr[i]; p < a.RowPtr[i+1]; p++ {
			q := next[a.ColIdx[p]]
			t.ColIdx[q], t.Val[q] = i, a.Val[p]
			next[a.ColIdx[p]]++
		}
	}
	return t
}

// Diagonal returns the main diagonal of A (length min(r, c)).
func (a *CSR) Diagonal() []float64 {
	d := make([]float64, min(a.Rows, a.Cols))
	for i := range d {
		d[i] = a.At(i, i)
	}
	return d
}

// Bandwidth returns the lower and upper bandwidths: A[i, j] = 0 (or is not
// stored) whenever j < i−kl or j > i+ku.
func (a *CSR) Bandwidth() (kl, ku int) {
	for i := 0; i < a.Rows; i++ {
		lo, hi := a.RowPtr[i], a.RowPtr[i+1]
		if lo == hi {
			continue
		}
		kl = max(kl, i-a.ColIdx[lo])
		ku = max(ku, a.ColIdx[hi-1]-i)
	}
	return kl, ku
}

// NormInf returns max_i Σ_j |A[i, j]|.
func (a *CSR) NormInf() float64 {
	var n float64
	for i := 0; i < a.Rows; i++ {
		var s float64
		for p := a.RowPtr[i]; p < a.RowPtr[i+1]; p++ {
			s += math.Abs(a.Val[p])
		}
		n = math.Max(n, s)
	}
	return n
}

// Norm1 returns max_j Σ_i |A[i, j]|.
func (a *CSR) Norm1() float64 {
	s := make([]float64, a.Cols)
	for p, j := range a.ColIdx {
		s[j] += math.Abs(a.Val[p])
	}
	var n float64
	for _, v := range s {
		n = math.Max(n, v)
	}
	return n
}

// AddCSR returns α A + β B. It panics with ErrShape if the dimensions differ.
func AddCSR(alpha float64, a *CSR, beta float64, b *CSR) *CSR {
	if a.Rows != b.Rows || a.Cols != b.Cols {
		panic(ErrShape)
	}
	c := &CSR{Rows: a.Rows, Cols: a.Cols, RowPtr: make([]int, a.Rows+1)}
	c.ColIdx = make([]int, 0, a.NNZ()+b.NNZ())
	c.Val = make([]float64, 0, a.NNZ()+b.NNZ())
	for i := 0; i < a.Rows; i++ {
		p, pe := a.RowPtr[i], a.RowPtr[i+1]
		q, qe := b.RowPtr[i], b.RowPtr[i+1]
		for p < pe || q < qe {
			switch {
			case q >= qe || (p < pe && a.ColIdx[p] < b.ColIdx[q]):
				c.ColIdx = append(c.ColIdx, a.ColIdx[p])
				c.Val = append(c.Val, alpha*a.Val[p])
				p++
			case p >= pe || b.ColIdx[q] < a.ColIdx[p]:
				c.ColIdx = append(c.ColIdx, b.ColIdx[q])
				c.Val = append(c.Val, beta*b.Val[q])
				q++
			default:
				c.ColIdx = append(c.ColIdx, a.ColIdx[p])
				c.Val = append(c.Val, alpha*a.Val[p]+beta*b.Val[q])
				p++
				q++
			}
		}
		c.RowPtr[i+1] = len(c.ColIdx)
	}
	return c
}

// MulCSR returns the product A B. It panics with ErrShape if A's columns
// differ from B's rows.
func MulCSR(a, b *CSR) *CSR {
	if a.Cols != b.Rows {
		panic(ErrShape)
	}
	c := &CSR{Rows: a.Rows, Cols: b.Cols, RowPtr: make([]int, a.Rows+1)}
	acc := make([]float64, b.Cols)
	mark := make([]int, b.Cols)
	for k := range mark {
		mark[k] = -1
	}
	var cols []int
	for i := 0; i < a.Rows; i++ {
		cols = cols[:0]
		for p := a.RowPtr[i]; p < a.RowPtr[i+1]; p++ {
			k, av := a.ColIdx[p], a.Val[p]
			for q := b.RowPtr[k]; q < b.RowPtr[k+1]; q++ {
				j := b.ColIdx[q]
				if mark[j] != i {
					mark[j] = i
					acc[j] = 0
					cols = append(cols, j)
				}
				acc[j] += av * b.Val[q]
			}
		}
		sort.Ints(cols)
		for _, j := range cols {
			c.ColIdx = append(c.ColIdx, j)
			c.Val = append(c.Val, acc[j])
		}
		c.RowPtr[i+1] = len(c.ColIdx)
	}
	return c
}

// Kron returns the Kronecker product A ⊗ B, whose entry at row ia*rb+ib and
// column ja*cb+jb is A[ia, ja] B[ib, jb].
func Kron(a, b *CSR) *CSR {
	c := &CSR{Rows: a.Rows * b.Rows, Cols: a.Cols * b.Cols, RowPtr: make([]int, a.Rows*b.Rows+1)}
	c.ColIdx = make([]int, 0, a.NNZ()*b.NNZ())
	c.Val = make([]float64, 0, a.NNZ()*b.NNZ())
	row := 0
	for ia := 0; ia < a.Rows; ia++ {
		for ib := 0; ib < b.Rows; ib++ {
			for p := a.RowPtr[ia]; p < a.RowPtr[ia+1]; p++ {
				for q := b.RowPtr[ib]; q < b.RowPtr[ib+1]; q++ {
					c.ColIdx = append(c.ColIdx, a.ColIdx[p]*b.Cols+b.ColIdx[q])
					c.Val = append(c.Val, a.Val[p]*b.Val[q])
				}
			}
			row++
			c.RowPtr[row] = len(c.ColIdx)
		}
	}
	return c
}

// ScaleCSR returns α A.
func ScaleCSR(alpha float64, a *CSR) *CSR {
	c := a.Clone()
	for k := range c.Val {
		c.Val[k] *= alpha
	}
	return c
}

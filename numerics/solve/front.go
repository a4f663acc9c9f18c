package solve

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"runtime"
	"sync"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// Multifrontal is a supernodal multifrontal LU factorisation of a sparse
// complex matrix M with a symmetric fill-reducing order Q, on the pattern
// of M + Mᵀ (Duff & Reid, ACM TOMS 1983; Liu, SIAM Review 1992). Columns
// with nested structure in the elimination tree are grouped into
// supernodes; each supernode assembles a dense frontal matrix from the
// entries of M and its children's update matrices, eliminates its own
// columns with partial pivoting restricted to its own (fully summed) rows,
// and passes the Schur complement to its parent. The dense kernels run the
// trailing update on all cores.
//
// A pivot is accepted only if it is at least FrontTol times the largest
// entry of its column in the front (the threshold MUMPS uses by default for
// unsymmetric matrices). A column with no acceptable pivot among the
// front's fully summed rows is delayed: it is passed, with one uneliminated
// row, to the parent front and eliminated there (Duff & Reid 1983). At a
// root every row is fully summed, so only a singular matrix stops it.
type Multifrontal struct {
	// Delayed counts the columns passed on to a parent front for want of an
	// acceptable pivot (each delay is counted once per front).
	Delayed int

	n     int
	q     []int // permuted index t ↔ original q[t]
	nodes []front
}

// front holds the factors produced by one supernode: k eliminated columns
// cols with pivot rows rowOf (permuted indices), the columns ucol of the
// off-diagonal block of U and the rows lrow of the off-diagonal block of L.
type front struct {
	cols, rowOf []int
	ucol, lrow  []int
	top         []complex128 // k×(k+len(ucol)): U with L11 below the diagonal
	low         []complex128 // len(lrow)×k: L21
}

// FrontTol is the pivot threshold of the multifrontal factorisation.
const FrontTol = 0.01

// symbolic holds the supernodal structure of a symmetric pattern.
type symbolic struct {
	snode  [][2]int // [c0, c1) per supernode
	rows   [][]int  // front index lists
	parent []int    // supernodal parent, −1 at roots
}

// analyse computes the elimination tree (Liu 1986) of the pattern of
// M + Mᵀ permuted by q, the row structure of each column of L by
// symbolic elimination, and fundamental supernodes. It returns ctx's
// error when cancelled (checked every analyseCheck columns).
func analyse(ctx context.Context, pat *linop.CSR, q []int) (*symbolic, error) {
	n := pat.Rows
	perm := make([]int, n)
	for t, o := range q {
		perm[o] = t
	}
	// Adjacency in permuted indices (symmetric).
	parent := make([]int, n)
	anc := make([]int, n)
	for j := 0; j < n; j++ {
		parent[j], anc[j] = -1, -1
		for p := pat.RowPtr[q[j]]; p < pat.RowPtr[q[j]+1]; p++ {
			for i := perm[pat.ColIdx[p]]; i != -1 && i < j; {
				next := anc[i]
				anc[i] = j
				if next == -1 {
					parent[i] = j
					break
				}
				i = next
			}
		}
	}
	nchild := make([]int, n)
	for _, p := range parent {
		if p >= 0 {
			nchild[p]++
		}
	}
	// struct(j) = {i > j adjacent to j} ∪ ⋃_children struct(c) \ {j}.
	st := make([][]int, n)
	mark := make([]int, n)
	for i := range mark {
		mark[i] = -1
	}
	pending := make([][]int, n) // children of each column still to merge
	for j := 0; j < n; j++ {
		if parent[j] >= 0 {
			pending[parent[j]] = append(pending[parent[j]], j)
		}
	}
	var total int64
	for j := 0; j < n; j++ {
		if j%analyseCheck == 0 {
			if err := ctx.Err(); err != nil {
				return nil, err
			}
		}
		var s []int
		mark[j] = j
		for p := pat.RowPtr[q[j]]; p < pat.RowPtr[q[j]+1]; p++ {
			if i := perm[pat.ColIdx[p]]; i > j && mark[i] != j {
				mark[i] = j
				s = append(s, i)
			}
		}
		for _, c := range pending[j] {
			for _, i := range st[c] {
				if i > j && mark[i] != j {
					mark[i] = j
					s = append(s, i)
				}
			}
			// A child's structure is no longer needed unless it ends a supernode;
			// it is dropped below once supernodes are known.
		}
		sortInts(s)
		st[j] = s
		total += int64(len(s))
		if total*8 > memguard.Limit() {
			return nil, memguard.CheckBytes(total*8, fmt.Sprintf("symbolic structure of sparse factors of order %d", n))
		}
	}
	sym := &symbolic{}
	id := make([]int, n)
	for j := 0; j < n; {
		c1 := j + 1
		for c1 < n && parent[c1-1] == c1 && nchild[c1] == 1 && len(st[c1-1]) == len(st[c1])+1 {
			c1++
		}
		rows := make([]int, 0, c1-j+len(st[c1-1]))
		for c := j; c < c1; c++ {
			rows = append(rows, c)
			id[c] = len(sym.snode)
		}
		rows = append(rows, st[c1-1]...)
		sym.snode = append(sym.snode, [2]int{j, c1})
		sym.rows = append(sym.rows, rows)
		for c := j; c < c1; c++ {
			st[c] = nil
		}
		j = c1
	}
	sym.parent = make([]int, len(sym.snode))
	for s, sn := range sym.snode {
		sym.parent[s] = -1
		if p := parent[sn[1]-1]; p >= 0 {
			sym.parent[s] = id[p]
		}
	}
	return sym, nil
}

// analyseCheck is how many columns analyse treats between checks of its
// context: the symbolic elimination of a 2-D grid of order 90000 took
// 1.7 s on a busy 2-core machine without any.
const analyseCheck = 1024

func sortInts(s []int) {
	// Insertion sort for short lists, otherwise a simple heap-free merge sort.
	if len(s) < 32 {
		for i := 1; i < len(s); i++ {
			for j := i; j > 0 && s[j] < s[j-1]; j-- {
				s[j], s[j-1] = s[j-1], s[j]
			}
		}
		return
	}
	tmp := make([]int, len(s))
	var rec func(a, b []int)
	rec = func(a, b []int) {
		if len(a) < 32 {
			sortInts(a)
			return
		}
		m := len(a) / 2
		rec(a[:m], b[:m])
		rec(a[m:], b[m:])
		i, j, k := 0, m, 0
		for i < m && j < len(a) {
			if a[i] <= a[j] {
				b[k] = a[i]
				i++
			} else {
				b[k] = a[j]
				j++
			}
			k++
		}
		k += copy(b[k:], a[i:m])
		copy(b[k:], a[j:])
		copy(a, b[:len(a)])
	}
	rec(s, tmp)
}

// factorMultifrontal factors M = zI − A (A given by rows) in the order q.
func factorMultifrontal(ctx context.Context, a *linop.CSR, z complex128, q []int, progress func(done, total int)) (*Multifrontal, error) {
	n := a.Rows
	at := a.Transpose()
	pat := linop.AddCSR(1, a, 1, at)
	sym, err := analyse(ctx, pat, q)
	if err != nil {
		return nil, err
	}
	var need int64
	for s, sn := range sym.snode {
		k, f := int64(sn[1]-sn[0]), int64(len(sym.rows[s]))
		need += (k*f + (f-k)*k) * 16
	}
	if err := memguard.CheckBytes(need, fmt.Sprintf("multifrontal factors of order %d", n)); err != nil {
		return nil, err
	}
	limit := memguard.Limit()
	perm := make([]int, n)
	for t, o := range q {
		perm[o] = t
	}
	var amax float64
	for _, v := range a.Val {
		amax = math.Max(amax, math.Abs(v))
	}
	amax += abs1(z)
	tol := pivotTol * float64(n) * amax
	mf := &Multifrontal{n: n, q: q, nodes: make([]front, len(sym.snode))}
	// Contribution of each supernode to its parent: the update matrix and
	// its row and column indices, delayed ones first (nd of them).
	type contrib struct {
		u          []complex128
		rows, cols []int
		nd         int
	}
	contribs := make([]contrib, len(sym.snode))
	children := make([][]int, len(sym.snode))
	for s, p := range sym.parent {
		if p >= 0 {
			children[p] = append(children[p], s)
		}
	}
	locR := make([]int, n)
	locC := make([]int, n)
	workers := runtime.GOMAXPROCS(0)
	var stored int64
	for s, sn := range sym.snode {
		if s&63 == 0 {
			if err := ctx.Err(); err != nil {
				return nil, err
			}
			if progress != nil {
				progress(sn[0], n)
			}
		}
		c0, c1 := sn[0], sn[1]
		own := c1 - c0
		rest := sym.rows[s][own:]
		// Index lists: own, delayed from the children, then the rest.
		rowList := make([]int, 0, len(sym.rows[s]))
		colList := make([]int, 0, len(sym.rows[s]))
		for c := c0; c < c1; c++ {
			rowList = append(rowList, c)
			colList = append(colList, c)
		}
		for _, c := range children[s] {
			cb := contribs[c]
			rowList = append(rowList, cb.rows[:cb.nd]...)
			colList = append(colList, cb.cols[:cb.nd]...)
		}
		nfs := len(rowList)
		rowList = append(rowList, rest...)
		colList = append(colList, rest...)
		f := len(rowList)
		for l := range rowList {
			locR[rowList[l]] = l
			locC[colList[l]] = l
		}
		F := make([]complex128, f*f)
		// Original entries: columns of own vertices (rows ≥ c0), and rows of
		// own vertices (columns ≥ c1). M = zI − A.
		for c := c0; c < c1; c++ {
			oc := q[c]
			lc := locC[c]
			for p := at.RowPtr[oc]; p < at.RowPtr[oc+1]; p++ { // column oc of A
				if t := perm[at.ColIdx[p]]; t >= c0 {
					F[locR[t]*f+lc] -= complex(at.Val[p], 0)
				}
			}
			lr := locR[c]
			for p := a.RowPtr[oc]; p < a.RowPtr[oc+1]; p++ { // row oc of A
				if t := perm[a.ColIdx[p]]; t >= c1 {
					F[lr*f+locC[t]] -= complex(a.Val[p], 0)
				}
			}
			F[lr*f+lc] += z
		}
		// Extend-add the children's update matrices.
		for _, c := range children[s] {
			cb := contribs[c]
			m := len(cb.rows)
			cl := make([]int, m)
			for j, t := range cb.cols {
				cl[j] = locC[t]
			}
			for i, ti := range cb.rows {
				row := F[locR[ti]*f:]
				ui := cb.u[i*m : (i+1)*m]
				for j, v := range ui {
					row[cl[j]] += v
				}
			}
			contribs[c] = contrib{}
		}
		// Eliminate fully summed columns, pivoting among fully summed rows;
		// a column without an acceptable pivot moves to the end (delayed).
		root := sym.parent[s] < 0
		k, cand := 0, nfs // eliminated so far; candidates are columns k..cand−1
		for k < cand {
			p := k
			best, colmax := p, 0.0
			for i := p; i < f; i++ {
				v := abs1(F[i*f+p])
				colmax = math.Max(colmax, v)
				if i < nfs && v > abs1(F[best*f+p]) {
					best = i
				}
			}
			pv := abs1(F[best*f+p])
			if pv <= tol || pv < FrontTol*colmax {
				if root && (pv <= tol || pv == 0) && cand == k+1 {
					return nil, &SingularError{Pivot: n - (nfs - k), N: n, Method: "multifrontal"}
				}
				if !root || pv <= tol {
					// Delay column p: swap it with the last candidate.
					cand--
					if cand != p {
						for i := 0; i < f; i++ {
							F[i*f+p], F[i*f+cand] = F[i*f+cand], F[i*f+p]
						}
						colList[p], colList[cand] = colList[cand], colList[p]
					}
					continue
				}
			}
			if best != p {
				swapRows(F, f, p, best)
				rowList[p], rowList[best] = rowList[best], rowList[p]
			}
			eliminateBelow(F, f, p, f, nfs)
			k++
			cand = max(cand, k)
		}
		if root && k < nfs {
			return nil, &SingularError{Pivot: n - (nfs - k), N: n, Method: "multifrontal"}
		}
		// F12 ← L11⁻¹ F12 on the columns after the fully summed ones, then
		// F22 −= F21 F12 on rows k.. and those columns.
		for r := 1; r < k; r++ {
			row := F[r*f+nfs : (r+1)*f]
			for p := 0; p < r; p++ {
				if l := F[r*f+p]; l != 0 {
					for j, u := range F[p*f+nfs : (p+1)*f] {
						row[j] -= l * u
					}
				}
			}
		}
		m := f - k
		update := func(lo, hi int) {
			for i := lo; i < hi; i++ {
				rankUpdate(F[i*f+nfs:(i+1)*f], F[i*f:i*f+k], F[nfs:], f)
			}
		}
		if workers > 1 && m*(f-nfs)*k > 1<<17 {
			var wg sync.WaitGroup
			for w := 0; w < workers; w++ {
				lo, hi := k+m*w/workers, k+m*(w+1)/workers
				wg.Add(1)
				go func() {
					defer wg.Done()
					update(lo, hi)
				}()
			}
			wg.Wait()
		} else if k > 0 {
			update(k, f)
		}
		nd := front{
			cols: append([]int(nil), colList[:k]...), rowOf: append([]int(nil), rowList[:k]...),
			ucol: append([]int(nil), colList[k:]...), lrow: append([]int(nil), rowList[k:]...),
		}
		nd.top = append([]complex128(nil), F[:k*f]...)
		nd.low = make([]complex128, m*k)
		for i := 0; i < m; i++ {
			copy(nd.low[i*k:(i+1)*k], F[(k+i)*f:(k+i)*f+k])
		}
		stored += int64(len(nd.top)+len(nd.low)) * 16
		if stored > limit {
			return nil, memguard.CheckBytes(stored, fmt.Sprintf("multifrontal factors of order %d", n))
		}
		if m > 0 && !root {
			u := make([]complex128, m*m)
			for i := 0; i < m; i++ {
				copy(u[i*m:(i+1)*m], F[(k+i)*f+k:(k+i+1)*f])
			}
			contribs[s] = contrib{u: u, rows: nd.lrow, cols: nd.ucol, nd: nfs - k}
			mf.Delayed += nfs - k
		}
		mf.nodes[s] = nd
	}
	if progress != nil {
		progress(n, n)
	}
	return mf, nil
}

// Len returns n.
func (mf *Multifrontal) Len() int { return mf.n }

// NNZ returns the numbers of stored entries of L and U.
func (mf *Multifrontal) NNZ() (l, u int) {
	for _, nd := range mf.nodes {
		k := len(nd.cols)
		l += len(nd.low) + k*(k-1)/2 + k
		u += k*(k+1)/2 + k*len(nd.ucol)
	}
	return l, u
}

// Solve sets dst = M⁻¹ b (dst and b may be the same slice). It panics with
// ErrShape on a length mismatch.
func (mf *Multifrontal) Solve(dst, b []complex128) error {
	n := mf.n
	if len(dst) != n || len(b) != n {
		panic(ErrShape)
	}
	w := make([]complex128, n) // indexed by rows
	for t, o := range mf.q {
		w[t] = b[o]
	}
	y := make([]complex128, n) // indexed by columns
	var tmp []complex128
	for _, nd := range mf.nodes {
		k := len(nd.cols)
		f := k + len(nd.ucol)
		tmp = tmp[:0]
		for p := 0; p < k; p++ {
			tmp = append(tmp, w[nd.rowOf[p]])
		}
		for p := 0; p < k; p++ {
			s := tmp[p]
			for j := 0; j < p; j++ {
				s -= nd.top[p*f+j] * tmp[j]
			}
			tmp[p] = s
		}
		for i, r := range nd.lrow {
			var s complex128
			for p, v := range nd.low[i*k : (i+1)*k] {
				s += v * tmp[p]
			}
			w[r] -= s
		}
		for p, c := range nd.cols {
			y[c] = tmp[p]
		}
	}
	for s := len(mf.nodes) - 1; s >= 0; s-- {
		nd := &mf.nodes[s]
		k := len(nd.cols)
		f := k + len(nd.ucol)
		for p := k - 1; p >= 0; p-- {
			row := nd.top[p*f : (p+1)*f]
			v := y[nd.cols[p]]
			for j := p + 1; j < k; j++ {
				v -= row[j] * y[nd.cols[j]]
			}
			for i, c := range nd.ucol {
				v -= row[k+i] * y[c]
			}
			y[nd.cols[p]] = v / row[p]
		}
	}
	for t, o := range mf.q {
		dst[o] = y[t]
	}
	return nil
}

// SolveH sets dst = M⁻ᴴ b (dst and b may be the same slice). It panics with
// ErrShape on a length mismatch.
func (mf *Multifrontal) SolveH(dst, b []complex128) error {
	n := mf.n
	if len(dst) != n || len(b) != n {
		panic(ErrShape)
	}
	c := make([]complex128, n) // indexed by columns
	for t, o := range mf.q {
		c[t] = b[o]
	}
	// Uᴴ y = c, forward over supernodes.
	for _, nd := range mf.nodes {
		k := len(nd.cols)
		f := k + len(nd.ucol)
		for p := 0; p < k; p++ {
			v := c[nd.cols[p]]
			for s := 0; s < p; s++ {
				v -= cmplx.Conj(nd.top[s*f+p]) * c[nd.cols[s]]
			}
			c[nd.cols[p]] = v / cmplx.Conj(nd.top[p*f+p])
		}
		for i, col := range nd.ucol {
			var v complex128
			for p := 0; p < k; p++ {
				v += cmplx.Conj(nd.top[p*f+k+i]) * c[nd.cols[p]]
			}
			c[col] -= v
		}
	}
	// Lᴴ z = y, backward; z is indexed by rows.
	zr := make([]complex128, n)
	var tmp []complex128
	for s := len(mf.nodes) - 1; s >= 0; s-- {
		nd := &mf.nodes[s]
		k := len(nd.cols)
		f := k + len(nd.ucol)
		tmp = tmp[:0]
		for _, col := range nd.cols {
			tmp = append(tmp, c[col])
		}
		for i, r := range nd.lrow {
			zi := zr[r]
			if zi == 0 {
				continue
			}
			for p, v := range nd.low[i*k : (i+1)*k] {
				tmp[p] -= cmplx.Conj(v) * zi
			}
		}
		for p := k - 1; p >= 0; p-- {
			v := tmp[p]
			for s2 := p + 1; s2 < k; s2++ {
				v -= cmplx.Conj(nd.top[s2*f+p]) * tmp[s2]
			}
			tmp[p] = v
		}
		for p, r := range nd.rowOf {
			zr[r] = tmp[p]
		}
	}
	for t, o := range mf.q {
		dst[o] = zr[t]
	}
	return nil
}

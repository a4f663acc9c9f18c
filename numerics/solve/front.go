package solve

import (
	"context"
	"errors"
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
// unsymmetric matrices); otherwise the factorisation gives up with
// errDelayed and NewSparseShifted falls back to SparseLU, which pivots
// freely. Real shifts inside the spectrum of a discretised elliptic
// operator (indefinite zI − A) typically take the fallback.
type Multifrontal struct {
	n     int
	q     []int // permuted index t ↔ original q[t]
	nodes []front
}

type front struct {
	c0, k int          // own columns c0..c0+k−1 (permuted)
	rows  []int        // front index list: own k, then the later rows (permuted)
	rowOf []int        // pivot row (permuted) of each own column after interchanges
	top   []complex128 // k×f: rows of U (with L11 below the diagonal), row-major
	low   []complex128 // (f−k)×k: L21, row-major
}

// FrontTol is the pivot threshold of the multifrontal factorisation.
const FrontTol = 0.01

var errDelayed = errors.New("solve: pivot outside the front's fully summed rows")

// symbolic holds the supernodal structure of a symmetric pattern.
type symbolic struct {
	snode  [][2]int // [c0, c1) per supernode
	rows   [][]int  // front index lists
	parent []int    // supernodal parent, −1 at roots
}

// analyse computes the elimination tree (Liu 1986) of the pattern of
// M + Mᵀ permuted by q, the row structure of each column of L by
// symbolic elimination, and fundamental supernodes.
func analyse(pat *linop.CSR, q []int) (*symbolic, error) {
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
	sym, err := analyse(pat, q)
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
	updates := make([][]complex128, len(sym.snode))
	children := make([][]int, len(sym.snode))
	for s, p := range sym.parent {
		if p >= 0 {
			children[p] = append(children[p], s)
		}
	}
	loc := make([]int, n)
	workers := runtime.GOMAXPROCS(0)
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
		k := c1 - c0
		rows := sym.rows[s]
		f := len(rows)
		for l, t := range rows {
			loc[t] = l
		}
		F := make([]complex128, f*f)
		// Original entries: columns of own vertices (rows ≥ c0), and rows of
		// own vertices (columns ≥ c1). M = zI − A.
		for c := c0; c < c1; c++ {
			oc := q[c]
			lc := loc[c]
			for p := at.RowPtr[oc]; p < at.RowPtr[oc+1]; p++ { // column oc of A
				if t := perm[at.ColIdx[p]]; t >= c0 {
					F[loc[t]*f+lc] -= complex(at.Val[p], 0)
				}
			}
			for p := a.RowPtr[oc]; p < a.RowPtr[oc+1]; p++ { // row oc of A
				if t := perm[a.ColIdx[p]]; t >= c1 {
					F[lc*f+loc[t]] -= complex(a.Val[p], 0)
				}
			}
			F[lc*f+lc] += z
		}
		// Extend-add the children's update matrices.
		for _, c := range children[s] {
			u := updates[c]
			cr := sym.rows[c][sym.snode[c][1]-sym.snode[c][0]:]
			m := len(cr)
			for i, ti := range cr {
				row := F[loc[ti]*f:]
				ui := u[i*m : (i+1)*m]
				for j, tj := range cr {
					row[loc[tj]] += ui[j]
				}
			}
			updates[c] = nil
		}
		// Eliminate the k own columns (panel), pivoting among own rows.
		rowOf := make([]int, k)
		for p := 0; p < k; p++ {
			rowOf[p] = rows[p]
		}
		for p := 0; p < k; p++ {
			best, colmax := p, 0.0
			for i := p; i < f; i++ {
				v := abs1(F[i*f+p])
				if v > colmax {
					colmax = v
				}
				if i < k && v > abs1(F[best*f+p]) {
					best = i
				}
			}
			pv := abs1(F[best*f+p])
			if pv <= tol || pv == 0 {
				if colmax <= tol {
					return nil, &SingularError{Pivot: c0 + p, N: n, Method: "multifrontal"}
				}
				return nil, errDelayed
			}
			if pv < FrontTol*colmax {
				return nil, errDelayed
			}
			if best != p {
				rp, rb := F[p*f:(p+1)*f], F[best*f:(best+1)*f]
				for j := range rp {
					rp[j], rb[j] = rb[j], rp[j]
				}
				rowOf[p], rowOf[best] = rowOf[best], rowOf[p]
			}
			inv := 1 / F[p*f+p]
			urow := F[p*f+p+1 : p*f+k]
			for i := p + 1; i < f; i++ {
				l := F[i*f+p] * inv
				F[i*f+p] = l
				if l == 0 {
					continue
				}
				row := F[i*f+p+1 : i*f+k]
				for j, u := range urow {
					row[j] -= l * u
				}
			}
		}
		// F12 ← L11⁻¹ F12, then F22 −= F21 F12.
		for r := 1; r < k; r++ {
			row := F[r*f+k : (r+1)*f]
			for p := 0; p < r; p++ {
				if l := F[r*f+p]; l != 0 {
					for j, u := range F[p*f+k : (p+1)*f] {
						row[j] -= l * u
					}
				}
			}
		}
		m := f - k
		update := func(lo, hi int) {
			for i := lo; i < hi; i++ {
				rankUpdate(F[i*f+k:(i+1)*f], F[i*f:i*f+k], F[k:], f)
			}
		}
		if workers > 1 && m*m*k > 1<<17 {
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
		} else {
			update(k, f)
		}
		nd := front{c0: c0, k: k, rows: rows, rowOf: rowOf}
		nd.top = append([]complex128(nil), F[:k*f]...)
		nd.low = make([]complex128, m*k)
		for i := 0; i < m; i++ {
			copy(nd.low[i*k:(i+1)*k], F[(k+i)*f:(k+i)*f+k])
		}
		if m > 0 && sym.parent[s] >= 0 {
			u := make([]complex128, m*m)
			for i := 0; i < m; i++ {
				copy(u[i*m:(i+1)*m], F[(k+i)*f+k:(k+i+1)*f])
			}
			updates[s] = u
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
		f := len(nd.rows)
		l += len(nd.low) + nd.k*(nd.k+1)/2
		u += nd.k*(nd.k+1)/2 + nd.k*(f-nd.k)
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
	w := make([]complex128, n) // row space, then column space
	for t, o := range mf.q {
		w[t] = b[o]
	}
	y := make([]complex128, n)
	var tmp []complex128
	for _, nd := range mf.nodes {
		k, f := nd.k, len(nd.rows)
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
		for i := k; i < f; i++ {
			l := nd.low[(i-k)*k : (i-k+1)*k]
			var s complex128
			for p, v := range l {
				s += v * tmp[p]
			}
			w[nd.rows[i]] -= s
		}
		copy(y[nd.c0:nd.c0+k], tmp)
	}
	for s := len(mf.nodes) - 1; s >= 0; s-- {
		nd := &mf.nodes[s]
		k, f := nd.k, len(nd.rows)
		for p := k - 1; p >= 0; p-- {
			row := nd.top[p*f : (p+1)*f]
			v := y[nd.c0+p]
			for j := p + 1; j < k; j++ {
				v -= row[j] * y[nd.c0+j]
			}
			for i := k; i < f; i++ {
				v -= row[i] * y[nd.rows[i]]
			}
			y[nd.c0+p] = v / row[p]
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
	c := make([]complex128, n) // column space
	for t, o := range mf.q {
		c[t] = b[o]
	}
	// Uᴴ y = c, forward over supernodes.
	for _, nd := range mf.nodes {
		k, f := nd.k, len(nd.rows)
		for p := 0; p < k; p++ {
			v := c[nd.c0+p]
			for s := 0; s < p; s++ {
				v -= cmplx.Conj(nd.top[s*f+p]) * c[nd.c0+s]
			}
			c[nd.c0+p] = v / cmplx.Conj(nd.top[p*f+p])
		}
		for i := k; i < f; i++ {
			var v complex128
			for p := 0; p < k; p++ {
				v += cmplx.Conj(nd.top[p*f+i]) * c[nd.c0+p]
			}
			c[nd.rows[i]] -= v
		}
	}
	// Lᴴ z = y, backward; z is stored in row space.
	zr := make([]complex128, n)
	var tmp []complex128
	for s := len(mf.nodes) - 1; s >= 0; s-- {
		nd := &mf.nodes[s]
		k, f := nd.k, len(nd.rows)
		tmp = append(tmp[:0], c[nd.c0:nd.c0+k]...)
		for i := k; i < f; i++ {
			zi := zr[nd.rows[i]]
			if zi == 0 {
				continue
			}
			l := nd.low[(i-k)*k : (i-k+1)*k]
			for p, v := range l {
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
		for p := 0; p < k; p++ {
			zr[nd.rowOf[p]] = tmp[p]
		}
	}
	for t, o := range mf.q {
		dst[o] = zr[t]
	}
	return nil
}

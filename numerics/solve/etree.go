package solve

import (
	"context"
	"fmt"
	"sort"

	"semiflow/numerics/memguard"
)

// etree returns the elimination tree of the graph g in the order q
// (vertex q[j] is eliminated j-th): parent[j] is the first i > j with
// L(i, j) ≠ 0, or −1 (Liu, ACM TOMS 1986: with path compression through
// virtual ancestors, almost linear in the number of edges).
func etree(g *graph, q, pinv []int) []int {
	n := g.n
	parent := make([]int, n)
	anc := make([]int, n)
	for j := 0; j < n; j++ {
		parent[j], anc[j] = -1, -1
		v := q[j]
		for p := g.ptr[v]; p < g.ptr[v+1]; p++ {
			for i := pinv[g.adj[p]]; i != -1 && i < j; {
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
	return parent
}

// postorder returns a depth-first postorder of the forest parent: post[k]
// is the k-th node visited, children before parents, the children of a
// node by increasing key (so the child with the largest key comes right
// before its parent; nil key: increasing index).
func postorder(parent, key []int) []int {
	n := len(parent)
	head := make([]int, n)
	next := make([]int, n)
	for i := range head {
		head[i] = -1
	}
	byKey := make([]int, n)
	for j := range byKey {
		byKey[j] = n - 1 - j
	}
	if key != nil {
		// Children pushed in decreasing key order end up increasing.
		sort.SliceStable(byKey, func(x, y int) bool { return key[byKey[x]] > key[byKey[y]] })
	}
	for _, j := range byKey {
		if p := parent[j]; p >= 0 {
			next[j] = head[p]
			head[p] = j
		}
	}
	post := make([]int, 0, n)
	stack := make([]int, 0, 64)
	for r := 0; r < n; r++ {
		if parent[r] >= 0 {
			continue
		}
		stack = append(stack, r)
		for len(stack) > 0 {
			v := stack[len(stack)-1]
			if c := head[v]; c >= 0 {
				head[v] = next[c]
				stack = append(stack, c)
				continue
			}
			stack = stack[:len(stack)-1]
			post = append(post, v)
		}
	}
	return post
}

// colCounts returns the number of entries of each column of the Cholesky
// factor L of the pattern (diagonal included), for columns in elimination
// order with etree parent: row i of L is the union of the tree paths from
// each k < i adjacent to i up to i (the row subtree), so walking them with
// a mark per row counts every entry of L once. The work is nnz(L); ctx is
// checked every 4096 rows.
func colCounts(ctx context.Context, g *graph, q, pinv, parent []int) ([]int, error) {
	n := g.n
	cc := make([]int, n)
	mark := make([]int, n)
	for i := range mark {
		mark[i] = -1
	}
	for i := 0; i < n; i++ {
		if i&4095 == 0 {
			if err := ctx.Err(); err != nil {
				return nil, err
			}
		}
		cc[i]++
		mark[i] = i
		v := q[i]
		for p := g.ptr[v]; p < g.ptr[v+1]; p++ {
			for k := pinv[g.adj[p]]; k < i && mark[k] != i; k = parent[k] {
				cc[k]++
				mark[k] = i
			}
		}
	}
	return cc, nil
}

// fillCount is the predicted number of entries of L (diagonal included)
// and the flops of a Cholesky factorisation, Σ cc², for an order.
func fillCount(ctx context.Context, g *graph, q []int) (nnz, flops float64, err error) {
	t, err := treeOf(ctx, g, q)
	if err != nil {
		return 0, 0, err
	}
	nnz, flops = t.counts()
	return nnz, flops, nil
}

// elimTree is an order with its elimination tree and column counts.
type elimTree struct {
	q, pinv, parent, cc []int
}

func treeOf(ctx context.Context, g *graph, q []int) (*elimTree, error) {
	pinv := invPerm(q)
	parent := etree(g, q, pinv)
	cc, err := colCounts(ctx, g, q, pinv, parent)
	if err != nil {
		return nil, err
	}
	return &elimTree{q: q, pinv: pinv, parent: parent, cc: cc}, nil
}

func (t *elimTree) counts() (nnz, flops float64) {
	for _, c := range t.cc {
		nnz += float64(c)
		flops += float64(c) * float64(c)
	}
	return nnz, flops
}

func invPerm(q []int) []int {
	pinv := make([]int, len(q))
	for k, v := range q {
		pinv[v] = k
	}
	return pinv
}

// snodes is the supernodal structure of the factors of a symmetric
// pattern in a postordered elimination order.
type snodes struct {
	n      int
	q      []int      // elimination order (postordered): column j is vertex q[j]
	first  []int      // supernode s owns columns first[s] .. first[s+1]−1
	rows   [][]int    // rows below the diagonal block of supernode s, increasing
	parent []int      // parent supernode, or −1
	kids   [][]int    // children supernodes, increasing
	of     []int      // of[j]: supernode of column j
	nnzL   int64      // entries of L (diagonal block lower triangle included)
	flops  float64    // flops of the LU factorisation (real multiply-adds ×2)
	fill   [2]float64 // predicted nnz(L) of the order before amalgamation, and after
}

// Relaxed amalgamation: a child supernode is merged into its parent when
// the merged supernode has at most relaxSmall columns, or at most
// relaxMid columns and explicit zeros at most relaxMidFrac of its entries,
// or at most relaxBig columns and at most relaxBigFrac (the rule of
// Ashcraft & Grimes, ACM TOMS 1989, with thresholds of our own choosing).
const (
	relaxSmall   = 8
	relaxMid     = 32
	relaxMidFrac = 0.3
	relaxBig     = 96
	relaxBigFrac = 0.08
)

// analyseOrder computes the elimination tree of g in the order q, its
// postorder, column counts, fundamental supernodes with relaxed
// amalgamation, and each supernode's row structure.
func analyseOrder(ctx context.Context, g *graph, q0 []int) (*snodes, error) {
	t, err := treeOf(ctx, g, q0)
	if err != nil {
		return nil, err
	}
	return analyseTree(ctx, g, t)
}

// analyseTree is analyseOrder for an order whose tree and counts are known.
func analyseTree(ctx context.Context, g *graph, t *elimTree) (*snodes, error) {
	n := g.n
	q0, parent0, cc0 := t.q, t.parent, t.cc
	// The child with the largest column last: it is the one a relaxed
	// supernode can absorb at the least cost in explicit zeros.
	post := postorder(parent0, cc0)
	// Renumber so that columns are in postorder; the tree keeps its shape.
	q := make([]int, n)
	newOf := make([]int, n)
	for k, j := range post {
		q[k] = q0[j]
		newOf[j] = k
	}
	parent := make([]int, n)
	for j, p := range parent0 {
		if p >= 0 {
			parent[newOf[j]] = newOf[p]
		} else {
			parent[newOf[j]] = -1
		}
	}
	pinv := invPerm(q)
	cc := make([]int, n)
	for j, c := range cc0 {
		cc[newOf[j]] = c
	}
	nchild := make([]int, n)
	for _, p := range parent {
		if p >= 0 {
			nchild[p]++
		}
	}
	var fill0 float64
	for _, c := range cc {
		fill0 += float64(c)
	}
	// Fundamental supernodes: j+1 continues j's supernode when it is j's
	// parent, its only child, and its column is j's minus the diagonal.
	var first []int
	for j := 0; j < n; j++ {
		if j == 0 || !(parent[j-1] == j && nchild[j] == 1 && cc[j-1] == cc[j]+1) {
			first = append(first, j)
		}
	}
	first = append(first, n)
	ns := len(first) - 1
	of := make([]int, n)
	for s := 0; s < ns; s++ {
		for j := first[s]; j < first[s+1]; j++ {
			of[j] = s
		}
	}
	sparent := make([]int, ns)
	for s := 0; s < ns; s++ {
		sparent[s] = -1
		if p := parent[first[s+1]-1]; p >= 0 {
			sparent[s] = of[p]
		}
	}
	// Relaxed amalgamation, children before parents (postorder): merge s
	// into its parent when s ends right before the parent starts (s is the
	// parent's last child) and the zeros introduced are few.
	cols := make([]int, ns)  // columns
	below := make([]int, ns) // rows below the diagonal block
	zeros := make([]float64, ns)
	for s := 0; s < ns; s++ {
		cols[s] = first[s+1] - first[s]
		below[s] = cc[first[s]] - cols[s]
	}
	merged := make([]int, ns) // merged[s]: supernode s was merged into (or itself)
	for s := range merged {
		merged[s] = s
	}
	alive := make([]bool, ns)
	for s := range alive {
		alive[s] = true
	}
	start := make([]int, ns)
	copy(start, first[:ns])
	entries := func(k, r int) float64 { return float64(k)*float64(k+1)/2 + float64(k)*float64(r) }
	for s := 0; s < ns; s++ {
		p := sparent[s]
		if p < 0 || start[p] != start[s]+cols[s] {
			continue
		}
		k := cols[s] + cols[p]
		z := zeros[s] + zeros[p] + entries(k, below[p]) - entries(cols[s], below[s]) - entries(cols[p], below[p])
		tot := entries(k, below[p])
		frac := z / tot
		if k <= relaxSmall || (k <= relaxMid && frac <= relaxMidFrac) || (k <= relaxBig && frac <= relaxBigFrac) {
			alive[s] = false
			merged[s] = p
			start[p] = start[s]
			cols[p] = k
			zeros[p] = z
		}
	}
	// New numbering of the surviving supernodes.
	id := make([]int, ns)
	var firstR []int
	nr := 0
	for s := 0; s < ns; s++ {
		if alive[s] {
			id[s] = nr
			firstR = append(firstR, start[s])
			nr++
		}
	}
	firstR = append(firstR, n)
	find := func(s int) int {
		for !alive[s] {
			s = merged[s]
		}
		return s
	}
	sn := &snodes{n: n, q: q, first: firstR, parent: make([]int, nr), of: make([]int, n), rows: make([][]int, nr), kids: make([][]int, nr)}
	sn.fill[0] = fill0
	for s := 0; s < ns; s++ {
		r := id[find(s)]
		for j := first[s]; j < first[s+1]; j++ {
			sn.of[j] = r
		}
	}
	for s := 0; s < ns; s++ {
		if !alive[s] {
			continue
		}
		r := id[s]
		sn.parent[r] = -1
		if p := sparent[s]; p >= 0 {
			sn.parent[r] = id[find(p)]
			sn.kids[sn.parent[r]] = append(sn.kids[sn.parent[r]], r)
		}
	}
	// Row structures: the rows of A's columns in s below the block, and the
	// children's rows, beyond the block.
	mark := make([]int, n)
	for i := range mark {
		mark[i] = -1
	}
	var total int64
	for s := 0; s < nr; s++ {
		if s&1023 == 0 {
			if err := ctx.Err(); err != nil {
				return nil, err
			}
		}
		c0, c1 := sn.first[s], sn.first[s+1]
		var rs []int
		for j := c0; j < c1; j++ {
			v := q[j]
			for p := g.ptr[v]; p < g.ptr[v+1]; p++ {
				if i := pinv[g.adj[p]]; i >= c1 && mark[i] != s {
					mark[i] = s
					rs = append(rs, i)
				}
			}
		}
		for _, c := range sn.kids[s] {
			for _, i := range sn.rows[c] {
				if i >= c1 && mark[i] != s {
					mark[i] = s
					rs = append(rs, i)
				}
			}
		}
		sortInts(rs)
		sn.rows[s] = rs
		k, r := int64(c1-c0), int64(len(rs))
		sn.nnzL += k*(k+1)/2 + k*r
		// LU flops of the front: panel k columns, trailing update r×r.
		kf, rf := float64(k), float64(r)
		sn.flops += 2*kf*kf*kf/3 + 2*kf*kf*rf + 2*kf*rf*rf
		total += r
		if total*8 > memguard.Limit() {
			return nil, memguard.CheckBytes(total*8, fmt.Sprintf("symbolic structure of sparse factors of order %d", n))
		}
	}
	sn.fill[1] = float64(sn.nnzL)
	return sn, nil
}

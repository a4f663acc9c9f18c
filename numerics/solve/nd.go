package solve

import (
	"context"

	"semiflow/numerics/linop"
)

// NestedDissection returns a nested-dissection order of the graph of
// A + Aᵀ for any pattern (George & Liu, Computer Solution of Large Sparse
// Positive Definite Systems, 1981, ch. 8): in each connected part, a
// breadth-first level structure from a pseudo-peripheral vertex; the level
// that splits the part's vertices most evenly is the separator, thinned by
// moving back every separator vertex with no neighbour beyond it; the two
// sides are ordered first, recursively, and the separator last. Parts of
// at most ndLeaf vertices are ordered by approximate minimum degree. It
// suits grid-like graphs (meshes of finite differences or elements), where
// its separators are O(√n) (2-D) or O(n^{2/3}) (3-D). It panics with
// ErrShape if A is not square.
func NestedDissection(a *linop.CSR) []int {
	if a.Rows != a.Cols {
		panic(ErrShape)
	}
	q, _ := ndGraph(context.Background(), symGraph(a))
	return q
}

// ndLeaf is the part size below which nested dissection stops splitting.
const ndLeaf = 64

// ndGraph is NestedDissection on a graph; it returns ctx's error when
// cancelled (checked for every part).
func ndGraph(ctx context.Context, g *graph) ([]int, error) {
	n := g.n
	order := make([]int, 0, n)
	part := make([]int, n) // part id of every vertex still to order
	level := make([]int, n)
	mark := make([]int, n)
	stamp := 0
	queue := make([]int, 0, n)
	loc := make([]int, n)
	nextPart := 1
	// bfs visits the vertices of part p reachable from s, setting level[],
	// and returns them in visiting order (a slice of queue).
	bfs := func(s, p int) []int {
		stamp++
		queue = queue[:0]
		queue = append(queue, s)
		mark[s] = stamp
		level[s] = 0
		for h := 0; h < len(queue); h++ {
			v := queue[h]
			for q := g.ptr[v]; q < g.ptr[v+1]; q++ {
				u := g.adj[q]
				if part[u] == p && mark[u] != stamp {
					mark[u] = stamp
					level[u] = level[v] + 1
					queue = append(queue, u)
				}
			}
		}
		return queue
	}
	type task struct {
		verts []int
		id    int
	}
	// Explicit stack: a part is split into (low, high, separator); the
	// separator is emitted after both sides, so it is pushed first.
	type item struct {
		t    task
		emit bool // emit t.verts as they stand (a separator)
	}
	all := make([]int, n)
	for i := range all {
		all[i] = i
	}
	stack := []item{{t: task{verts: all, id: 0}}}
	for len(stack) > 0 {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		it := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		vs, p := it.t.verts, it.t.id
		if it.emit {
			order = append(order, vs...)
			continue
		}
		if len(vs) <= ndLeaf {
			order = append(order, ndLeafOrder(ctx, g, vs, part, p, loc)...)
			for _, v := range vs {
				part[v] = -1
			}
			continue
		}
		// Connected components: order each on its own.
		comp := bfs(vs[0], p)
		if len(comp) < len(vs) {
			inComp := stamp
			c := append([]int(nil), comp...)
			rest := make([]int, 0, len(vs)-len(c))
			for _, v := range vs {
				if mark[v] != inComp {
					rest = append(rest, v)
				}
			}
			pr := nextPart
			nextPart++
			for _, v := range rest {
				part[v] = pr
			}
			pc := nextPart
			nextPart++
			for _, v := range c {
				part[v] = pc
			}
			stack = append(stack, item{t: task{rest, pr}}, item{t: task{c, pc}})
			continue
		}
		// Pseudo-peripheral root: restart from a vertex of least degree in
		// the last level while the eccentricity grows (at most twice); the
		// component's search above is the first.
		lv := comp
		for iter := 0; iter < 2; iter++ {
			e := level[lv[len(lv)-1]]
			best := lv[len(lv)-1]
			for k := len(lv) - 1; k >= 0 && level[lv[k]] == e; k-- {
				if g.deg(lv[k]) < g.deg(best) {
					best = lv[k]
				}
			}
			lv = bfs(best, p)
			if level[lv[len(lv)-1]] <= e {
				break
			}
		}
		h := level[lv[len(lv)-1]]
		if h < 2 {
			order = append(order, ndLeafOrder(ctx, g, vs, part, p, loc)...)
			for _, v := range vs {
				part[v] = -1
			}
			continue
		}
		// The separating level: the first whose end passes half the part,
		// kept away from the ends of the structure.
		m, count := 1, 0
		for k, v := range lv {
			count = k + 1
			if count >= len(lv)/2 {
				m = level[v]
				break
			}
		}
		m = min(max(m, 1), h-1)
		lo, hi, sep := make([]int, 0, len(vs)/2), make([]int, 0, len(vs)/2), []int{}
		for _, v := range lv {
			switch l := level[v]; {
			case l < m:
				lo = append(lo, v)
			case l > m:
				hi = append(hi, v)
			default:
				// Thin the separator: a vertex with no neighbour in level
				// m+1 can join the low side.
				beyond := false
				for q := g.ptr[v]; q < g.ptr[v+1]; q++ {
					if u := g.adj[q]; part[u] == p && level[u] == m+1 && mark[u] == stamp {
						beyond = true
						break
					}
				}
				if beyond {
					sep = append(sep, v)
				} else {
					lo = append(lo, v)
				}
			}
		}
		pl, ph, ps := nextPart, nextPart+1, nextPart+2
		nextPart += 3
		for _, v := range lo {
			part[v] = pl
		}
		for _, v := range hi {
			part[v] = ph
		}
		for _, v := range sep {
			part[v] = ps
		}
		stack = append(stack, item{t: task{sep, ps}, emit: true}, item{t: task{hi, ph}}, item{t: task{lo, pl}})
	}
	return order, nil
}

// ndLeafOrder orders the vertices vs of part p by approximate minimum
// degree on the subgraph they induce; loc is scratch of length n.
func ndLeafOrder(ctx context.Context, g *graph, vs []int, part []int, p int, loc []int) []int {
	for k, v := range vs {
		loc[v] = k
	}
	sub := &graph{n: len(vs), ptr: make([]int, len(vs)+1)}
	for k, v := range vs {
		for q := g.ptr[v]; q < g.ptr[v+1]; q++ {
			if u := g.adj[q]; part[u] == p {
				sub.adj = append(sub.adj, loc[u])
			}
		}
		sub.ptr[k+1] = len(sub.adj)
	}
	o, err := amdGraph(ctx, sub)
	if err != nil {
		return vs // cancelled: the caller stops at its next check
	}
	out := make([]int, len(o))
	for k, l := range o {
		out[k] = vs[l]
	}
	return out
}

package solve

import (
	"context"
	"math"

	"semiflow/numerics/linop"
)

// graph is the adjacency structure of a symmetric pattern without its
// diagonal: the neighbours of vertex v are adj[ptr[v]:ptr[v+1]].
type graph struct {
	n        int
	ptr, adj []int
}

// symGraph returns the graph of the pattern of A + Aᵀ without the diagonal.
func symGraph(a *linop.CSR) *graph {
	n := a.Rows
	cnt := make([]int, n+1)
	for i := 0; i < n; i++ {
		for p := a.RowPtr[i]; p < a.RowPtr[i+1]; p++ {
			if j := a.ColIdx[p]; j != i {
				cnt[i+1]++
				cnt[j+1]++
			}
		}
	}
	for i := 0; i < n; i++ {
		cnt[i+1] += cnt[i]
	}
	adj := make([]int, cnt[n])
	fill := append([]int(nil), cnt[:n]...)
	for i := 0; i < n; i++ {
		for p := a.RowPtr[i]; p < a.RowPtr[i+1]; p++ {
			if j := a.ColIdx[p]; j != i {
				adj[fill[i]] = j
				fill[i]++
				adj[fill[j]] = i
				fill[j]++
			}
		}
	}
	// Remove duplicates (an entry present in both A and Aᵀ).
	g := &graph{n: n, ptr: make([]int, n+1)}
	mark := make([]int, n)
	for i := range mark {
		mark[i] = -1
	}
	out := 0
	for v := 0; v < n; v++ {
		start := out
		for p := cnt[v]; p < cnt[v+1]; p++ {
			if w := adj[p]; mark[w] != v {
				mark[w] = v
				adj[out] = w
				out++
			}
		}
		g.ptr[v] = start
	}
	g.ptr[n] = out
	g.adj = adj[:out:out]
	return g
}

func (g *graph) deg(v int) int { return g.ptr[v+1] - g.ptr[v] }

// AMD vertex states.
const (
	amdVariable = iota // a live (super)variable
	amdElement         // a live element (an eliminated pivot)
	amdAbsorbed        // an element absorbed into a later one
	amdGone            // a variable merged into a supervariable or eliminated
)

// AMD returns an approximate minimum degree order of the graph of A + Aᵀ
// (Amestoy, Davis & Duff, SIAM J. Matrix Anal. Appl. 17, 1996): minimum
// degree elimination on the quotient graph, where an eliminated pivot
// becomes an element and the variables adjacent to it are reached through
// the element rather than through new edges, with
//   - approximate external degrees d̄ᵢ = min(n − k, d̄ᵢ + |Lₚ∖i|,
//     |Aᵢ∖i| + |Lₚ∖i| + Σₑ |Lₑ∖Lₚ|), computed in time proportional to the
//     quotient graph by counting |Lₑ∖Lₚ| for every element e adjacent to
//     the new element p;
//   - element absorption: elements adjacent to the pivot are absorbed
//     into the new element, and (aggressive absorption) any element whose
//     variables all lie in the new element is absorbed too;
//   - mass elimination: a variable whose only neighbour is the new element
//     is eliminated together with the pivot;
//   - supervariables: variables with identical quotient-graph adjacency
//     (found by hashing the lists) are merged and eliminated together.
//
// Rows denser than max(16, 10√n) are set aside and ordered last, as the
// published algorithm does. AMD panics with ErrShape if A is not square.
func AMD(a *linop.CSR) []int {
	if a.Rows != a.Cols {
		panic(ErrShape)
	}
	q, _ := amdGraph(context.Background(), symGraph(a))
	return q
}

// amdGraph is AMD on a graph; it returns ctx's error when cancelled
// (checked every 256 pivots).
func amdGraph(ctx context.Context, g *graph) ([]int, error) {
	n := g.n
	order := make([]int, 0, n)
	if n == 0 {
		return order, nil
	}
	state := make([]int8, n)
	nv := make([]int, n)     // supervariable weight; negative while in the new element
	degree := make([]int, n) // approximate external degree (variables); |Le| (elements)
	elems := make([][]int, n)
	vars := make([][]int, n)
	w := make([]int, n) // element stamps for |Le ∖ Lp|
	// Members of a supervariable: a linked list first → … → tail.
	nextm := make([]int, n)
	tail := make([]int, n)
	// Degree buckets.
	head := make([]int, n+1)
	next := make([]int, n)
	prev := make([]int, n)
	for i := range head {
		head[i] = -1
	}
	dense := int(math.Max(16, 10*math.Sqrt(float64(n))))
	var denseRows []int
	for v := 0; v < n; v++ {
		nv[v] = 1
		nextm[v], tail[v] = -1, v
		d := g.deg(v)
		if d > dense {
			state[v] = amdGone
			denseRows = append(denseRows, v)
			continue
		}
		vars[v] = append([]int(nil), g.adj[g.ptr[v]:g.ptr[v+1]]...)
	}
	insert := func(v, d int) {
		degree[v] = d
		prev[v], next[v] = -1, head[d]
		if head[d] >= 0 {
			prev[head[d]] = v
		}
		head[d] = v
	}
	remove := func(v int) {
		d := degree[v]
		if prev[v] >= 0 {
			next[prev[v]] = next[v]
		} else {
			head[d] = next[v]
		}
		if next[v] >= 0 {
			prev[next[v]] = prev[v]
		}
	}
	emit := func(v int) {
		for m := v; m >= 0; m = nextm[m] {
			order = append(order, m)
		}
	}
	for v := 0; v < n; v++ {
		if state[v] == amdVariable {
			d := 0
			for _, u := range vars[v] {
				if state[u] == amdVariable {
					d++
				}
			}
			insert(v, d)
		}
	}
	nel := len(denseRows) // variables eliminated (or set aside)
	mindeg := 0
	wflg := n + 2
	hashHead := make([]int, n)
	hashNext := make([]int, n)
	hashKey := make([]int, n)
	for i := range hashHead {
		hashHead[i] = -1
	}
	seen := make([]int, n) // stamps for supervariable comparison
	stamp := 0
	var lp []int
	for step := 0; nel < n; step++ {
		if step&255 == 255 {
			if err := ctx.Err(); err != nil {
				return nil, err
			}
		}
		// Pick the pivot of least approximate degree.
		for mindeg < n && head[mindeg] < 0 {
			mindeg++
		}
		if mindeg >= n {
			break
		}
		me := head[mindeg]
		remove(me)
		nvpiv := nv[me]
		nel += nvpiv
		emit(me)
		nv[me] = -nvpiv
		// The new element: Lp = the variables adjacent to me directly or
		// through its elements, which are absorbed.
		lp = lp[:0]
		degme := 0
		take := func(i int) {
			if state[i] == amdVariable && nv[i] > 0 {
				degme += nv[i]
				nv[i] = -nv[i]
				remove(i)
				lp = append(lp, i)
			}
		}
		for _, i := range vars[me] {
			take(i)
		}
		for _, e := range elems[me] {
			if state[e] != amdElement {
				continue
			}
			for _, i := range vars[e] {
				take(i)
			}
			state[e] = amdAbsorbed
			vars[e] = nil
		}
		vars[me], elems[me] = nil, nil
		state[me] = amdElement
		// |Le ∖ Lp| for every element e adjacent to Lp: w[e] − wflg.
		for _, i := range lp {
			nvi := -nv[i]
			for _, e := range elems[i] {
				if state[e] != amdElement {
					continue
				}
				if w[e] >= wflg {
					w[e] -= nvi
				} else {
					w[e] = degree[e] + wflg - nvi
				}
			}
		}
		// Degree update, pruning, aggressive absorption, mass elimination.
		for _, i := range lp {
			nvi := -nv[i]
			deg, hash := 0, 0
			k := 0
			es := elems[i]
			for _, e := range es {
				if state[e] != amdElement {
					continue
				}
				if we := w[e] - wflg; we > 0 {
					deg += we
					hash += e
					es[k] = e
					k++
				} else {
					state[e] = amdAbsorbed // Le ⊆ Lp: aggressive absorption
					vars[e] = nil
				}
			}
			elems[i] = append(es[:k], me)
			nelem := k + 1
			hash += me
			vs := vars[i]
			k = 0
			for _, j := range vs {
				if state[j] != amdVariable || nv[j] <= 0 {
					continue // eliminated, merged, or in Lp (reached through me)
				}
				deg += nv[j]
				hash += j
				vs[k] = j
				k++
			}
			vars[i] = vs[:k]
			if nelem == 1 && k == 0 {
				// Mass elimination: i is adjacent to me only.
				emit(i)
				nvpiv += nvi
				degme -= nvi
				nel += nvi
				nv[i] = 0
				state[i] = amdGone
				elems[i] = nil
				continue
			}
			degree[i] = min(degree[i], deg)
			h := hash % n
			hashKey[i] = h
			hashNext[i] = hashHead[h]
			hashHead[h] = i
		}
		// Supervariables: merge variables of Lp with identical lists.
		for _, i := range lp {
			if nv[i] >= 0 {
				continue
			}
			h := hashKey[i]
			if hashHead[h] < 0 {
				continue
			}
			bucket := hashHead[h]
			hashHead[h] = -1
			for a := bucket; a >= 0; a = hashNext[a] {
				if nv[a] >= 0 || hashKey[a] != h {
					continue
				}
				stamp++
				for _, e := range elems[a] {
					seen[e] = stamp
				}
				for _, j := range vars[a] {
					seen[j] = stamp
				}
				for b := hashNext[a]; b >= 0; b = hashNext[b] {
					if nv[b] >= 0 || hashKey[b] != h || len(elems[a]) != len(elems[b]) || len(vars[a]) != len(vars[b]) {
						continue
					}
					same := true
					for _, e := range elems[b] {
						if seen[e] != stamp {
							same = false
							break
						}
					}
					if same {
						for _, j := range vars[b] {
							if seen[j] != stamp {
								same = false
								break
							}
						}
					}
					if !same {
						continue
					}
					nv[a] += nv[b] // both negative
					nv[b] = 0
					state[b] = amdGone
					elems[b], vars[b] = nil, nil
					nextm[tail[a]] = b
					tail[a] = tail[b]
				}
			}
		}
		// Finish the new element: final degrees, back into the buckets.
		k := 0
		for _, i := range lp {
			if nv[i] >= 0 {
				continue
			}
			nvi := -nv[i]
			nv[i] = nvi
			d := min(degree[i]+degme-nvi, n-nel-nvi)
			insert(i, max(d, 0))
			mindeg = min(mindeg, degree[i])
			lp[k] = i
			k++
		}
		nv[me] = nvpiv
		degree[me] = degme
		if k == 0 {
			state[me] = amdAbsorbed
		} else {
			vars[me] = append([]int(nil), lp[:k]...)
		}
		wflg += n + 1
		if wflg > math.MaxInt/2 {
			for e := range w {
				w[e] = 0
			}
			wflg = n + 2
		}
	}
	order = append(order, denseRows...)
	return order, nil
}

package solve

import (
	"sort"

	"semiflow/numerics/linop"
)

// RCM returns the reverse Cuthill–McKee order of the graph of A + Aᵀ
// (Cuthill & McKee, Proc. ACM 1969; George 1971): breadth-first search from
// a pseudo-peripheral node, neighbours by increasing degree, reversed. It
// reduces the profile of the matrix and so the fill of its LU factors.
// RCM panics with ErrShape if A is not square.
func RCM(a *linop.CSR) []int {
	if a.Rows != a.Cols {
		panic(ErrShape)
	}
	n := a.Rows
	g := linop.AddCSR(1, a, 1, a.Transpose()) // symmetric pattern
	deg := func(i int) int { return g.RowPtr[i+1] - g.RowPtr[i] }
	order := make([]int, 0, n)
	seen := make([]bool, n)
	level := make([]int, n)
	bfs := func(start int, out []int) []int {
		seen[start] = true
		level[start] = 0
		out = append(out, start)
		for h := len(out) - 1; h < len(out); h++ {
			v := out[h]
			first := len(out)
			for p := g.RowPtr[v]; p < g.RowPtr[v+1]; p++ {
				if w := g.ColIdx[p]; !seen[w] {
					seen[w] = true
					level[w] = level[v] + 1
					out = append(out, w)
				}
			}
			nb := out[first:]
			sort.Slice(nb, func(x, y int) bool { return deg(nb[x]) < deg(nb[y]) })
		}
		return out
	}
	for s := 0; s < n; s++ {
		if seen[s] {
			continue
		}
		// Pseudo-peripheral start: repeat BFS from a last-level node of
		// minimum degree while the eccentricity grows (George & Liu 1979).
		start := s
		for iter := 0; iter < 8; iter++ {
			comp := bfs(start, nil)
			last := comp[len(comp)-1]
			ecc := level[last]
			best := last
			for _, v := range comp {
				if level[v] == ecc && deg(v) < deg(best) {
					best = v
				}
				seen[v] = false
			}
			comp2 := bfs(best, nil)
			ecc2 := level[comp2[len(comp2)-1]]
			for _, v := range comp2 {
				seen[v] = false
			}
			if ecc2 <= ecc {
				break
			}
			start = best
		}
		order = bfs(start, order)
	}
	for i, j := 0, n-1; i < j; i, j = i+1, j-1 {
		order[i], order[j] = order[j], order[i]
	}
	return order
}

// kronOrder returns a nested-dissection order for X ⊕ Y on the nx × ny
// tensor grid (index ix*ny + iy), or nil if X or Y has no sparse form.
func kronOrder(k *linop.KronSum) []int {
	x, err := linop.ToCSR(k.X)
	if err != nil {
		return nil
	}
	y, err := linop.ToCSR(k.Y)
	if err != nil {
		return nil
	}
	wx, px := localBandwidth(x)
	wy, py := localBandwidth(y)
	return gridND(x.Rows, y.Rows, wx, wy, px, py)
}

// GridOrder returns a nested-dissection order for a sparse operator A on an
// nx × ny tensor grid (index k = ix*ny + iy), with separators as thick as
// the largest index distance |ix − jx| (resp. |iy − jy|) over A's entries,
// measured cyclically when entries wrap around (a periodic direction). It
// panics with ErrShape unless A is (nx·ny) × (nx·ny).
func GridOrder(a *linop.CSR, nx, ny int) []int {
	if a.Rows != nx*ny || a.Cols != nx*ny {
		panic(ErrShape)
	}
	var wx, wy int
	var px, py bool
	for i := 0; i < a.Rows; i++ {
		ix, iy := i/ny, i%ny
		for p := a.RowPtr[i]; p < a.RowPtr[i+1]; p++ {
			j := a.ColIdx[p]
			dx, dy := abs(j/ny-ix), abs(j%ny-iy)
			if dx > nx/2 && nx >= 10 {
				px, dx = true, nx-dx
			}
			if dy > ny/2 && ny >= 10 {
				py, dy = true, ny-dy
			}
			wx, wy = max(wx, dx), max(wy, dy)
		}
	}
	return gridND(nx, ny, max(wx, 1), max(wy, 1), px, py)
}

func abs(x int) int {
	if x < 0 {
		return -x
	}
	return x
}

// gridND orders the nx × ny grid by nested dissection: the rectangle is
// split across its longer side (in units of the separator widths) by a
// separator of thickness wx (or wy), which disconnects the two halves;
// the halves are ordered first, recursively, and the separator last
// (George, SIAM J. Numer. Anal. 1973). A periodic direction is cut twice
// at the first level.
func gridND(nx, ny, wx, wy int, px, py bool) []int {
	order := make([]int, 0, nx*ny)
	var rec func(x0, x1, y0, y1 int, px, py bool)
	rec = func(x0, x1, y0, y1 int, px, py bool) {
		lx, ly := x1-x0, y1-y0
		if lx <= 0 || ly <= 0 {
			return
		}
		if lx*ly <= 16 || (lx <= 2*wx+1 && ly <= 2*wy+1) {
			for ix := x0; ix < x1; ix++ {
				for iy := y0; iy < y1; iy++ {
					order = append(order, ix*ny+iy)
				}
			}
			return
		}
		splitX := lx*max(wy, 1) >= ly*max(wx, 1)
		if splitX && lx <= 2*wx+1 {
			splitX = false
		}
		if !splitX && ly <= 2*wy+1 {
			splitX = true
		}
		if splitX {
			m := x0 + (lx-wx)/2
			if px {
				// Cut at x0 and m: two open halves.
				rec(x0+wx, m, y0, y1, false, py)
				rec(m+wx, x1, y0, y1, false, py)
				rec(x0, x0+wx, y0, y1, false, py)
				rec(m, m+wx, y0, y1, false, py)
				return
			}
			rec(x0, m, y0, y1, false, py)
			rec(m+wx, x1, y0, y1, false, py)
			sepX(&order, m, m+wx, y0, y1, ny)
			return
		}
		m := y0 + (ly-wy)/2
		if py {
			rec(x0, x1, y0+wy, m, px, false)
			rec(x0, x1, m+wy, y1, px, false)
			rec(x0, x1, y0, y0+wy, px, false)
			rec(x0, x1, m, m+wy, px, false)
			return
		}
		rec(x0, x1, y0, m, px, false)
		rec(x0, x1, m+wy, y1, px, false)
		for ix := x0; ix < x1; ix++ {
			for iy := m; iy < m+wy; iy++ {
				order = append(order, ix*ny+iy)
			}
		}
	}
	rec(0, nx, 0, ny, px, py)
	return order
}

// gridOf looks through sums, scalings, products, adjoints and similarities
// for a Kronecker sum of the operator's size and returns its grid.
func gridOf(a linop.Operator) (nx, ny int, ok bool) {
	n, _ := a.Dims()
	var walk func(op linop.Operator) bool
	walk = func(op linop.Operator) bool {
		switch o := op.(type) {
		case *linop.KronSum:
			x, _ := o.X.Dims()
			y, _ := o.Y.Dims()
			if x*y == n {
				nx, ny = x, y
				return true
			}
		case *linop.Sum:
			for _, t := range o.Terms {
				if walk(t) {
					return true
				}
			}
		case *linop.Scaled:
			return walk(o.A)
		case *linop.Product:
			for _, f := range o.Factors {
				if walk(f) {
					return true
				}
			}
		case *linop.Adjoint:
			return walk(o.A)
		case *linop.Similarity:
			return walk(o.A)
		}
		return false
	}
	ok = walk(a)
	return nx, ny, ok
}

func sepX(order *[]int, a, b, y0, y1, ny int) {
	for ix := a; ix < b; ix++ {
		for iy := y0; iy < y1; iy++ {
			*order = append(*order, ix*ny+iy)
		}
	}
}

// localBandwidth returns the largest |i − j| over stored entries, measured
// cyclically when the factor has entries in its corners (periodic), and
// whether it does. The result is at least 1.
func localBandwidth(a *linop.CSR) (w int, periodic bool) {
	n := a.Rows
	for i := 0; i < n; i++ {
		for p := a.RowPtr[i]; p < a.RowPtr[i+1]; p++ {
			d := a.ColIdx[p] - i
			if d < 0 {
				d = -d
			}
			if d > n/2 && n >= 10 {
				periodic = true
				d = n - d
			}
			w = max(w, d)
		}
	}
	return max(w, 1), periodic
}

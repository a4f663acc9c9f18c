package plot

import (
	"errors"
	"math"
)

// ErrShape is the panic value for inconsistent lengths of data slices.
var ErrShape = errors.New("plot: inconsistent data lengths")

// Polyline is a connected path through the points (X[k], Y[k]). A closed
// polyline repeats its first point at the end.
type Polyline struct {
	X, Y   []float64
	Closed bool
}

// Contours traces the level sets {(x, y) : f(x, y) = c} of the gridded field
// z[i][j] = f(xs[i], ys[j]) by marching squares, for each c in levels, and
// returns for each level the segments joined into polylines.
//
// Along each grid edge whose end values lie on opposite sides of c (a corner
// counts as above when z ≥ c) the crossing is placed by linear interpolation. A
// cell whose four corners alternate (a saddle) is resolved by the mean of its
// corners: when the mean is above c, the two above corners are taken as
// connected through the cell centre. Cells with a non-finite corner are
// skipped, so the curves end there. Segments are joined through shared edge
// crossings; since every edge crossing belongs to at most two cells, each
// level set becomes a set of open polylines (ending at the grid border or at
// skipped cells) and closed ones.
//
// Contours panics with ErrShape if len(z) != len(xs) or len(z[i]) != len(ys)
// for some i. Grids with fewer than two points in either direction give no
// curves.
func Contours(z [][]float64, xs, ys []float64, levels []float64) [][]Polyline {
	nx, ny := len(xs), len(ys)
	if len(z) != nx {
		panic(ErrShape)
	}
	for i := range z {
		if len(z[i]) != ny {
			panic(ErrShape)
		}
	}
	out := make([][]Polyline, len(levels))
	if nx < 2 || ny < 2 {
		return out
	}
	for k, c := range levels {
		if math.IsNaN(c) || math.IsInf(c, 0) {
			continue
		}
		out[k] = traceLevel(z, xs, ys, c)
	}
	return out
}

type point struct{ x, y float64 }

// traceLevel runs marching squares for one level. Edge keys: the edge from
// (i, j) to (i+1, j) is 2(i·ny + j); from (i, j) to (i, j+1) it is 2(i·ny + j) + 1.
func traceLevel(z [][]float64, xs, ys []float64, c float64) []Polyline {
	nx, ny := len(xs), len(ys)
	hkey := func(i, j int) int { return 2 * (i*ny + j) }
	vkey := func(i, j int) int { return 2*(i*ny+j) + 1 }
	pts := map[int]point{}
	cross := func(key int, xa, ya, za, xb, yb, zb float64) int {
		if _, ok := pts[key]; !ok {
			t := (c - za) / (zb - za)
			if !(t >= 0) { // guards 0/0 when za = zb = c
				t = 0
			}
			t = math.Min(t, 1)
			pts[key] = point{xa + t*(xb-xa), ya + t*(yb-ya)}
		}
		return key
	}
	var segs [][2]int
	for i := 0; i+1 < nx; i++ {
		for j := 0; j+1 < ny; j++ {
			z0, z1, z2, z3 := z[i][j], z[i+1][j], z[i+1][j+1], z[i][j+1]
			if !finite(z0) || !finite(z1) || !finite(z2) || !finite(z3) {
				continue
			}
			code := 0
			for b, v := range [4]float64{z0, z1, z2, z3} {
				if v >= c {
					code |= 1 << b
				}
			}
			if code == 0 || code == 15 {
				continue
			}
			// Edges: 0 bottom (c0–c1), 1 right (c1–c2), 2 top (c3–c2), 3 left (c0–c3).
			e := func(k int) int {
				switch k {
				case 0:
					return cross(hkey(i, j), xs[i], ys[j], z0, xs[i+1], ys[j], z1)
				case 1:
					return cross(vkey(i+1, j), xs[i+1], ys[j], z1, xs[i+1], ys[j+1], z2)
				case 2:
					return cross(hkey(i, j+1), xs[i], ys[j+1], z3, xs[i+1], ys[j+1], z2)
				default:
					return cross(vkey(i, j), xs[i], ys[j], z0, xs[i], ys[j+1], z3)
				}
			}
			add := func(a, b int) { segs = append(segs, [2]int{e(a), e(b)}) }
			centreAbove := (z0+z1+z2+z3)/4 >= c
			switch code {
			case 1, 14:
				add(3, 0)
			case 2, 13:
				add(0, 1)
			case 4, 11:
				add(1, 2)
			case 8, 7:
				add(2, 3)
			case 3, 12:
				add(3, 1)
			case 6, 9:
				add(0, 2)
			case 5: // c0 and c2 above
				if centreAbove {
					add(0, 1)
					add(2, 3)
				} else {
					add(3, 0)
					add(1, 2)
				}
			case 10: // c1 and c3 above
				if centreAbove {
					add(3, 0)
					add(1, 2)
				} else {
					add(0, 1)
					add(2, 3)
				}
			}
		}
	}
	return joinSegments(segs, pts)
}

// joinSegments links segments sharing an end key into polylines, starting
// with the open chains (from keys used once) and then the cycles.
func joinSegments(segs [][2]int, pts map[int]point) []Polyline {
	adj := map[int][]int{} // key → indices of segments touching it
	for s, sg := range segs {
		adj[sg[0]] = append(adj[sg[0]], s)
		adj[sg[1]] = append(adj[sg[1]], s)
	}
	used := make([]bool, len(segs))
	walk := func(start int) Polyline {
		var pl Polyline
		key := start
		p := pts[key]
		pl.X, pl.Y = append(pl.X, p.x), append(pl.Y, p.y)
		for {
			next := -1
			for _, s := range adj[key] {
				if !used[s] {
					next = s
					break
				}
			}
			if next < 0 {
				break
			}
			used[next] = true
			if segs[next][0] == key {
				key = segs[next][1]
			} else {
				key = segs[next][0]
			}
			p := pts[key]
			pl.X, pl.Y = append(pl.X, p.x), append(pl.Y, p.y)
			if key == start {
				pl.Closed = true
				break
			}
		}
		return pl
	}
	var out []Polyline
	// Deterministic order: scan segments in creation order.
	for _, sg := range segs {
		for _, k := range sg {
			if len(adj[k]) == 1 && !used[adj[k][0]] {
				out = append(out, walk(k))
			}
		}
	}
	for s, sg := range segs {
		if !used[s] {
			out = append(out, walk(sg[0]))
		}
	}
	return out
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

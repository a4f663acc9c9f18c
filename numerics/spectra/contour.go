package spectra

import "math"

// Contour is the level set {z : σ_min(zI − A) = Level} traced on a grid:
// the boundary of the pseudospectrum σ_ε(A) for ε = Level.
type Contour struct {
	Level float64
	Lines []Polyline
}

// Polyline is a sequence of points z_k = Re[k] + i·Im[k]; Closed means the
// last point joins the first.
type Polyline struct {
	Re, Im []float64
	Closed bool
}

// contours traces each level of the grid function f (f[i*len(im)+j] at
// re[i] + i·im[j]) by marching squares on log f, resolving saddle cells by
// the cell-centre average, and joins the segments into polylines.
func contours(re, im []float64, f []float64, levels []float64) []Contour {
	g := make([]float64, len(f))
	out := make([]Contour, len(levels))
	for l, eps := range levels {
		le := math.Log(eps)
		for k, v := range f {
			if v <= 0 {
				g[k] = -1e300
			} else {
				g[k] = math.Log(v) - le
			}
			if g[k] == 0 {
				g[k] = 1e-300 // keep signs strict
			}
		}
		out[l] = Contour{Level: eps, Lines: marchingSquares(re, im, g)}
	}
	return out
}

type segment struct{ a, b int } // edge keys

func marchingSquares(re, im []float64, g []float64) []Polyline {
	nx, ny := len(re), len(im)
	at := func(i, j int) float64 { return g[i*ny+j] }
	hkey := func(i, j int) int { return 2 * (i*ny + j) } // (i,j)–(i+1,j)
	vkey := func(i, j int) int { return 2*(i*ny+j) + 1 } // (i,j)–(i,j+1)
	point := func(key int) (float64, float64) {
		k := key / 2
		i, j := k/ny, k%ny
		gp := at(i, j)
		if key%2 == 0 {
			gq := at(i+1, j)
			t := gp / (gp - gq)
			return re[i] + t*(re[i+1]-re[i]), im[j]
		}
		gq := at(i, j+1)
		t := gp / (gp - gq)
		return re[i], im[j] + t*(im[j+1]-im[j])
	}
	var segs []segment
	for i := 0; i+1 < nx; i++ {
		for j := 0; j+1 < ny; j++ {
			g0, g1, g2, g3 := at(i, j), at(i+1, j), at(i+1, j+1), at(i, j+1)
			in0, in1, in2, in3 := g0 < 0, g1 < 0, g2 < 0, g3 < 0
			bottom, right, top, left := hkey(i, j), vkey(i+1, j), hkey(i, j+1), vkey(i, j)
			var cut []int
			if in0 != in1 {
				cut = append(cut, bottom)
			}
			if in1 != in2 {
				cut = append(cut, right)
			}
			if in2 != in3 {
				cut = append(cut, top)
			}
			if in3 != in0 {
				cut = append(cut, left)
			}
			switch len(cut) {
			case 2:
				segs = append(segs, segment{cut[0], cut[1]})
			case 4:
				centre := (g0 + g1 + g2 + g3) / 4
				if (centre < 0) == in0 {
					segs = append(segs, segment{bottom, right}, segment{top, left})
				} else {
					segs = append(segs, segment{left, bottom}, segment{right, top})
				}
			}
		}
	}
	// Join segments sharing an edge key.
	byKey := make(map[int][]int, 2*len(segs))
	for s, sg := range segs {
		byKey[sg.a] = append(byKey[sg.a], s)
		byKey[sg.b] = append(byKey[sg.b], s)
	}
	used := make([]bool, len(segs))
	other := func(s, key int) int {
		if segs[s].a == key {
			return segs[s].b
		}
		return segs[s].a
	}
	nextSeg := func(key, from int) int {
		for _, s := range byKey[key] {
			if s != from && !used[s] {
				return s
			}
		}
		return -1
	}
	var lines []Polyline
	for s0 := range segs {
		if used[s0] {
			continue
		}
		used[s0] = true
		keys := []int{segs[s0].a, segs[s0].b}
		// forward from b
		for cur, key := s0, segs[s0].b; ; {
			s := nextSeg(key, cur)
			if s < 0 {
				break
			}
			used[s] = true
			key = other(s, key)
			keys = append(keys, key)
			cur = s
		}
		closed := len(keys) > 2 && keys[len(keys)-1] == keys[0]
		if closed {
			keys = keys[:len(keys)-1]
		} else {
			// backward from a
			var back []int
			for cur, key := s0, segs[s0].a; ; {
				s := nextSeg(key, cur)
				if s < 0 {
					break
				}
				used[s] = true
				key = other(s, key)
				back = append(back, key)
				cur = s
			}
			for l, r := 0, len(back)-1; l < r; l, r = l+1, r-1 {
				back[l], back[r] = back[r], back[l]
			}
			keys = append(back, keys...)
		}
		pl := Polyline{Closed: closed, Re: make([]float64, len(keys)), Im: make([]float64, len(keys))}
		for k, key := range keys {
			pl.Re[k], pl.Im[k] = point(key)
		}
		lines = append(lines, pl)
	}
	return lines
}

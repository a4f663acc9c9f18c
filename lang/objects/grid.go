package objects

import (
	"fmt"
	"strings"

	"semiflow/lang/value"
	"semiflow/numerics/grid"
	"semiflow/numerics/linop"
)

// GridKind tells what a 1-D grid is.
type GridKind int

const (
	KindInterval  GridKind = iota // uniform finite-difference grid
	KindChebyshev                 // Chebyshev points, spectral differentiation
	KindTensor                    // 2-D or 3-D tensor product of 1-D grids
)

// Grid is a 1-D grid (a uniform interval with boundary conditions, or the
// Chebyshev points with homogeneous Dirichlet ends) or the 2-D tensor
// product of two 1-D grids. Exactly one of Interval, Cheb and (X, Y) is set
// according to Kind.
//
// The unknowns of a Chebyshev grid of degree N are the interior points
// x_1 .. x_{N−1} (u = 0 at x_0 = b and x_N = a). The unknowns of a tensor
// grid are the pairs (x_ix, y_iy) with index k = ix*ny + iy.
type Grid struct {
	Kind     GridKind
	Interval *grid.Interval  // KindInterval
	Order    int             // finite-difference order (2 or 4) of an interval
	Cheb     *grid.Chebyshev // KindChebyshev
	X, Y     *Grid           // KindTensor: the 1-D factors
	Z        *Grid           // KindTensor: the third factor of a 3-D grid, nil for 2-D
	// Data holds the right-hand sides of an interval's end conditions,
	// left and right (u = g, u' = g or αu + βu' = g): a value.Num or a
	// value.Callable of t, nil for 0. Operators built on the grid carry
	// them as LiftTerms.
	Data [2]value.Value
}

// HasData reports whether an end of the grid carries boundary data.
func (g *Grid) HasData() bool { return g.Data[0] != nil || g.Data[1] != nil }

func (g *Grid) Type() string { return "grid" }

// Dim returns 1, 2 or 3.
func (g *Grid) Dim() int {
	switch {
	case g.Kind != KindTensor:
		return 1
	case g.Z != nil:
		return 3
	}
	return 2
}

// Factors returns the 1-D factors of a tensor grid (x, y and, in 3-D, z),
// or the grid itself for a 1-D grid.
func (g *Grid) Factors() []*Grid {
	switch g.Dim() {
	case 1:
		return []*Grid{g}
	case 2:
		return []*Grid{g.X, g.Y}
	}
	return []*Grid{g.X, g.Y, g.Z}
}

// Size returns the number of unknowns.
func (g *Grid) Size() int {
	switch g.Kind {
	case KindInterval:
		return g.Interval.Size()
	case KindChebyshev:
		return g.Cheb.N - 1
	}
	n := 1
	for _, f := range g.Factors() {
		n *= f.Size()
	}
	return n
}

// X1 returns the coordinates of the unknowns of a 1-D grid. It panics for a
// 2-D grid.
func (g *Grid) X1() []float64 {
	switch g.Kind {
	case KindInterval:
		return g.Interval.X()
	case KindChebyshev:
		p := g.Cheb.Points()
		return append([]float64(nil), p[1:len(p)-1]...)
	}
	panic("objects: X1 of a 2-D grid")
}

// Coords returns the x and y coordinates of every unknown of a 2-D grid in
// the order k = ix*ny + iy; for a 1-D grid y is nil. On a 3-D grid they
// are the x and y of each unknown in the order of CoordsAll.
func (g *Grid) Coords() (x, y []float64) {
	if g.Kind != KindTensor {
		return g.X1(), nil
	}
	c := g.CoordsAll()
	return c[0], c[1]
}

// CoordsAll returns one coordinate vector per dimension, for every unknown
// in the order k = ix*ny + iy (2-D) or k = (ix*ny + iy)*nz + iz (3-D):
// the last index fastest.
func (g *Grid) CoordsAll() [][]float64 {
	fs := g.Factors()
	pts := make([][]float64, len(fs))
	n := 1
	for i, f := range fs {
		pts[i] = f.X1()
		n *= len(pts[i])
	}
	out := make([][]float64, len(fs))
	for d := range out {
		out[d] = make([]float64, n)
	}
	for k := 0; k < n; k++ {
		r := k
		for d := len(fs) - 1; d >= 0; d-- {
			m := len(pts[d])
			out[d][k] = pts[d][r%m]
			r /= m
		}
	}
	return out
}

// QuadWeights returns quadrature weights on the unknowns: trapezoidal for
// intervals, Clenshaw–Curtis for Chebyshev points, products for tensor grids.
func (g *Grid) QuadWeights() []float64 {
	switch g.Kind {
	case KindInterval:
		return g.Interval.QuadWeights()
	case KindChebyshev:
		return clenshawCurtis(g.Cheb)
	}
	w := []float64{1}
	for _, f := range g.Factors() {
		wf := f.QuadWeights()
		next := make([]float64, 0, len(w)*len(wf))
		for _, a := range w {
			for _, b := range wf {
				next = append(next, a*b)
			}
		}
		w = next
	}
	return w
}

func (g *Grid) describe() string {
	switch g.Kind {
	case KindInterval:
		iv := g.Interval
		ends := endText(iv.Left) + " ends"
		if iv.Left != iv.Right {
			ends = "left end " + endText(iv.Left) + ", right end " + endText(iv.Right)
		}
		data := ""
		if g.HasData() {
			var parts []string
			for side, d := range g.Data {
				if d != nil {
					parts = append(parts, [2]string{"left ", "right "}[side]+dataText(d))
				}
			}
			data = ", boundary data " + strings.Join(parts, ", ")
		}
		if iv.Stretched() {
			lo, hi := iv.Spacings()
			return fmt.Sprintf("stretched interval [%s, %s], %d points, h from %.6g to %.6g, %s%s, order %d, %d unknowns",
				value.FormatNum(iv.A), value.FormatNum(iv.B), iv.N, lo, hi, ends, data, g.Order, iv.Size())
		}
		return fmt.Sprintf("interval [%s, %s], %d points, h = %.6g, %s%s, order %d, %d unknowns",
			value.FormatNum(iv.A), value.FormatNum(iv.B), iv.N, iv.H, ends, data, g.Order, iv.Size())
	case KindChebyshev:
		c := g.Cheb
		return fmt.Sprintf("chebyshev [%s, %s], degree %d, dirichlet ends, %d unknowns", value.FormatNum(c.A), value.FormatNum(c.B), c.N, c.N-1)
	}
	if g.Z != nil {
		return fmt.Sprintf("tensor %d×%d×%d unknowns", g.X.Size(), g.Y.Size(), g.Z.Size())
	}
	return fmt.Sprintf("tensor %d×%d unknowns", g.X.Size(), g.Y.Size())
}

func (g *Grid) String() string {
	if g.Kind == KindTensor {
		s := "grid: " + g.describe() + "\n  x: " + g.X.describe() + "\n  y: " + g.Y.describe()
		if g.Z != nil {
			s += "\n  z: " + g.Z.describe()
		}
		return s
	}
	return "grid: " + g.describe()
}

// endText names one end's condition in lower case, with the Robin
// coefficients.
func endText(e grid.End) string {
	if e.Kind == grid.Robin {
		sign, beta := "+", e.Beta
		if beta < 0 {
			sign, beta = "−", -beta
		}
		return fmt.Sprintf("robin %s·u %s %s·u' = 0", value.FormatNum(e.Alpha), sign, value.FormatNum(beta))
	}
	return strings.ToLower(e.Kind.String())
}

// NewTensor returns the tensor-product grid of two 1-D grids. It panics if
// either is 2-D.
func NewTensor(x, y *Grid) *Grid {
	if x.Dim() != 1 || y.Dim() != 1 {
		panic("objects: tensor of a 2-D grid")
	}
	return &Grid{Kind: KindTensor, X: x, Y: y}
}

// NewTensor3 returns the 3-D tensor-product grid of three 1-D grids,
// unknowns numbered k = (ix*ny + iy)*nz + iz. It panics if one is not 1-D.
func NewTensor3(x, y, z *Grid) *Grid {
	if x.Dim() != 1 || y.Dim() != 1 || z.Dim() != 1 {
		panic("objects: tensor of a tensor grid")
	}
	return &Grid{Kind: KindTensor, X: x, Y: y, Z: z}
}

// Profile returns the points of a 1-D grid in increasing order with the
// values of the grid function u there: the unknowns with the Dirichlet end
// values 0 added, and for a periodic grid the point x = b repeating x = a.
// It panics with linop.ErrShape if len(u) != Size(), and for a 2-D grid.
func (g *Grid) Profile(u []float64) (x, v []float64) {
	if len(u) != g.Size() {
		panic(linop.ErrShape)
	}
	switch g.Kind {
	case KindInterval:
		iv := g.Interval
		x, v = iv.Points(), iv.Embed(u)
		if iv.Periodic() {
			x = append(x[:len(v):len(v)], iv.B)
			v = append(v, v[0])
		}
		return x, v
	case KindChebyshev:
		p := g.Cheb.Points() // decreasing
		n := len(p)
		x, v = make([]float64, n), make([]float64, n)
		for j := range p {
			x[n-1-j] = p[j]
			if j > 0 && j < n-1 {
				v[n-1-j] = u[j-1]
			}
		}
		return x, v
	}
	panic("objects: Profile of a 2-D grid")
}

// MIME returns an HTML table describing the grid.
func (g *Grid) MIME() map[string]any {
	t := &textTable{caption: "grid", left: true}
	t.add("unknowns", fmt.Sprint(g.Size()))
	if g.Kind == KindTensor {
		t.add("x", g.X.describe())
		t.add("y", g.Y.describe())
		if g.Z != nil {
			t.add("z", g.Z.describe())
		}
	} else {
		t.add("grid", g.describe())
	}
	return map[string]any{"text/html": t.html()}
}

// Package grid provides 1-D and 2-D grids and the finite-difference and
// Chebyshev spectral differentiation operators on them.
//
// A 1-D Interval [a, b] with n points carries a boundary condition at each
// end, the two ends independently: Dirichlet u = 0, Neumann u' = 0, Robin
// αu + βu' = 0 (u' = du/dx at either end), or periodic (both ends). The
// unknowns of a grid function are:
//
//   - non-periodic: the points x_j = a + j h, h = (b−a)/(n−1), j = 0..n−1
//     (or given points x_0 < … < x_{n−1}, NewIntervalPoints), except
//     Dirichlet end points (where u = 0 is known);
//   - periodic: x_j = a + j h, h = (b−a)/n, j = 0..n−1 (x = b is x = a).
//
// Derivatives of orders 1 to 4 (Deriv; D1, D2) are banded CSR matrices
// acting on the unknowns, with boundary closures of the difference order
// (2 or 4; a fourth derivative on ends takes beam closures of order 2).
// Non-zero boundary data u = g, u' = g or αu + βu' = g enter through the
// lifting columns each derivative returns (Lift). 2-D tensor-product grids
// index their unknowns k = ix*ny + iy (see package linop).
package grid

import (
	"errors"
	"fmt"
	"math"

	"semiflow/numerics/linop"
)

// Kind is the type of boundary condition at one end of an interval.
type Kind int

const (
	Dirichlet Kind = iota // u = 0
	Neumann               // u' = 0
	Robin                 // αu + βu' = 0
	Periodic              // u(a) = u(b), both ends
)

func (k Kind) String() string {
	switch k {
	case Dirichlet:
		return "Dirichlet"
	case Neumann:
		return "Neumann"
	case Robin:
		return "Robin"
	case Periodic:
		return "periodic"
	}
	return fmt.Sprintf("Kind(%d)", int(k))
}

// End is the boundary condition at one end. Alpha and Beta are used by
// Robin only: αu + βu' = 0 with u' = du/dx.
type End struct {
	Kind        Kind
	Alpha, Beta float64
}

// Convenience values for the conditions without parameters.
var (
	DirichletEnd = End{Kind: Dirichlet}
	NeumannEnd   = End{Kind: Neumann}
	PeriodicEnd  = End{Kind: Periodic}
)

// RobinEnd returns the condition αu + βu' = 0.
func RobinEnd(alpha, beta float64) End { return End{Kind: Robin, Alpha: alpha, Beta: beta} }

// ErrGrid is matched (errors.Is) by every grid construction error.
var ErrGrid = errors.New("grid: invalid grid")

// normal reduces a Robin end with β = 0 to Dirichlet and one with α = 0 to
// Neumann.
func (e End) normal() (End, error) {
	if e.Kind != Robin {
		if e.Kind < Dirichlet || e.Kind > Periodic {
			return e, fmt.Errorf("%w: unknown boundary kind %d", ErrGrid, int(e.Kind))
		}
		return e, nil
	}
	if math.IsNaN(e.Alpha) || math.IsNaN(e.Beta) || math.IsInf(e.Alpha, 0) || math.IsInf(e.Beta, 0) {
		return e, fmt.Errorf("%w: Robin coefficients α = %g, β = %g", ErrGrid, e.Alpha, e.Beta)
	}
	switch {
	case e.Alpha == 0 && e.Beta == 0:
		return e, fmt.Errorf("%w: Robin condition with α = β = 0", ErrGrid)
	case e.Beta == 0:
		return DirichletEnd, nil
	case e.Alpha == 0:
		return NeumannEnd, nil
	}
	return e, nil
}

// dataScale returns the factor s of the package comment of Interval's
// dataScale for the condition as given (before normal reduces it).
func dataScale(e End) float64 {
	if e.Kind != Robin {
		return 1
	}
	if e.Beta == 0 {
		return 1 / e.Alpha
	}
	return 1 / e.Beta
}

// ratio returns α/β, so that u' = −(α/β) u at the end.
func (e End) ratio() float64 {
	if e.Kind == Robin {
		return e.Alpha / e.Beta
	}
	return 0
}

// Interval is a uniform 1-D grid on [A, B] with boundary conditions.
type Interval struct {
	A, B        float64
	N           int     // number of grid points (see the package comment)
	H           float64 // spacing
	Left, Right End
	first, last int // point indices of the first and last unknown
	// dataScale[side] turns the right-hand side g of the condition at an
	// end into the value it prescribes: u = s·g at a Dirichlet end (s = 1,
	// or 1/α for a Robin condition with β = 0), u' = s·g − (α/β)u at a
	// Neumann or Robin end (s = 1/β, or 1 for Neumann).
	dataScale [2]float64
	// pts holds the points of a stretched grid (NewIntervalPoints), nil
	// for a uniform one.
	pts []float64
}

// NewIntervalPoints returns the grid on the given points x_0 < x_1 < … <
// x_{n−1} (a stretched or mapped grid), with the conditions at its ends as
// for NewInterval; H is then the smallest spacing. Derivatives take the
// same stencils as on a uniform grid, with weights for the actual offsets
// (Weights): exact on polynomials of the same degree, so of the uniform
// order on points x_j = x(j/(n−1)) of a smooth map with x' > 0, and at
// least one order less on arbitrary points. Periodic ends are refused.
// It returns an error wrapping ErrGrid when n < 3, a point is not finite
// or the points do not increase.
func NewIntervalPoints(x []float64, left, right End) (*Interval, error) {
	n := len(x)
	if n < 3 {
		return nil, fmt.Errorf("%w: %d points (at least 3)", ErrGrid, n)
	}
	if left.Kind == Periodic || right.Kind == Periodic {
		return nil, fmt.Errorf("%w: periodic ends on given points (a periodic grid is uniform)", ErrGrid)
	}
	hmin := math.Inf(1)
	for j, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("%w: point %d is %g", ErrGrid, j, v)
		}
		if j > 0 {
			if !(v > x[j-1]) {
				return nil, fmt.Errorf("%w: the points must increase, but x[%d] = %g ≤ x[%d] = %g", ErrGrid, j, v, j-1, x[j-1])
			}
			hmin = math.Min(hmin, v-x[j-1])
		}
	}
	g, err := NewInterval(x[0], x[n-1], n, left, right)
	if err != nil {
		return nil, err
	}
	g.pts = append([]float64(nil), x...)
	g.H = hmin
	return g, nil
}

// Stretched reports whether the grid is on given points (NewIntervalPoints).
func (g *Interval) Stretched() bool { return g.pts != nil }

// Spacings returns the smallest and the largest spacing x_{j+1} − x_j.
func (g *Interval) Spacings() (hmin, hmax float64) {
	if g.pts == nil {
		return g.H, g.H
	}
	hmin, hmax = math.Inf(1), 0
	for j := 1; j < len(g.pts); j++ {
		d := g.pts[j] - g.pts[j-1]
		hmin, hmax = math.Min(hmin, d), math.Max(hmax, d)
	}
	return hmin, hmax
}

// NewInterval returns the grid of n points on [a, b]. It returns an error
// wrapping ErrGrid if a ≥ b, n < 3 (n < 2 when periodic, counting unknowns
// after Dirichlet ends must be at least 1), only one end is periodic, or a
// Robin condition has α = β = 0.
func NewInterval(a, b float64, n int, left, right End) (*Interval, error) {
	if !(a < b) || math.IsInf(a, 0) || math.IsInf(b, 0) {
		return nil, fmt.Errorf("%w: interval [%g, %g]", ErrGrid, a, b)
	}
	l, err := left.normal()
	if err != nil {
		return nil, err
	}
	r, err := right.normal()
	if err != nil {
		return nil, err
	}
	if (l.Kind == Periodic) != (r.Kind == Periodic) {
		return nil, fmt.Errorf("%w: periodic at one end only (%v, %v)", ErrGrid, l.Kind, r.Kind)
	}
	g := &Interval{A: a, B: b, N: n, Left: l, Right: r, dataScale: [2]float64{dataScale(left), dataScale(right)}}
	if l.Kind == Periodic {
		if n < 2 {
			return nil, fmt.Errorf("%w: periodic grid with %d points", ErrGrid, n)
		}
		g.H = (b - a) / float64(n)
		g.first, g.last = 0, n-1
		return g, nil
	}
	if n < 3 {
		return nil, fmt.Errorf("%w: %d points (at least 3)", ErrGrid, n)
	}
	g.H = (b - a) / float64(n-1)
	g.first, g.last = 0, n-1
	if l.Kind == Dirichlet {
		g.first = 1
	}
	if r.Kind == Dirichlet {
		g.last = n - 2
	}
	return g, nil
}

// EndValue returns the value u takes at the left (side 0) or right (1)
// end when that end is Dirichlet with right-hand side g, and false when
// the end is not Dirichlet.
func (g *Interval) EndValue(side int, datum float64) (float64, bool) {
	e := g.Left
	if side == 1 {
		e = g.Right
	}
	if e.Kind != Dirichlet {
		return 0, false
	}
	return datum * g.dataScale[side], true
}

// Periodic reports whether the grid is periodic.
func (g *Interval) Periodic() bool { return g.Left.Kind == Periodic }

// Size returns the number of unknowns.
func (g *Interval) Size() int { return g.last - g.first + 1 }

// Points returns all n grid points x_j = a + j h.
func (g *Interval) Points() []float64 {
	if g.pts != nil {
		return append([]float64(nil), g.pts...)
	}
	x := make([]float64, g.N)
	for j := range x {
		x[j] = g.A + float64(j)*g.H
	}
	if !g.Periodic() {
		x[g.N-1] = g.B
	}
	return x
}

// X returns the coordinates of the unknowns (length Size()).
func (g *Interval) X() []float64 { return g.Points()[g.first : g.last+1] }

// Unknowns returns the point index of each unknown.
func (g *Interval) Unknowns() []int {
	idx := make([]int, g.Size())
	for k := range idx {
		idx[k] = g.first + k
	}
	return idx
}

// Embed returns the values at all n points of the grid function whose
// unknowns are u, with the Dirichlet end values 0. It panics with
// linop.ErrShape if len(u) != Size().
func (g *Interval) Embed(u []float64) []float64 {
	if len(u) != g.Size() {
		panic(linop.ErrShape)
	}
	full := make([]float64, g.N)
	copy(full[g.first:], u)
	return full
}

// QuadWeights returns trapezoidal quadrature weights on the unknowns (on
// given points the trapezoid rule on them):
// Σ w_k u_k v_k ≈ ∫ u v dx for grid functions satisfying the boundary
// conditions (h at interior and periodic points, h/2 at Neumann and Robin
// end points). The second-order D2 with Neumann or Robin ends is symmetric
// in this weight (see linop.NewDiagWeight).
func (g *Interval) QuadWeights() []float64 {
	if g.pts != nil {
		// The trapezoid rule on the points: (x_{j+1} − x_{j−1})/2 inside,
		// half the end interval at a kept end point.
		x, n := g.pts, g.N
		w := make([]float64, g.Size())
		for k := range w {
			j := g.first + k
			lo, hi := max(j-1, 0), min(j+1, n-1)
			w[k] = (x[hi] - x[lo]) / 2
		}
		return w
	}
	w := make([]float64, g.Size())
	for k := range w {
		w[k] = g.H
	}
	if !g.Periodic() {
		if g.first == 0 {
			w[0] = g.H / 2
		}
		if g.last == g.N-1 {
			w[len(w)-1] = g.H / 2
		}
	}
	return w
}

// D1 returns the first-derivative matrix of the given order (2 or 4) on the
// unknowns: central differences inside, one-sided differences of the same
// order where the central stencil would leave the grid, and at a Neumann
// or Robin end point the value the condition prescribes, u' = −(α/β) u.
// It returns an error wrapping ErrGrid for another order or a grid too
// small for the stencils.
func (g *Interval) D1(order int) (*linop.CSR, error) { return g.diff(1, order) }

// D2 returns the second-derivative matrix of the given order (2 or 4) on
// the unknowns: central differences inside ((1, −2, 1)/h² and
// (−1, 16, −30, 16, −1)/(12h²)), one-sided 6-point differences next to the
// ends for order 4, and at a Neumann or Robin end point the Hermite formula
// that uses u' = −(α/β) u there (for order 2 this is the ghost-point row
// (2u₁ − 2u₀ − 2h u'₀)/h²). It returns an error wrapping ErrGrid for
// another order or a grid too small for the stencils.
func (g *Interval) D2(order int) (*linop.CSR, error) { return g.diff(2, order) }

// Lift returns the columns through which boundary data enter the m-th
// derivative (m = 1 or 2) of the given order: when the end conditions have
// right-hand sides g_left and g_right (u = g at a Dirichlet end, u' = g at
// a Neumann end, αu + βu' = g at a Robin end), the derivative of the grid
// function is D u + left·g_left + right·g_right, with D from D1 or D2 (the
// homogeneous conditions) and u the unknowns. This is the lifting of the
// data into a forcing term: u' = L u with data becomes u' = L u + b(t).
// A periodic grid has no data and gives zero columns.
func (g *Interval) Lift(m, order int) (left, right []float64, err error) {
	_, lift, err := g.diffLift(m, order)
	if err != nil {
		return nil, nil, err
	}
	return lift[0], lift[1], nil
}

func (g *Interval) diff(m, order int) (*linop.CSR, error) {
	d, _, err := g.diffLift(m, order)
	return d, err
}

// diffLift returns the derivative matrix and its lifting columns (Lift).
func (g *Interval) diffLift(m, order int) (*linop.CSR, [2][]float64, error) {
	var lift [2][]float64
	if order != 2 && order != 4 {
		return nil, lift, fmt.Errorf("%w: finite-difference order %d (2 or 4)", ErrGrid, order)
	}
	lift[0], lift[1] = make([]float64, g.Size()), make([]float64, g.Size())
	// The central stencil reaches ±half: 2·half + 1 points, of order
	// `order` for the m-th derivative (±1 for m = 1, 2 at order 2; ±2 for
	// m = 3, 4 at order 2; one more at order 4).
	half := (m+1)/2 + order/2 - 1
	n := g.N
	var is, js []int
	var vs []float64
	scale := math.Pow(g.H, -float64(m))
	if g.Periodic() {
		if n < 2*half+1 {
			return nil, lift, fmt.Errorf("%w: periodic grid of %d points for order %d", ErrGrid, n, order)
		}
		w := Weights(offsets(-half, half, 0), m, false)
		for i := 0; i < n; i++ {
			for k, wk := range w {
				if wk != 0 {
					is, js, vs = append(is, i), append(js, ((i+k-half)%n+n)%n), append(vs, wk*scale)
				}
			}
		}
		return linop.NewCSRFromTriplets(n, n, is, js, vs), lift, nil
	}
	// One-sided windows: width order+m points (exact to degree order+m−1).
	width := order + m
	if n < width+1 {
		return nil, lift, fmt.Errorf("%w: %d points for derivative %d with differences of order %d (at least %d)", ErrGrid, n, m, order, width+1)
	}
	add := func(row, point int, v float64) {
		switch {
		case point < g.first: // the left Dirichlet end, u = s·g there
			lift[0][row-g.first] += v * g.dataScale[0]
		case point > g.last:
			lift[1][row-g.first] += v * g.dataScale[1]
		default:
			is, js, vs = append(is, row-g.first), append(js, point-g.first), append(vs, v)
		}
	}
	for i := g.first; i <= g.last; i++ {
		atEnd := i == 0 || i == n-1
		switch {
		case atEnd:
			e, sign, side := g.Left, 1, 0
			if i == n-1 {
				e, sign, side = g.Right, -1, 1
			}
			r := e.ratio() // u' = s·g − r u at the end
			if m == 1 {
				add(i, i, -r)
				lift[side][i-g.first] += g.dataScale[side]
				continue
			}
			// Hermite closure: points i, i±1, …, i±(order/2·… ) plus the slope.
			// Points of the Hermite closure: the ghost-point row for m = 2
			// at order 2 (one order less accurate locally), otherwise
			// enough with the slope for degree order + m − 1.
			np := order + m - 1
			if m == 2 && order == 2 {
				np = 2
			}
			pts := make([]int, np)
			for k := range pts {
				pts[k] = i + sign*k
			}
			w, sc, hl := g.weightsAt(pts, i, m, true)
			c := w[np]
			for k := 0; k < np; k++ {
				v := w[k]
				if k == 0 {
					v += c * hl * (-r) // c · h u'(x_i), u'(x_i) = −r u_i
				}
				add(i, pts[k], v*sc)
			}
			lift[side][i-g.first] += c * hl * g.dataScale[side] * sc
		case i-half >= 0 && i+half <= n-1:
			w, sc, _ := g.weightsAt(span(i-half, i+half), i, m, false)
			for k, wk := range w {
				if wk != 0 {
					add(i, i-half+k, wk*sc)
				}
			}
		default:
			lo := 0
			if i+half > n-1 {
				lo = n - width
			}
			w, sc, _ := g.weightsAt(span(lo, lo+width-1), i, m, false)
			for k, wk := range w {
				add(i, lo+k, wk*sc)
			}
		}
	}
	s := g.Size()
	return linop.NewCSRFromTriplets(s, s, is, js, vs), lift, nil
}

// span returns the point indices lo..hi.
func span(lo, hi int) []int {
	p := make([]int, 0, hi-lo+1)
	for j := lo; j <= hi; j++ {
		p = append(p, j)
	}
	return p
}

// weightsAt returns the finite-difference weights for the m-th derivative
// at point at from the values at the given points (and the slope there
// when slope is true; see Weights), the factor sc = hl^−m that scales
// them, and the length hl the offsets are measured in: the spacing h on a
// uniform grid, the mean spacing over the stencil on given points (which
// keeps the small system as well conditioned as on a uniform grid).
func (g *Interval) weightsAt(points []int, at, m int, slope bool) (w []float64, sc, hl float64) {
	off := make([]float64, len(points))
	if g.pts == nil {
		for k, p := range points {
			off[k] = float64(p - at)
		}
		return Weights(off, m, slope), math.Pow(g.H, -float64(m)), g.H
	}
	lo, hi := points[0], points[0]
	for _, p := range points {
		lo, hi = min(lo, p), max(hi, p)
	}
	hl = (g.pts[hi] - g.pts[lo]) / float64(hi-lo)
	for k, p := range points {
		off[k] = (g.pts[p] - g.pts[at]) / hl
	}
	return Weights(off, m, slope), math.Pow(hl, -float64(m)), hl
}

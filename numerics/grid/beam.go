package grid

import (
	"fmt"

	"semiflow/numerics/linop"
)

// Support is the second condition a fourth derivative needs at a
// Dirichlet end (u = g there): the end of a beam.
type Support int

const (
	Supported Support = iota // u'' = 0: simply supported (hinged)
	Clamped                  // u' = 0: clamped (built in)
)

func (s Support) String() string {
	if s == Clamped {
		return "clamped"
	}
	return "supported"
}

// Deriv returns the m-th derivative (m = 1..4) of the given order on the
// unknowns with its lifting columns (see Lift): D1 and D2 for m = 1, 2;
// for m = 3 central differences (−1, 2, 0, −2, 1)/(2h³) (seven points at
// order 4) with one-sided closures of the same order, and at a Neumann or
// Robin end point the Hermite formula that uses the condition. For m = 4
// a periodic grid takes central differences (1, −4, 6, −4, 1)/h⁴ (seven
// points at order 4); otherwise both ends must be Dirichlet (u = 0, or
// u = g with data) and beam gives each end's second condition, imposed
// through the ghost value the central stencil reaches beyond the end:
// supported, u” = 0, gives u_{−1} = 2u_0 − u_1; clamped, u' = 0,
// u_{−1} = u_1 (and the same at the right end). With supported ends the
// matrix is exactly D2², and −u”” = λu has the closed-form eigenvalues
// −(kπ/L)⁴ approached at order 2. These closures are of order 2 only: m = 4
// on a non-periodic grid of order 4 is an error, as are Neumann or Robin
// ends for m = 4 (they would need a condition on u”' as well).
func (g *Interval) Deriv(m, order int, beam [2]Support) (*linop.CSR, [2][]float64, error) {
	switch {
	case m < 1 || m > 4:
		return nil, [2][]float64{}, fmt.Errorf("%w: derivative of order %d (1 to 4)", ErrGrid, m)
	case m < 4 || g.Periodic():
		return g.diffLift(m, order)
	}
	return g.beam(order, beam)
}

func (g *Interval) beam(order int, beam [2]Support) (*linop.CSR, [2][]float64, error) {
	var lift [2][]float64
	if g.Left.Kind != Dirichlet || g.Right.Kind != Dirichlet {
		return nil, lift, fmt.Errorf("%w: a fourth derivative needs two conditions at each end: u = 0 (Dirichlet) with u'' = 0 or u' = 0, not %v and %v ends", ErrGrid, g.Left.Kind, g.Right.Kind)
	}
	if order != 2 {
		return nil, lift, fmt.Errorf("%w: the fourth derivative's beam closures are of order 2 only, not %d", ErrGrid, order)
	}
	if g.pts != nil {
		return nil, lift, fmt.Errorf("%w: the fourth derivative's beam closures need equally spaced points; this grid is stretched", ErrGrid)
	}
	n := g.N
	if n < 5 {
		return nil, lift, fmt.Errorf("%w: %d points for a fourth derivative (at least 5)", ErrGrid, n)
	}
	size := g.Size()
	lift[0], lift[1] = make([]float64, size), make([]float64, size)
	scale := 1 / (g.H * g.H * g.H * g.H)
	var is, js []int
	var vs []float64
	// add puts weight v on point p (0..n−1) into row i: an unknown, or the
	// Dirichlet end value s·g, which goes to the lifting column.
	add := func(i, p int, v float64) {
		switch {
		case p == 0:
			lift[0][i-1] += v * g.dataScale[0]
		case p == n-1:
			lift[1][i-1] += v * g.dataScale[1]
		default:
			is, js, vs = append(is, i-1), append(js, p-1), append(vs, v)
		}
	}
	w := [5]float64{1, -4, 6, -4, 1}
	for i := 1; i <= n-2; i++ {
		for k, wk := range w {
			p, v := i-2+k, wk*scale
			switch {
			case p == -1: // the left ghost
				if beam[0] == Clamped {
					add(i, 1, v)
				} else {
					add(i, 0, 2*v)
					add(i, 1, -v)
				}
			case p == n: // the right ghost
				if beam[1] == Clamped {
					add(i, n-2, v)
				} else {
					add(i, n-1, 2*v)
					add(i, n-2, -v)
				}
			default:
				add(i, p, v)
			}
		}
	}
	return linop.NewCSRFromTriplets(size, size, is, js, vs), lift, nil
}

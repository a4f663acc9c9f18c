package objects

import (
	"semiflow/lang/value"
	"semiflow/numerics/linop"
)

// Deriv returns the k-th derivative operator (k = 1 or 2) on the unknowns
// of g, along "x" or "y" (y only on 2-D grids): finite differences of the
// grid's order with its boundary conditions on an interval, the interior
// block of the spectral differentiation matrix D or D² on Chebyshev points,
// and D_x ⊗ I_ny or I_nx ⊗ D_y on a tensor grid. Errors are ValueErrors.
func Deriv(g *Grid, k int, along string) (linop.Operator, error) {
	if k != 1 && k != 2 {
		return nil, value.ValueErrorf("deriv: k must be 1 or 2, not %d", k)
	}
	if along != "x" && along != "y" {
		return nil, value.ValueErrorf("deriv: along must be \"x\" or \"y\", not %q", along)
	}
	if g.Kind != KindTensor {
		if along == "y" {
			return nil, value.ValueErrorf("deriv: along=\"y\" needs a 2-D grid; this grid is 1-D")
		}
		return deriv1(g, k)
	}
	f, other := g.X, g.Y
	if along == "y" {
		f, other = g.Y, g.X
	}
	d, err := deriv1(f, k)
	if err != nil {
		return nil, err
	}
	ds, err := toCSR(d)
	if err != nil {
		return nil, err
	}
	id := linop.Identity(other.Size())
	if along == "x" {
		return linop.Kron(ds, id), nil
	}
	return linop.Kron(id, ds), nil
}

func deriv1(g *Grid, k int) (linop.Operator, error) {
	switch g.Kind {
	case KindInterval:
		var d *linop.CSR
		var err error
		if k == 1 {
			d, err = g.Interval.D1(g.Order)
		} else {
			d, err = g.Interval.D2(g.Order)
		}
		if err != nil {
			return nil, value.ValueErrorf("%v", err)
		}
		return d, nil
	case KindChebyshev:
		if k == 1 {
			return g.Cheb.Interior(g.Cheb.Diff()), nil
		}
		return g.Cheb.Interior(g.Cheb.Diff2()), nil
	}
	panic("objects: deriv1 of a 2-D grid")
}

func toCSR(op linop.Operator) (*linop.CSR, error) {
	if d, ok := op.(*linop.Dense); ok {
		return linop.CSRFromDense(d.Mat(), 0), nil
	}
	c, err := linop.ToCSR(op)
	if err != nil {
		return nil, value.ValueErrorf("%v", err)
	}
	return c, nil
}

// Laplacian returns d²/dx² on a 1-D grid and the Kronecker sum
// D2_x ⊕ D2_y = ∂²/∂x² + ∂²/∂y² on a tensor grid.
func Laplacian(g *Grid) (linop.Operator, error) {
	if g.Kind != KindTensor {
		return deriv1(g, 2)
	}
	dx, err := deriv1(g.X, 2)
	if err != nil {
		return nil, err
	}
	dy, err := deriv1(g.Y, 2)
	if err != nil {
		return nil, err
	}
	return linop.NewKronSum(dx, dy), nil
}

// LiftOf returns the terms through which the boundary data of a 1-D
// interval enter its k-th derivative (k = 1, 2): one per end with data
// (grid.Interval.Lift). Other grids give none.
func LiftOf(g *Grid, k int) ([]LiftTerm, error) {
	if g.Kind != KindInterval || !g.HasData() {
		return nil, nil
	}
	left, right, err := g.Interval.Lift(k, g.Order)
	if err != nil {
		return nil, value.ValueErrorf("%v", err)
	}
	var out []LiftTerm
	for side, vec := range [2][]float64{left, right} {
		if g.Data[side] != nil {
			out = append(out, LiftTerm{Vec: vec, G: g.Data[side], Side: [2]string{"left", "right"}[side]})
		}
	}
	return out, nil
}

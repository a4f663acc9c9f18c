package objects

import (
	"strings"

	"semiflow/lang/value"
	"semiflow/numerics/grid"
	"semiflow/numerics/linop"
)

// Deriv returns the k-th derivative operator (k = 1 or 2) on the unknowns
// of g, along "x", "y" or "z" (y on 2-D and 3-D grids, z on 3-D grids):
// finite differences of the grid's order with its boundary conditions on
// an interval, the interior block of the spectral differentiation matrix D
// or D² on Chebyshev points, and on a tensor grid the factor's derivative
// in its place of the Kronecker product with identities (D_x ⊗ I_ny,
// I_nx ⊗ D_y; D_x ⊗ I_ny·nz, I_nx ⊗ D_y ⊗ I_nz, I_nx·ny ⊗ D_z in 3-D).
// Errors are ValueErrors.
func Deriv(g *Grid, k int, along string) (linop.Operator, error) {
	return DerivBeam(g, k, along, [2]grid.Support{})
}

// DerivBeam is Deriv for k = 1..4; beam gives the second condition at
// each Dirichlet end of an interval for k = 4 (grid.Interval.Deriv).
// Chebyshev grids take k = 1, 2 only.
func DerivBeam(g *Grid, k int, along string, beam [2]grid.Support) (linop.Operator, error) {
	if k < 1 || k > 4 {
		return nil, value.ValueErrorf("deriv: k must be 1, 2, 3 or 4, not %d", k)
	}
	axis := strings.Index("xyz", along)
	if axis < 0 || len(along) != 1 {
		return nil, value.ValueErrorf("deriv: along must be \"x\", \"y\" or \"z\", not %q", along)
	}
	fs := g.Factors()
	if axis >= len(fs) {
		return nil, value.ValueErrorf("deriv: along=%q needs a %d-D grid; this grid is %d-D", along, axis+1, len(fs))
	}
	if len(fs) == 1 {
		return deriv1(g, k, beam)
	}
	d, err := deriv1(fs[axis], k, beam)
	if err != nil {
		return nil, err
	}
	ds, err := toCSR(d)
	if err != nil {
		return nil, err
	}
	before, after := 1, 1
	for i, f := range fs {
		if i < axis {
			before *= f.Size()
		} else if i > axis {
			after *= f.Size()
		}
	}
	op := ds
	if after > 1 {
		op = linop.Kron(op, linop.Identity(after))
	}
	if before > 1 {
		op = linop.Kron(linop.Identity(before), op)
	}
	return op, nil
}

func deriv1(g *Grid, k int, beam [2]grid.Support) (linop.Operator, error) {
	switch g.Kind {
	case KindInterval:
		d, _, err := g.Interval.Deriv(k, g.Order, beam)
		if err != nil {
			return nil, value.ValueErrorf("deriv: %s", strings.TrimPrefix(err.Error(), "grid: invalid grid: "))
		}
		return d, nil
	case KindChebyshev:
		if k > 2 {
			return nil, value.ValueErrorf("deriv: k = %d is available on intervals; on Chebyshev points k is 1 or 2", k)
		}
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
// D2_x ⊕ D2_y = ∂²/∂x² + ∂²/∂y² on a 2-D tensor grid, D2_x ⊕ (D2_y ⊕ D2_z)
// on a 3-D one.
func Laplacian(g *Grid) (linop.Operator, error) {
	if g.Kind != KindTensor {
		return deriv1(g, 2, [2]grid.Support{})
	}
	var ds []linop.Operator
	for _, f := range g.Factors() {
		d, err := deriv1(f, 2, [2]grid.Support{})
		if err != nil {
			return nil, err
		}
		ds = append(ds, d)
	}
	op := ds[len(ds)-1]
	for i := len(ds) - 2; i >= 0; i-- {
		op = linop.NewKronSum(ds[i], op)
	}
	return op, nil
}

// LiftOf returns the terms through which the boundary data of a 1-D
// interval enter its k-th derivative (k = 1..4, beam as for DerivBeam):
// one per end with data (grid.Interval.Lift). Other grids give none.
func LiftOf(g *Grid, k int, beam [2]grid.Support) ([]LiftTerm, error) {
	if g.Kind != KindInterval || !g.HasData() {
		return nil, nil
	}
	_, lift, err := g.Interval.Deriv(k, g.Order, beam)
	if err != nil {
		return nil, value.ValueErrorf("deriv: %s", strings.TrimPrefix(err.Error(), "grid: invalid grid: "))
	}
	left, right := lift[0], lift[1]
	var out []LiftTerm
	for side, vec := range [2][]float64{left, right} {
		if g.Data[side] != nil {
			out = append(out, LiftTerm{Vec: vec, G: g.Data[side], Side: [2]string{"left", "right"}[side]})
		}
	}
	return out, nil
}

package grid

import "semiflow/numerics/linop"

// Tensor is the tensor-product grid of two intervals; its unknowns are the
// pairs (x_ix, y_iy) of unknowns of X and Y with index k = ix*ny + iy.
type Tensor struct {
	X, Y *Interval
}

// NewTensor returns the tensor-product grid of x and y.
func NewTensor(x, y *Interval) *Tensor { return &Tensor{X: x, Y: y} }

// Dims returns the numbers of unknowns along x and y.
func (t *Tensor) Dims() (nx, ny int) { return t.X.Size(), t.Y.Size() }

// Size returns nx*ny.
func (t *Tensor) Size() int { nx, ny := t.Dims(); return nx * ny }

// Coords returns the coordinates of every unknown: x[k], y[k] for
// k = ix*ny + iy, so that grid functions can be evaluated pointwise.
func (t *Tensor) Coords() (x, y []float64) {
	xs, ys := t.X.X(), t.Y.X()
	x = make([]float64, 0, len(xs)*len(ys))
	y = make([]float64, 0, len(xs)*len(ys))
	for _, xv := range xs {
		for _, yv := range ys {
			x = append(x, xv)
			y = append(y, yv)
		}
	}
	return x, y
}

// QuadWeights returns the product trapezoidal weights w_x[ix]·w_y[iy].
func (t *Tensor) QuadWeights() []float64 {
	wx, wy := t.X.QuadWeights(), t.Y.QuadWeights()
	w := make([]float64, 0, len(wx)*len(wy))
	for _, a := range wx {
		for _, b := range wy {
			w = append(w, a*b)
		}
	}
	return w
}

// Laplacian returns ∂²/∂x² + ∂²/∂y² of the given order (2 or 4) as the
// Kronecker sum D2_x ⊕ D2_y. It returns an error for another order or a
// grid too small for the stencils.
func (t *Tensor) Laplacian(order int) (*linop.KronSum, error) {
	dx, err := t.X.D2(order)
	if err != nil {
		return nil, err
	}
	dy, err := t.Y.D2(order)
	if err != nil {
		return nil, err
	}
	return linop.NewKronSum(dx, dy), nil
}

// DX returns ∂/∂x (order 2 or 4) on the tensor grid: D1_x ⊗ I_ny.
func (t *Tensor) DX(order int) (*linop.CSR, error) { return t.alongX(t.X.D1, order) }

// DY returns ∂/∂y (order 2 or 4) on the tensor grid: I_nx ⊗ D1_y.
func (t *Tensor) DY(order int) (*linop.CSR, error) { return t.alongY(t.Y.D1, order) }

// DXX returns ∂²/∂x² (order 2 or 4) on the tensor grid: D2_x ⊗ I_ny.
func (t *Tensor) DXX(order int) (*linop.CSR, error) { return t.alongX(t.X.D2, order) }

// DYY returns ∂²/∂y² (order 2 or 4) on the tensor grid: I_nx ⊗ D2_y.
func (t *Tensor) DYY(order int) (*linop.CSR, error) { return t.alongY(t.Y.D2, order) }

func (t *Tensor) alongX(d func(int) (*linop.CSR, error), order int) (*linop.CSR, error) {
	m, err := d(order)
	if err != nil {
		return nil, err
	}
	return linop.Kron(m, linop.Identity(t.Y.Size())), nil
}

func (t *Tensor) alongY(d func(int) (*linop.CSR, error), order int) (*linop.CSR, error) {
	m, err := d(order)
	if err != nil {
		return nil, err
	}
	return linop.Kron(linop.Identity(t.X.Size()), m), nil
}

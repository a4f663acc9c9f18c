package grid

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
	"semiflow/numerics/linop"
)

// Chebyshev is the grid of the N+1 Chebyshev points of the second kind
// mapped to [A, B]: x_j = (A+B)/2 + (B−A)/2 cos(jπ/N), j = 0..N (so x_0 = B
// and x_N = A, decreasing).
type Chebyshev struct {
	A, B float64
	N    int
}

// NewChebyshev returns the Chebyshev grid of degree n on [a, b]. It returns
// an error wrapping ErrGrid if n < 1 or a ≥ b.
func NewChebyshev(a, b float64, n int) (*Chebyshev, error) {
	if n < 1 || !(a < b) {
		return nil, fmt.Errorf("%w: Chebyshev grid of degree %d on [%g, %g]", ErrGrid, n, a, b)
	}
	return &Chebyshev{A: a, B: b, N: n}, nil
}

// Points returns x_0..x_N. cos(jπ/N) is evaluated as sin(π(N−2j)/(2N)) so
// that the points are symmetric to rounding.
func (c *Chebyshev) Points() []float64 {
	x := make([]float64, c.N+1)
	mid, rad := (c.A+c.B)/2, (c.B-c.A)/2
	for j := range x {
		x[j] = mid + rad*math.Sin(math.Pi*float64(c.N-2*j)/float64(2*c.N))
	}
	return x
}

// Diff returns the (N+1)×(N+1) spectral differentiation matrix D: for the
// polynomial p of degree ≤ N interpolating values v_j at the points,
// (D v)_i = p'(x_i). Off the diagonal D_ij = (c_i/c_j) (−1)^{i+j}/(x_i − x_j)
// with c_0 = c_N = 2 and c_j = 1 otherwise (on [−1, 1]); the diagonal is
// D_ii = −Σ_{j≠i} D_ij, which makes D exact on constants and is more
// accurate than the closed form (Baltensperger & Trummer, SIAM J. Sci.
// Comput. 2003). On [A, B] the matrix is scaled by 2/(B−A).
func (c *Chebyshev) Diff() *mat.Dense {
	n := c.N
	xi := make([]float64, n+1) // points on [−1, 1]
	for j := range xi {
		xi[j] = math.Sin(math.Pi * float64(n-2*j) / float64(2*n))
	}
	d := mat.NewDense(n+1, n+1, nil)
	scale := 2 / (c.B - c.A)
	for i := 0; i <= n; i++ {
		var sum float64
		for j := 0; j <= n; j++ {
			if i == j {
				continue
			}
			v := weightC(i, n) / weightC(j, n) / (xi[i] - xi[j])
			if (i+j)%2 == 1 {
				v = -v
			}
			d.Set(i, j, v*scale)
			sum += v
		}
		d.Set(i, i, -sum*scale)
	}
	return d
}

func weightC(j, n int) float64 {
	if j == 0 || j == n {
		return 2
	}
	return 1
}

// Diff2 returns D², the second-derivative matrix on all N+1 points.
func (c *Chebyshev) Diff2() *mat.Dense {
	d := c.Diff()
	var d2 mat.Dense
	d2.Mul(d, d)
	return &d2
}

// Interior returns the submatrix of m for the interior points x_1..x_{N−1}:
// the operator with homogeneous Dirichlet conditions at both ends (values
// at x_0 and x_N are zero). It panics with linop.ErrShape unless m is
// (N+1)×(N+1) and N ≥ 2.
func (c *Chebyshev) Interior(m *mat.Dense) *linop.Dense {
	r, cc := m.Dims()
	if r != c.N+1 || cc != c.N+1 || c.N < 2 {
		panic(linop.ErrShape)
	}
	return linop.NewDense(mat.DenseCopyOf(m.Slice(1, c.N, 1, c.N)))
}

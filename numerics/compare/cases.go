package compare

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
)

// ConvX and ConvY are the convection velocities of the conv-diff operators.
const (
	ConvX = 20.0
	ConvY = 10.0
)

// Tridiag returns (1/h²) tridiag(1, −2, 1) − c (1/(2h)) tridiag(−1, 0, 1) on
// m interior points (c = 0: the heat operator) as CSR.
func Tridiag(m int, c float64) *linop.CSR {
	h := 1 / float64(m+1)
	d, off := 1/(h*h), c/(2*h)
	is := make([]int, 0, 3*m)
	js := make([]int, 0, 3*m)
	vs := make([]float64, 0, 3*m)
	for i := 0; i < m; i++ {
		if i > 0 {
			is, js, vs = append(is, i), append(js, i-1), append(vs, d+off)
		}
		is, js, vs = append(is, i), append(js, i), append(vs, -2*d)
		if i+1 < m {
			is, js, vs = append(is, i), append(js, i+1), append(vs, d-off)
		}
	}
	return linop.NewCSRFromTriplets(m, m, is, js, vs)
}

// Op1D returns the 1-D heat (conv false) or conv-diff operator on N points
// and its initial vector.
func Op1D(n int, conv bool) (*linop.CSR, []float64) {
	c := 0.0
	if conv {
		c = ConvX
	}
	h := 1 / float64(n+1)
	u0 := make([]float64, n)
	for i := range u0 {
		x := float64(i+1) * h
		u0[i] = math.Sin(math.Pi*x) + x
	}
	return Tridiag(n, c), u0
}

// Op2D returns the 2-D heat or conv-diff operator on m×m points as a
// Kronecker sum (the form a grid builds) and its initial vector.
func Op2D(m int, conv bool) (*linop.KronSum, []float64) {
	cx, cy := 0.0, 0.0
	if conv {
		cx, cy = ConvX, ConvY
	}
	h := 1 / float64(m+1)
	u0 := make([]float64, m*m)
	for ix := 0; ix < m; ix++ {
		x := float64(ix+1) * h
		for iy := 0; iy < m; iy++ {
			y := float64(iy+1) * h
			u0[ix*m+iy] = math.Sin(math.Pi*x)*math.Sin(2*math.Pi*y) + x*y
		}
	}
	return linop.NewKronSum(Tridiag(m, cx), Tridiag(m, cy)), u0
}

// DenseMatrix is the n×n test matrix of the dense exponential and spectrum.
func DenseMatrix(n int) *mat.Dense {
	a := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			w := 1.0
			if j > i {
				w = 2
			}
			a.Set(i, j, 4*math.Sin(0.7*float64(i)+0.013*float64(j*j)+1)*w/math.Sqrt(float64(n)))
		}
	}
	return a
}

// Grcar returns the Grcar matrix of order n, a standard test matrix of
// non-normal behaviour (Grcar 1989; Trefethen & Embree 2005).
func Grcar(n int) *mat.Dense {
	a := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		if i > 0 {
			a.Set(i, i-1, -1)
		}
		for j := i; j <= i+3 && j < n; j++ {
			a.Set(i, j, 1)
		}
	}
	return a
}

// AdvDiff returns the variable-coefficient advection–diffusion operator
// κ·Δ_h − β·D_x on m^dim interior points of (0, 1)^dim (dim 2 or 3,
// h = 1/(m+1), index (ix·m + iy)·m + iz) as an assembled sparse matrix, with
// no Kronecker structure: κ = 1 + ½ sin(2πx) sin(πy) (times sin(πz) in 3-D),
// β = 20(1 + y), Δ_h the (2·dim+1)-point Laplacian and D_x the central
// difference, Dirichlet ends. Its initial vector is
// sin(πx) sin(2πy) (sin(3πz)) + xy(z).
func AdvDiff(m, dim int) (*linop.CSR, []float64) {
	h := 1 / float64(m+1)
	n := 1
	for d := 0; d < dim; d++ {
		n *= m
	}
	is := make([]int, 0, (2*dim+1)*n)
	js := make([]int, 0, (2*dim+1)*n)
	vs := make([]float64, 0, (2*dim+1)*n)
	u0 := make([]float64, n)
	stride := []int{m, 1}
	if dim == 3 {
		stride = []int{m * m, m, 1}
	}
	idx := make([]int, dim)
	for i := 0; i < n; i++ {
		r := i
		for d := 0; d < dim; d++ {
			idx[d] = r / stride[d]
			r %= stride[d]
		}
		x, y := float64(idx[0]+1)*h, float64(idx[1]+1)*h
		kappa := 1 + 0.5*math.Sin(2*math.Pi*x)*math.Sin(math.Pi*y)
		u0[i] = math.Sin(math.Pi*x)*math.Sin(2*math.Pi*y) + x*y
		if dim == 3 {
			z := float64(idx[2]+1) * h
			kappa = 1 + 0.5*math.Sin(2*math.Pi*x)*math.Sin(math.Pi*y)*math.Sin(math.Pi*z)
			u0[i] = math.Sin(math.Pi*x)*math.Sin(2*math.Pi*y)*math.Sin(3*math.Pi*z) + x*y*z
		}
		beta := 20 * (1 + y)
		is, js, vs = append(is, i), append(js, i), append(vs, -2*float64(dim)*kappa/(h*h))
		for d := 0; d < dim; d++ {
			for _, s := range []int{-1, 1} {
				if idx[d]+s < 0 || idx[d]+s >= m {
					continue
				}
				v := kappa / (h * h)
				if d == 0 {
					v -= float64(s) * beta / (2 * h)
				}
				is, js, vs = append(is, i), append(js, i+s*stride[d]), append(vs, v)
			}
		}
	}
	return linop.NewCSRFromTriplets(n, n, is, js, vs), u0
}

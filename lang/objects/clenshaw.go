package objects

import (
	"math"

	"semiflow/numerics/grid"
)

// clenshawCurtis returns the Clenshaw–Curtis weights of the interior
// Chebyshev points x_1..x_{N−1} on [A, B]: Σ w_j f(x_j) = ∫ p dx for the
// interpolant p of degree N of f with f(x_0) = f(x_N) = 0 (Clenshaw &
// Curtis, Numer. Math. 1960; Trefethen, SIAM Review 2008).
func clenshawCurtis(c *grid.Chebyshev) []float64 {
	n := c.N
	w := make([]float64, n+1)
	scale := (c.B - c.A) / 2
	for j := 1; j < n; j++ {
		theta := float64(j) * math.Pi / float64(n)
		v := 1.0
		if n%2 == 0 {
			for k := 1; k < n/2; k++ {
				v -= 2 * math.Cos(2*float64(k)*theta) / float64(4*k*k-1)
			}
			v -= math.Cos(float64(n)*theta) / float64(n*n-1)
		} else {
			for k := 1; k <= (n-1)/2; k++ {
				v -= 2 * math.Cos(2*float64(k)*theta) / float64(4*k*k-1)
			}
		}
		w[j] = 2 * v / float64(n) * scale
	}
	return w[1:n]
}

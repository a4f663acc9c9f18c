package linop

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// The norms of X ⊕ Y from the factors agree with ‖·‖₁ and ‖·‖∞ of the
// assembled matrix X ⊗ I + I ⊗ Y (reference: the definition, evaluated by
// gonum's mat.Norm on the dense Kronecker sum). Diagonals of both signs
// make |X_ii + Y_jj| differ from |X_ii| + |Y_jj|.
func TestKronSumNormFromFactors(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	for trial := 0; trial < 20; trial++ {
		nx, ny := 1+rng.IntN(5), 1+rng.IntN(5)
		x := mat.NewDense(nx, nx, nil)
		y := mat.NewDense(ny, ny, nil)
		for i := 0; i < nx; i++ {
			for j := 0; j < nx; j++ {
				x.Set(i, j, rng.NormFloat64())
			}
		}
		for i := 0; i < ny; i++ {
			for j := 0; j < ny; j++ {
				if rng.IntN(2) == 0 || i == j {
					y.Set(i, j, rng.NormFloat64())
				}
			}
		}
		k := NewKronSum(NewDense(x), CSRFromDense(y, 0))
		n := nx * ny
		full := mat.NewDense(n, n, nil)
		for ix := 0; ix < nx; ix++ {
			for iy := 0; iy < ny; iy++ {
				for jx := 0; jx < nx; jx++ {
					for jy := 0; jy < ny; jy++ {
						v := 0.0
						if iy == jy {
							v += x.At(ix, jx)
						}
						if ix == jx {
							v += y.At(iy, jy)
						}
						full.Set(ix*ny+iy, jx*ny+jy, v)
					}
				}
			}
		}
		for _, inf := range []bool{true, false} {
			got, ok := norm(k, inf)
			p := 1.0
			if inf {
				p = math.Inf(1)
			}
			want := mat.Norm(full, p)
			if !ok || math.Abs(got-want) > 1e-13*want {
				t.Fatalf("trial %d (%d⊕%d), inf=%v: got %v (ok %v), want %v", trial, nx, ny, inf, got, ok, want)
			}
		}
	}
}

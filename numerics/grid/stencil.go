package grid

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// Weights returns finite-difference weights w for the m-th derivative at 0
// from values at the offsets s_j (in units of the grid spacing h):
//
//	h^m u^(m)(0) ≈ Σ_j w_j u(s_j h),
//
// exact for polynomials of degree below len(offsets). If slope is true an
// extra last weight c multiplies h u'(0) (a Hermite formula using the
// derivative at 0, as for Neumann and Robin ends), and the formula is exact
// for one degree more. Weights panics if the offsets are not distinct or
// m is not below the number of conditions.
func Weights(offsets []float64, m int, slope bool) []float64 {
	k := len(offsets)
	if slope {
		k++
	}
	if m < 0 || m >= k {
		panic(fmt.Sprintf("grid: derivative %d from %d conditions", m, k))
	}
	// Row p: Σ_j w_j s_j^p (+ c·p·0^{p−1}) = m! δ_pm.
	v := mat.NewDense(k, k, nil)
	rhs := mat.NewVecDense(k, nil)
	for p := 0; p < k; p++ {
		for j, s := range offsets {
			v.Set(p, j, math.Pow(s, float64(p)))
		}
		if slope && p == 1 {
			v.Set(p, k-1, 1)
		}
	}
	rhs.SetVec(m, factorial(m))
	var w mat.VecDense
	if err := w.SolveVec(v, rhs); err != nil {
		panic(fmt.Sprintf("grid: degenerate stencil %v: %v", offsets, err))
	}
	out := w.RawVector().Data
	// Weights that vanish in exact arithmetic come out as rounding noise.
	var big float64
	for _, x := range out {
		big = math.Max(big, math.Abs(x))
	}
	for i, x := range out {
		if math.Abs(x) < 1e-13*big {
			out[i] = 0
		}
	}
	return out
}

func factorial(m int) float64 {
	f := 1.0
	for i := 2; i <= m; i++ {
		f *= float64(i)
	}
	return f
}

func offsets(lo, hi, at int) []float64 {
	s := make([]float64, 0, hi-lo+1)
	for j := lo; j <= hi; j++ {
		s = append(s, float64(j-at))
	}
	return s
}

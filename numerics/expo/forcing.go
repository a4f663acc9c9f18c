package expo

import (
	"context"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// Forcing is the source term f(t) of u' = Au + f(t). Exactly one of the
// fields should be set; Poly takes precedence over Const, Const over Func.
type Forcing struct {
	// Const is a constant forcing f(t) = Const.
	Const []float64
	// Poly is a polynomial forcing f(t) = Σ_j Poly[j]·t^j/j!.
	Poly [][]float64
	// Func is a general forcing; it sets dst = f(t).
	Func func(t float64, dst []float64)
	// Degree is the interpolation degree used for Func on each piece
	// (default 6); Pieces is the number of pieces each stretch between
	// stopping times starts with (default 1); pieces are halved until the
	// interpolation error fits the tolerance.
	Degree, Pieces int
	// Breaks are times where Func may jump (a source switched on or off).
	// No piece straddles one, and Func is sampled only inside pieces, so
	// each side of a jump is interpolated from its own values.
	Breaks []float64
	// Scale is the size of u that the tolerance of a Func forcing refers
	// to, when known; 0 takes the larger of ‖u‖∞ so far and ‖f‖∞ times
	// the piece's length. A forcing much larger than the solution (boundary
	// data lifted through a column of order 1/h²) makes that guess too
	// large; PropagateForced then runs once more with Scale set to the
	// largest ‖u‖∞ of the first run.
	Scale float64
}

// augmented is the operator [A, W; 0, J] of order n+p acting on [u; y],
// with y_0' = 0 and y_j' = y_{j−1}, so that y_j(t) = t^j/j! from
// y(0) = e_0 and u' = Au + Σ_j w_j t^j/j! (Al-Mohy & Higham, SIAM J. Sci.
// Comput. 2011, Theorem 2.1, with the polynomial written in this basis).
//
// With h > 0 the basis is scaled to the piece [0, h]: y_j' = y_{j−1}/h,
// so y_j(τ) = (τ/h)^j/j! and w_j = j!·c_j for the monomial coefficients
// c_j in s = τ/h. Then ‖W‖ stays the size of f however short the piece,
// and ‖hJ‖ = 1: the unscaled basis would need w_j ∝ h^{−j}, which on
// pieces of length 1e-12 (around a jump) overflows the error estimates.
type augmented struct {
	a linop.Operator
	w [][]float64
	h float64
}

// sub is the entry (j, j−1) of J.
func (g *augmented) sub(j int) float64 {
	if g.h > 0 {
		return 1 / g.h
	}
	return 1
}

func (g *augmented) Dims() (r, c int) {
	n, _ := g.a.Dims()
	return n + len(g.w), n + len(g.w)
}

func (g *augmented) Apply(dst, x []float64) {
	n, _ := g.a.Dims()
	p := len(g.w)
	if len(dst) != n+p || len(x) != n+p {
		panic(ErrShape)
	}
	g.a.Apply(dst[:n], x[:n])
	for j, w := range g.w {
		if y := x[n+j]; y != 0 {
			for i, v := range w {
				dst[i] += y * v
			}
		}
	}
	dst[n] = 0
	for j := 1; j < p; j++ {
		dst[n+j] = g.sub(j) * x[n+j-1]
	}
}

func (g *augmented) ApplyT(dst, x []float64) {
	n, _ := g.a.Dims()
	p := len(g.w)
	if len(dst) != n+p || len(x) != n+p {
		panic(ErrShape)
	}
	g.a.ApplyT(dst[:n], x[:n])
	for j, w := range g.w {
		s := 0.0
		for i, v := range w {
			s += v * x[i]
		}
		if j+1 < p {
			s += g.sub(j+1) * x[n+j+1]
		}
		dst[n+j] = s
	}
}

// ToDense returns the dense matrix of the augmented operator.
func (g *augmented) ToDense() (*mat.Dense, error) {
	n, _ := g.a.Dims()
	p := len(g.w)
	a, err := toDense(g.a)
	if err != nil {
		return nil, err
	}
	m := mat.NewDense(n+p, n+p, nil)
	m.Slice(0, n, 0, n).(*mat.Dense).Copy(a)
	for j, w := range g.w {
		for i, v := range w {
			m.Set(i, n+j, v)
		}
		if j > 0 {
			m.Set(n+j, n+j-1, g.sub(j))
		}
	}
	return m, nil
}

// PropagateForced computes the solution of u' = Au + f(t), u(0) = u0,
//
//	u(t) = e^{tA}u0 + ∫_0^t e^{(t−s)A} f(s) ds,
//
// at the given times. A polynomial (or constant) forcing is exact: the
// augmented system of order n+p (see Al-Mohy & Higham 2011, Theorem 2.1)
// gives u(t) = e^{tA}u0 + Σ_j t^{j+1}φ_{j+1}(tA)w_j, propagated by any
// method of Propagate. A general Func is interpolated on each piece by a
// polynomial at Chebyshev points and the piece is then exact; pieces are
// halved until the interpolation error fits the tolerance, never straddle
// f.Breaks, and a jump found elsewhere is named in Reason (see
// forcing_pieces.go). Errors made on one piece are carried to later times
// with a bound M on sup‖e^{sA}‖∞ (growthBound; 1 when A is diagonally
// dominant with a nonpositive diagonal), named in Reason when above 1. The tolerance is
// relative to the largest ‖u‖∞ met (TolMet, Shortfall); with
// opts.Crosscheck a Func forcing is solved again by the IMEX scheme of
// crossSemilinear.
//
// It panics with ErrShape on mismatched sizes and returns Propagate's errors.
func PropagateForced(ctx context.Context, A linop.Operator, u0 []float64, f Forcing, times []float64, opts Options) (*Solution, error) {
	n, c := A.Dims()
	if n != c || len(u0) != n {
		panic(ErrShape)
	}
	poly := f.Poly
	if poly == nil && f.Const != nil {
		poly = [][]float64{f.Const}
	}
	for _, w := range poly {
		if len(w) != n {
			panic(ErrShape)
		}
	}
	if poly != nil {
		// The scaled coefficients and the augmented vector, through the
		// memory guard.
		if err := memguard.Vectors(len(poly)+2, n, memguard.RealBytes, "polynomial forcing coefficients"); err != nil {
			return nil, err
		}
		// y_0 = β with W/β: the methods' tolerance is relative to ‖[u; y]‖,
		// so β = 1 serves when u is of size 1 or more; when u stays ten
		// times smaller (a damped response to the forcing), the run is
		// repeated with β = max‖u‖ found, which balances the two.
		run := func(beta float64) (*Solution, float64, error) {
			w := make([][]float64, len(poly))
			for j, pj := range poly {
				w[j] = make([]float64, n)
				for i, v := range pj {
					w[j][i] = v / beta
				}
			}
			x0 := make([]float64, n+len(poly))
			copy(x0, u0)
			x0[n] = beta
			s, err := Propagate(ctx, &augmented{a: A, w: w}, x0, times, opts)
			if err != nil {
				return nil, 0, err
			}
			scale := normInf(u0)
			for i := range s.Values {
				s.Values[i] = s.Values[i][:n]
				scale = math.Max(scale, normInf(s.Values[i]))
			}
			s.checkTolMaxU(scale)
			return s, scale, nil
		}
		s, scale, err := run(1)
		if err != nil {
			return nil, err
		}
		if scale > 0 && scale < 0.1*math.Max(1, normInf(u0)) {
			if s2, _, err := run(scale); err == nil && s2.MaxErrEst() < s.MaxErrEst() {
				s = s2
			}
		}
		s.Reason = fmt.Sprintf("polynomial forcing of degree %d, exact through the augmented operator of order %d; %s", len(poly)-1, n+len(poly), s.Reason)
		if s.Cross != nil {
			s.Cross.Method += " (augmented)"
		}
		return s, nil
	}
	if f.Func == nil {
		return Propagate(ctx, A, u0, times, opts)
	}
	return forcedFunc(ctx, A, u0, f, times, opts)
}

// forcedFunc: see forcing_pieces.go.

func maxAbsDiff(x, y []float64) float64 {
	m := 0.0
	for i := range x {
		m = math.Max(m, math.Abs(x[i]-y[i]))
	}
	return m
}

// sortedOrder returns the indices of times in increasing order of time.
func sortedOrder(times []float64) []int {
	order := make([]int, len(times))
	for i := range order {
		order[i] = i
	}
	for i := 1; i < len(order); i++ {
		for j := i; j > 0 && times[order[j]] < times[order[j-1]]; j-- {
			order[j], order[j-1] = order[j-1], order[j]
		}
	}
	return order
}

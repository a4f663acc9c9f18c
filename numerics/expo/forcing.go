package expo

import (
	"context"
	"fmt"
	"math"
	"time"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
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
	// (default 6); Pieces is the number of pieces per output interval
	// (default 4).
	Degree, Pieces int
}

// augmented is the operator [A, W; 0, J] of order n+p acting on [u; y],
// with y_0' = 0 and y_j' = y_{j−1}, so that y_j(t) = t^j/j! from
// y(0) = e_0 and u' = Au + Σ_j w_j t^j/j! (Al-Mohy & Higham, SIAM J. Sci.
// Comput. 2011, Theorem 2.1, with the polynomial written in this basis).
type augmented struct {
	a linop.Operator
	w [][]float64
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
		dst[n+j] = x[n+j-1]
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
			s += x[n+j+1]
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
			m.Set(n+j, n+j-1, 1)
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
// polynomial at Chebyshev points and the piece is then exact; the
// interpolation error δ, measured at the midpoints between nodes, adds
// 2·δ·(piece length) to the error estimate, which assumes ‖e^{sA}‖ ≤ 1
// (multiply by the growth bound otherwise).
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
		aug := &augmented{a: A, w: poly}
		x0 := make([]float64, n+len(poly))
		copy(x0, u0)
		x0[n] = 1
		s, err := Propagate(ctx, aug, x0, times, opts)
		if err != nil {
			return nil, err
		}
		for i := range s.Values {
			s.Values[i] = s.Values[i][:n]
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

// forcedFunc handles a general forcing by piecewise polynomial interpolation.
func forcedFunc(ctx context.Context, A linop.Operator, u0 []float64, f Forcing, times []float64, opts Options) (*Solution, error) {
	start := time.Now()
	n := len(u0)
	q := f.Degree
	if q <= 0 {
		q = 6
	}
	pieces := f.Pieces
	if pieces <= 0 {
		pieces = 4
	}
	for _, t := range times {
		if t < 0 || math.IsNaN(t) || math.IsInf(t, 0) {
			return nil, fmt.Errorf("expo: output time %v: times must be finite and nonnegative", t)
		}
	}
	order := sortedOrder(times)
	out := &Solution{Times: append([]float64(nil), times...), Values: make([][]float64, len(times)), ErrEst: make([]float64, len(times)), Tol: opts.Tol}
	u := append([]float64(nil), u0...)
	errAcc := 0.0
	prev := 0.0
	// Chebyshev points of the second kind on [0, 1] and the Vandermonde
	// matrix in s = τ/H, factored once.
	nodes := make([]float64, q+1)
	for i := range nodes {
		nodes[i] = (1 - math.Cos(math.Pi*float64(i)/float64(q))) / 2
	}
	V := mat.NewDense(q+1, q+1, nil)
	for i, s := range nodes {
		p := 1.0
		for j := 0; j <= q; j++ {
			V.Set(i, j, p)
			p *= s
		}
	}
	var lu mat.LU
	lu.Factorize(V)
	fv := make([]float64, n)
	o := opts
	o.Crosscheck = false
	o.Progress = nil
	for done, k := range order {
		t := times[k]
		for piece := 0; piece < pieces && t > prev; piece++ {
			ta := prev + (t-prev)*float64(piece)/float64(pieces)
			tb := prev + (t-prev)*float64(piece+1)/float64(pieces)
			if piece == pieces-1 {
				tb = t
			}
			H := tb - ta
			F := mat.NewDense(q+1, n, nil)
			for i, s := range nodes {
				f.Func(ta+s*H, fv)
				F.SetRow(i, fv)
			}
			var C mat.Dense // monomial coefficients in s, one row per power
			if err := lu.SolveTo(&C, false, F); err != nil {
				if _, ok := err.(mat.Condition); !ok {
					return nil, err
				}
			}
			// Interpolation error at the midpoints between nodes.
			delta := 0.0
			for i := 0; i < q; i++ {
				s := (nodes[i] + nodes[i+1]) / 2
				f.Func(ta+s*H, fv)
				p := 1.0
				val := make([]float64, n)
				for j := 0; j <= q; j++ {
					for r := 0; r < n; r++ {
						val[r] += C.At(j, r) * p
					}
					p *= s
				}
				delta = math.Max(delta, maxAbsDiff(val, fv))
			}
			// Σ_j c_j s^j = Σ_j w_j τ^j/j! with w_j = c_j j!/H^j.
			w := make([][]float64, q+1)
			fact := 1.0
			for j := 0; j <= q; j++ {
				if j > 0 {
					fact *= float64(j)
				}
				w[j] = make([]float64, n)
				sc := fact / math.Pow(H, float64(j))
				for r := 0; r < n; r++ {
					w[j][r] = C.At(j, r) * sc
				}
			}
			aug := &augmented{a: A, w: w}
			x0 := make([]float64, n+q+1)
			copy(x0, u)
			x0[n] = 1
			s, err := Propagate(ctx, aug, x0, []float64{H}, o)
			if err != nil {
				return nil, err
			}
			copy(u, s.Values[0][:n])
			errAcc += s.ErrEst[0] + 2*delta*H
			out.MatVecs += s.MatVecs
			out.Solves += s.Solves
			out.Factors += s.Factors
			out.Method = s.Method
			out.Reason = fmt.Sprintf("general forcing: degree-%d Chebyshev interpolation on %d pieces per interval, each exact through the augmented operator; %s", q, pieces, s.Reason)
		}
		prev = t
		out.Values[k] = append([]float64(nil), u...)
		out.ErrEst[k] = errAcc
		if opts.Progress != nil {
			opts.Progress(done+1, len(times))
		}
	}
	if out.Method == "" {
		out.Method, out.Reason = "none", "all output times are 0"
	}
	out.Elapsed = time.Since(start)
	return out, nil
}

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

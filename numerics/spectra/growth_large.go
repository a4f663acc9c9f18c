package spectra

import (
	"context"
	"fmt"
	"math"

	"semiflow/numerics/expo"
	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// transposeOp is Aᵀ as an operator.
type transposeOp struct{ a linop.Operator }

func (t transposeOp) Dims() (int, int)        { c, r := t.a.Dims(); return r, c }
func (t transposeOp) Apply(dst, x []float64)  { t.a.ApplyT(dst, x) }
func (t transposeOp) ApplyT(dst, x []float64) { t.a.Apply(dst, x) }

// GrowthEstimate estimates ‖e^{tA}‖₂ at each time for a large operator A
// by the Lanczos process on the symmetric positive semidefinite
// B = e^{tA}ᵀe^{tA} = e^{tAᵀ}e^{tA} (a Krylov-accelerated power iteration),
// ‖e^{tA}‖₂ ≈ √θ with θ the largest Ritz value; each product with B is two
// actions computed by expo.Propagate (its automatic choice) at tolerance tol (0 means 1e-8). Each
// time starts from the previous time's Ritz vector. iters bounds the
// Lanczos steps per time (0 means 20). Every estimate is a LOWER bound of
// ‖e^{tA}‖₂ up to the propagation error (Ritz values increase to λmax(B)).
// Kreiss and α_ε bounds are not computed (they need dense methods). It
// panics with ErrShape if A is not square and with ErrOption for a
// negative time or no times.
func GrowthEstimate(ctx context.Context, a linop.Operator, times []float64, iters int, tol float64, progress func(done, total int)) (*Growth, error) {
	n, c := a.Dims()
	if n != c {
		panic(ErrShape)
	}
	if len(times) == 0 || iters < 0 {
		panic(ErrOption)
	}
	for _, t := range times {
		if !(t >= 0) {
			panic(ErrOption)
		}
	}
	if iters == 0 {
		iters = 20
	}
	if tol <= 0 {
		tol = 1e-8
	}
	// Work vectors of order n, through the memory guard first: the start,
	// one Ritz vector per time and the Lanczos basis (the propagations ask
	// for their own).
	if err := memguard.Vectors(len(times)+iters+2+linop.Scratch(a), n, memguard.RealBytes, "growth-estimate work vectors"); err != nil {
		return nil, err
	}
	v := make([]float64, n)
	xorshiftFill(v, 521288629)
	normalise(v)
	at := transposeOp{a}
	g := &Growth{T: append([]float64(nil), times...), Norm: make([]float64, len(times))}
	var worstChange float64
	best := 0
	vecs := make([][]float64, len(times))
	for k, t := range times {
		if t == 0 {
			g.Norm[k] = 1
			vecs[k] = append([]float64(nil), v...)
			continue
		}
		// Lanczos on B = e^{tAᵀ}e^{tA} with full reorthogonalisation.
		q := [][]float64{append([]float64(nil), v...)}
		var alpha, beta []float64
		est, prev := 0.0, 0.0
		var s []float64
		for it := 0; it < iters; it++ {
			if err := ctx.Err(); err != nil {
				return nil, err
			}
			s1, err := expo.Propagate(ctx, a, q[it], []float64{t}, expo.Options{Tol: tol})
			if err != nil {
				return nil, err
			}
			s2, err := expo.Propagate(ctx, at, s1.Values[0], []float64{t}, expo.Options{Tol: tol})
			if err != nil {
				return nil, err
			}
			w := s2.Values[0]
			alpha = append(alpha, floatsDot(q[it], w))
			for pass := 0; pass < 2; pass++ {
				for _, qj := range q {
					floatsAxpy(w, -floatsDot(qj, w), qj)
				}
			}
			var theta float64
			theta, _, s = tridiagTop(alpha, beta)
			est = math.Sqrt(math.Max(theta, 0))
			b := math.Sqrt(floatsDot(w, w))
			if (it > 0 && math.Abs(est-prev) <= 1e-12*est) || b <= 1e-14*theta || it == iters-1 {
				if it == iters-1 {
					worstChange = math.Max(worstChange, math.Abs(est-prev)/est)
				}
				break
			}
			prev = est
			beta = append(beta, b)
			for i := range w {
				w[i] /= b
			}
			q = append(q, w)
		}
		// Ritz vector as the next start.
		for i := range v {
			v[i] = 0
		}
		for j := range s {
			floatsAxpy(v, s[j], q[j])
		}
		normalise(v)
		g.Norm[k] = est
		vecs[k] = append([]float64(nil), v...)
		if est > g.Norm[best] {
			best = k
		}
		if progress != nil {
			progress(k+1, len(times))
		}
	}
	g.Peak, g.PeakTime, g.Initial = g.Norm[best], times[best], vecs[best]
	g.InitialSlope, g.Abscissa = math.NaN(), math.NaN()
	g.Method = fmt.Sprintf("Lanczos on e^{tAᵀ}e^{tA} (≤ %d steps per time, warm-started from the previous Ritz vector), each action e^{tA}v by the automatically chosen propagation method (Kronecker, Taylor or shift-and-invert Krylov, by structure and stiffness) at tolerance %.0e", iters, tol)
	g.Accuracy = fmt.Sprintf("lower estimates of ‖e^{tA}‖₂ (Ritz values); last-step relative change ≤ %.1e; propagation error ≲ %.0e relative", worstChange, tol)
	return g, nil
}

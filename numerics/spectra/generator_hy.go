package spectra

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/lapack/gonum"
	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/memguard"
)

// The Hille–Yosida samples need ‖R(λ)^p‖₂, R(λ) = (λI − A)⁻¹, for p = 1..4
// at some 40 real λ. Forming R(λ) and its powers densely and taking their
// SVDs costs about 60n³ flops per λ (53 s for the 500-state graded chain of
// the tests). Instead A is reduced once to upper Hessenberg form
// H = QᵀAQ (Q orthogonal, so every 2-norm is unchanged); λI − H is
// factored in O(n²) per λ, and ‖R^p‖₂ is the largest singular value of
// R^p, found by Golub–Kahan–Lanczos bidiagonalisation, whose steps apply
// R^p and its transpose by p triangular solves each: O(p·n²) per step.

// hessLU holds the LU factorisation with partial pivoting of λI − H for an
// upper Hessenberg H: U (row-major, upper triangular), the multipliers l_k
// of the single subdiagonal and whether rows k and k+1 were swapped.
type hessLU struct {
	n    int
	u    []float64
	l    []float64
	swap []bool
}

func newHessLU(n int) *hessLU {
	return &hessLU{n: n, u: make([]float64, n*n), l: make([]float64, max(n-1, 0)), swap: make([]bool, max(n-1, 0))}
}

// factor factors λI − H (h row-major upper Hessenberg) and reports
// whether U has no zero pivot.
func (f *hessLU) factor(h []float64, lam float64) bool {
	n, u := f.n, f.u
	for i := 0; i < n; i++ {
		row := u[i*n : (i+1)*n]
		for j := range row {
			row[j] = -h[i*n+j]
		}
		row[i] += lam
	}
	for k := 0; k+1 < n; k++ {
		rk, rk1 := u[k*n:(k+1)*n], u[(k+1)*n:(k+2)*n]
		f.swap[k] = math.Abs(rk1[k]) > math.Abs(rk[k])
		if f.swap[k] {
			for j := k; j < n; j++ {
				rk[j], rk1[j] = rk1[j], rk[j]
			}
		}
		if rk[k] == 0 {
			return false
		}
		m := rk1[k] / rk[k]
		f.l[k] = m
		rk1[k] = 0
		for j := k + 1; j < n; j++ {
			rk1[j] -= m * rk[j]
		}
	}
	return n == 0 || u[n*n-1] != 0
}

// solve sets x = (λI − H)⁻¹x.
func (f *hessLU) solve(x []float64) {
	n, u := f.n, f.u
	for k := 0; k+1 < n; k++ {
		if f.swap[k] {
			x[k], x[k+1] = x[k+1], x[k]
		}
		x[k+1] -= f.l[k] * x[k]
	}
	for i := n - 1; i >= 0; i-- {
		s := x[i]
		row := u[i*n+i+1 : (i+1)*n]
		xs := x[i+1 : n]
		for j, v := range row {
			s -= v * xs[j]
		}
		x[i] = s / u[i*n+i]
	}
}

// solveT sets x = (λI − H)⁻ᵀx: with M_k P_k … M_0 P_0 (λI − H) = U, the
// transpose is solved by Uᵀ first, then M_kᵀ and P_k in reverse order.
func (f *hessLU) solveT(x []float64) {
	n, u := f.n, f.u
	for i := 0; i < n; i++ { // Uᵀ y = x, column-oriented
		x[i] /= u[i*n+i]
		xi := x[i]
		row := u[i*n+i+1 : (i+1)*n]
		xs := x[i+1 : n]
		for j, v := range row {
			xs[j] -= v * xi
		}
	}
	for k := n - 2; k >= 0; k-- {
		x[k] -= f.l[k] * x[k+1]
		if f.swap[k] {
			x[k], x[k+1] = x[k+1], x[k]
		}
	}
}

// hessenbergOf returns the upper Hessenberg form H = QᵀmQ of the square m
// (row-major, below the subdiagonal zeroed), by LAPACK's Dgehrd through
// gonum; it asks the memory guard for the copy and runs abandonably
// (Dgehrd cannot be interrupted).
func hessenbergOf(ctx context.Context, m *mat.Dense) ([]float64, error) {
	n, _ := m.Dims()
	if err := memguard.DenseReal(n, n); err != nil {
		return nil, err
	}
	return abandonable(ctx, denseBytes(n, 1), fmt.Sprintf("Hessenberg form of order %d", n), func() ([]float64, error) {
		h := make([]float64, n*n)
		for i := 0; i < n; i++ {
			copy(h[i*n:(i+1)*n], m.RawRowView(i))
		}
		if n < 3 {
			return h, nil
		}
		impl := gonum.Implementation{}
		tau := make([]float64, n-1)
		work := make([]float64, 1)
		impl.Dgehrd(n, 0, n-1, h, n, tau, work, -1)
		work = make([]float64, int(work[0]))
		impl.Dgehrd(n, 0, n-1, h, n, tau, work, len(work))
		for i := 2; i < n; i++ {
			for j := 0; j < i-1; j++ {
				h[i*n+j] = 0
			}
		}
		return h, nil
	})
}

// HYInteractiveWork is the default work budget of the Hille–Yosida samples
// (GeneratorOptions.Work) for interactive use: 1.6e9 real multiply–adds
// of triangular solves, about 2 s of one core at the 8e8 per second
// measured on the development machine (Grcar matrices of order 100 and
// 400, Lanczos overhead included). Order 400 fits nearly all 40 samples.
const HYInteractiveWork = 1.6e9

// lanczosNormSteps is the most Golub–Kahan–Lanczos steps normLanczos
// takes; lanczosNormTol the relative change of the estimate at which it
// stops (twice in a row). Where the singular values cluster (λ far from
// the spectrum, all of them near 1/λ) the estimate creeps up slowly but
// is already within the cluster's width of ‖M‖₂.
const (
	lanczosNormSteps = 40
	lanczosNormTol   = 1e-8
)

// normLanczos returns an estimate of ‖M‖₂ for the n×n operator M given by
// apply (x ← Mx) and applyT (x ← Mᵀx): the largest singular value of the
// bidiagonal B_k of k Golub–Kahan–Lanczos steps with full
// reorthogonalisation (Golub & Kahan 1965). σ_max(B_k) increases with k
// toward ‖M‖₂ and never exceeds it; the loop stops when it changed by less
// than lanczosNormTol relative in two successive steps, when the Krylov
// space is invariant (then it is exact), after min(n, lanczosNormSteps)
// steps, or when ctx is done. It returns the number of steps (each one
// apply and one applyT) and whether the estimate settled.
func normLanczos(ctx context.Context, n int, apply, applyT func([]float64)) (est float64, steps int, settled bool, err error) {
	if n == 0 {
		return 0, 0, true, nil
	}
	rng := rand.New(rand.NewPCG(1, 2))
	v := make([]float64, n)
	for i := range v {
		v[i] = rng.NormFloat64()
	}
	scaleTo1(v)
	var vs, us [][]float64
	var alpha, beta []float64
	u := append([]float64(nil), v...)
	apply(u)
	a := scaleTo1(u)
	vs, us, alpha = append(vs, v), append(us, u), append(alpha, a)
	est = a
	if a == 0 {
		return 0, 1, true, nil
	}
	calm := 0
	kmax := min(n, lanczosNormSteps)
	for k := 1; k < kmax; k++ {
		if err := ctx.Err(); err != nil {
			return est, k, false, err
		}
		// r = Mᵀu_k − α_k v_k, orthogonal to every v.
		r := append([]float64(nil), us[k-1]...)
		applyT(r)
		axpy(-alpha[k-1], vs[k-1], r)
		reorth(r, vs)
		b := scaleTo1(r)
		if b <= 1e-14*est {
			return est, k, true, nil // invariant: B_k's σ_max is ‖M‖₂
		}
		// p = M v_{k+1} − β_k u_k, orthogonal to every u.
		p := append([]float64(nil), r...)
		apply(p)
		axpy(-b, us[k-1], p)
		reorth(p, us)
		a := scaleTo1(p)
		vs, us = append(vs, r), append(us, p)
		alpha, beta = append(alpha, a), append(beta, b)
		next := bidiagMax(alpha, beta)
		if math.Abs(next-est) <= lanczosNormTol*next {
			calm++
		} else {
			calm = 0
		}
		est = math.Max(est, next)
		if calm >= 2 || a <= 1e-14*est {
			return est, k + 1, true, nil
		}
	}
	return est, kmax, kmax == n, nil
}

// bidiagMax returns the largest singular value of the upper bidiagonal
// with diagonal a and superdiagonal b (len(b) = len(a) − 1), by dqds.
func bidiagMax(a, b []float64) float64 {
	d := append([]float64(nil), a...)
	e := append(append([]float64(nil), b...), 0)
	if (gonum.Implementation{}).Dlasq1(len(d), d, e, make([]float64, 4*len(d))) != 0 {
		return 0
	}
	return d[0]
}

// scaleTo1 scales x to unit norm and returns its former norm (0 leaves x).
func scaleTo1(x []float64) float64 {
	s := 0.0
	for _, v := range x {
		s = math.Hypot(s, v)
	}
	if s > 0 {
		for i := range x {
			x[i] /= s
		}
	}
	return s
}

func axpy(a float64, x, y []float64) {
	for i, v := range x {
		y[i] += a * v
	}
}

// reorth removes from r its components along the orthonormal qs, twice
// (classical Gram–Schmidt run twice is orthogonal to working precision).
func reorth(r []float64, qs [][]float64) {
	for pass := 0; pass < 2; pass++ {
		for _, q := range qs {
			d := 0.0
			for i, v := range q {
				d += v * r[i]
			}
			axpy(-d, q, r)
		}
	}
}

// resolventPowerNormsHess returns ‖R(λ)^p‖₂ for p = 1..k, R(λ) = (λI − H)⁻¹
// with H the Hessenberg form h of order n, each by normLanczos, and the
// number of triangular solves spent. f is reused between calls.
func resolventPowerNormsHess(ctx context.Context, f *hessLU, h []float64, lam float64, k int) ([]float64, int, error) {
	if !f.factor(h, lam) {
		return nil, 0, numErr("λI − A is singular at λ = %g", lam)
	}
	out := make([]float64, k)
	solves := 0
	for p := 1; p <= k; p++ {
		apply := func(x []float64) {
			for j := 0; j < p; j++ {
				f.solve(x)
			}
		}
		applyT := func(x []float64) {
			for j := 0; j < p; j++ {
				f.solveT(x)
			}
		}
		est, steps, _, err := normLanczos(ctx, f.n, apply, applyT)
		if err != nil {
			return nil, solves, err
		}
		solves += 2 * p * steps
		if math.IsInf(est, 0) || math.IsNaN(est) {
			return nil, solves, numErr("‖R(λ)^%d‖ overflows at λ = %g: λ is within rounding of an eigenvalue", p, lam)
		}
		out[p-1] = est
	}
	return out, solves, nil
}

package expo

import (
	"context"
	"math"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// denseExpErr is the error estimate used for a computed E ≈ e^{hA} of order
// n: a backward error of order u in hA maps to a forward error of about
// u·(n + ‖hA‖₁)·‖E‖ (Higham, Functions of Matrices, SIAM 2008, §10.2), with
// a safety factor of 4.
func denseExpErr(n int, hnorm float64, E *mat.Dense) float64 {
	return 4 * unitRoundoff * (float64(n) + hnorm) * mat.Norm(E, math.Inf(1))
}

// denseRun steps u through the sorted times with dense exponentials
// e^{hA}, one per distinct step length h (a step equal to the one before
// up to rounding in the times reuses its exponential; the estimate adds
// the resulting shift of the time, |Δt|·‖A‖_∞·‖u‖_∞).
//
// Each step makes a local error δ_i ≤ ε(h)·‖u_{i−1}‖_∞ (denseExpErr), which
// later steps carry forward. The first estimate multiplies the carried
// error by ‖E‖_∞ per step; when that misses the tolerance (‖E‖_∞ > 1 for a
// non-normal A is enough: ‖E‖^k grows geometrically while ‖E^k‖ may stay
// bounded, as for a damped oscillator) it is sharpened: with equal steps
// to Σ_j ‖E^{i−j}‖_∞ δ_j from the explicit powers E^k, otherwise by
// exponentials e^{t_i A}u0 straight from u0, one per time.
func denseRun(ctx context.Context, A linop.Operator, u0 []float64, times []float64, opts Options, vals [][]float64, errs []float64) error {
	a, err := toDense(A)
	if err != nil {
		return err
	}
	n := len(u0)
	norm := mat.Norm(a, 1)
	normI := mat.Norm(a, math.Inf(1))
	cache := map[float64]*mat.Dense{}
	cacheErr := map[float64]float64{}
	expOf := func(h float64) (*mat.Dense, error) {
		if E, ok := cache[h]; ok {
			return E, nil
		}
		var ha, e mat.Dense
		ha.Scale(h, a)
		if _, err := ExpContext(ctx, &e, &ha); err != nil {
			return nil, err
		}
		cache[h], cacheErr[h] = &e, denseExpErr(n, h*norm, &e)
		return &e, nil
	}
	u := append([]float64(nil), u0...)
	w := make([]float64, n)
	local := make([]float64, len(times)) // δ_i, the error made by step i
	shift := make([]float64, len(times)) // |τ_i − t_i|·‖A‖_∞·‖u_i‖_∞
	steps := make([]int, len(times))     // steps taken up to time i
	acc, prev, tau, hLast, k := 0.0, 0.0, 0.0, 0.0, 0
	for i, t := range times {
		if err := ctx.Err(); err != nil {
			return err
		}
		h := t - prev
		prev = t
		if hLast > 0 && math.Abs(h-hLast) <= 64*unitRoundoff*t {
			h = hLast
		}
		if h > 0 {
			E, err := expOf(h)
			if err != nil {
				return err
			}
			local[i] = cacheErr[h] * normInf(u)
			gemv(E, false, w, u)
			acc = acc*mat.Norm(E, math.Inf(1)) + local[i]
			u, w = w, u
			hLast, tau, k = h, tau+h, k+1
		}
		steps[i] = k
		vals[i] = append([]float64(nil), u...)
		shift[i] = math.Abs(tau-t) * normI * normInf(u)
		errs[i] = acc + shift[i]
		if opts.Progress != nil {
			opts.Progress(i+1, len(times))
		}
	}
	worst := 0.0
	for _, e := range errs {
		worst = math.Max(worst, e)
	}
	if len(times) < 2 || worst <= opts.Tol*normInf(u0) {
		return nil
	}
	// Sharpen. Equal steps: g[k] = ‖E^k‖_∞ from the explicit powers.
	if len(cache) == 1 && k <= 4096 {
		var E *mat.Dense
		for _, e := range cache {
			E = e
		}
		g := make([]float64, k+1)
		g[0] = 1
		P, next := mat.DenseCopyOf(E), mat.NewDense(n, n, nil)
		for q := 1; q <= k; q++ {
			if q > 1 {
				if err := ctx.Err(); err != nil {
					return err
				}
				next.Mul(E, P)
				P, next = next, P
			}
			g[q] = mat.Norm(P, math.Inf(1))
		}
		for i := range times {
			e := 0.0
			for j := 0; j <= i; j++ {
				if local[j] > 0 {
					e += g[steps[i]-steps[j]] * local[j]
				}
			}
			errs[i] = math.Min(errs[i], e+shift[i])
		}
		return nil
	}
	// Different steps, few times: each time straight from u0.
	if len(times) <= 32 {
		u0n := normInf(u0)
		for i, t := range times {
			if t == 0 {
				continue
			}
			if err := ctx.Err(); err != nil {
				return err
			}
			E, err := expOf(t)
			if err != nil {
				return err
			}
			if e := cacheErr[t] * u0n; e < errs[i] {
				gemv(E, false, vals[i], u0)
				errs[i] = e
			}
		}
	}
	return nil
}

// kronFactors returns ex = e^{tX} and ey = e^{tY}, the factors of
// e^{t(X⊕Y)} = e^{tX} ⊗ e^{tY}. A factor shared by X and Y is exponentiated
// once.
func kronFactors(ctx context.Context, k *linop.KronSum, t float64) (ex, ey *mat.Dense, err error) {
	if ex, err = factorExp(ctx, k.X, t); err != nil {
		return nil, nil, err
	}
	if sameOperator(k.X, k.Y) {
		return ex, ex, nil
	}
	if ey, err = factorExp(ctx, k.Y, t); err != nil {
		return nil, nil, err
	}
	return ex, ey, nil
}

// symEigMax is the largest symmetric factor exponentiated through its
// eigen-decomposition. Above it Exp is faster: on the 1000×1000 heat factor
// gonum's EigenSym (tridiagonal QR, one core) took 4.6 s and Exp (Padé 13,
// 14–20 squarings with the packed matrix product on both cores) 1.5 s.
const symEigMax = 300

// factorExp returns e^{tX}: for symmetric X of order ≤ symEigMax through the
// eigen-decomposition X = QΛQᵀ as Q e^{tΛ} Qᵀ (Q orthogonal, so backward
// stable and free of squarings), otherwise by Exp.
func factorExp(ctx context.Context, op linop.Operator, t float64) (*mat.Dense, error) {
	x, err := toDense(op)
	if err != nil {
		return nil, err
	}
	if r, _ := x.Dims(); r <= symEigMax && isSymmetric(op) {
		n, _ := x.Dims()
		sym := mat.NewSymDense(n, nil)
		for i := 0; i < n; i++ {
			for j := i; j < n; j++ {
				sym.SetSym(i, j, x.At(i, j))
			}
		}
		var eig mat.EigenSym
		if eig.Factorize(sym, true) {
			lam := eig.Values(nil)
			var q mat.Dense
			eig.VectorsTo(&q)
			qe := mat.DenseCopyOf(&q)
			for j, l := range lam {
				col := qe.ColView(j).(*mat.VecDense)
				col.ScaleVec(math.Exp(t*l), col)
			}
			var e mat.Dense
			e.Mul(qe, q.T())
			return &e, nil
		}
	}
	x.Scale(t, x)
	var e mat.Dense
	if _, err := ExpContext(ctx, &e, x); err != nil {
		return nil, err
	}
	return &e, nil
}

// KronApply sets dst = (E ⊗ F) u = vec(E U Fᵀ), where U is the nx×ny
// matrix with U[ix][iy] = u[ix*ny+iy]. It panics with ErrShape on a size
// mismatch.
func KronApply(dst []float64, E, F mat.Matrix, u []float64) {
	nx, c := E.Dims()
	ny, d := F.Dims()
	if c != nx || d != ny || len(u) != nx*ny || len(dst) != nx*ny {
		panic(ErrShape)
	}
	U := mat.NewDense(nx, ny, u)
	out := mat.NewDense(nx, ny, dst)
	var tmp mat.Dense
	tmp.Mul(E, U)
	out.Mul(&tmp, F.T())
}

// kronRun computes e^{t(X⊕Y)}u0 = vec(e^{tX} U0 e^{tY}ᵀ) at each time.
func kronRun(ctx context.Context, k *linop.KronSum, u0 []float64, times []float64, opts Options, vals [][]float64, errs []float64) error {
	nx, _ := k.X.Dims()
	ny, _ := k.Y.Dims()
	xn := opNorm1(&counted{a: k.X})
	yn := opNorm1(&counted{a: k.Y})
	u0n := normInf(u0)
	// One nx×ny temporary and the results, through the memory guard.
	if err := memguard.Vectors(1+len(times), nx*ny, memguard.RealBytes, "Kronecker work vectors and results"); err != nil {
		return err
	}
	for i, t := range times {
		if err := ctx.Err(); err != nil {
			return err
		}
		ex, ey, err := kronFactors(ctx, k, t)
		if err != nil {
			return err
		}
		out := make([]float64, nx*ny)
		KronApply(out, ex, ey, u0)
		exn, eyn := mat.Norm(ex, math.Inf(1)), mat.Norm(ey, math.Inf(1))
		vals[i] = out
		// ‖vec(E U Fᵀ)‖_∞ ≤ ‖E‖_∞‖U‖_max‖F‖_∞; perturbations of E and F and
		// the rounding of the two products add.
		errs[i] = (denseExpErr(nx, t*xn, ex)*eyn + exn*denseExpErr(ny, t*yn, ey) +
			2*unitRoundoff*float64(nx+ny)*exn*eyn) * u0n
		if opts.Progress != nil {
			opts.Progress(i+1, len(times))
		}
	}
	return nil
}

// sameOperator reports whether x and y are the same operator: the same
// value, or sparse matrices with identical entries (a square grid's two
// factors).
func sameOperator(x, y linop.Operator) bool {
	if x == y {
		return true
	}
	a, ok1 := x.(*linop.CSR)
	b, ok2 := y.(*linop.CSR)
	if !ok1 || !ok2 || a.Rows != b.Rows || a.Cols != b.Cols || len(a.Val) != len(b.Val) {
		return false
	}
	for i := range a.RowPtr {
		if a.RowPtr[i] != b.RowPtr[i] {
			return false
		}
	}
	for i := range a.Val {
		if a.ColIdx[i] != b.ColIdx[i] || a.Val[i] != b.Val[i] {
			return false
		}
	}
	return true
}

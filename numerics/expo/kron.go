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
// e^{hA}, one per distinct step length h.
func denseRun(ctx context.Context, A linop.Operator, u0 []float64, times []float64, opts Options, vals [][]float64, errs []float64) error {
	a, err := toDense(A)
	if err != nil {
		return err
	}
	n := len(u0)
	norm := mat.Norm(a, 1)
	cache := map[float64]*mat.Dense{}
	cacheErr := map[float64]float64{}
	u := append([]float64(nil), u0...)
	w := make([]float64, n)
	acc := 0.0
	prev := 0.0
	for i, t := range times {
		if err := ctx.Err(); err != nil {
			return err
		}
		h := t - prev
		prev = t
		if h > 0 {
			E, ok := cache[h]
			if !ok {
				var ha, e mat.Dense
				ha.Scale(h, a)
				if _, err := ExpContext(ctx, &e, &ha); err != nil {
					return err
				}
				E = &e
				cache[h] = E
				cacheErr[h] = denseExpErr(n, h*norm, E)
			}
			gemv(E, false, w, u)
			acc = acc*mat.Norm(E, math.Inf(1)) + cacheErr[h]*normInf(u)
			u, w = w, u
		}
		vals[i] = append([]float64(nil), u...)
		errs[i] = acc
		if opts.Progress != nil {
			opts.Progress(i+1, len(times))
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

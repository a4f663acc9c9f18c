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
// Each step makes a local error δ_i, estimated a posteriori as
// 4‖(E − E₂)u_{i−1}‖_∞ + 2√n·u·‖|E||u_{i−1}|‖_∞ with E₂ from secondRoute
// (the a priori denseExpErr when that fails), which later steps carry
// forward. The first estimate multiplies the carried
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
	type stepExp struct {
		E, D, absE *mat.Dense // e^{hA}, the difference to the second route, |e^{hA}|
		apriori    float64    // denseExpErr, used when the second route fails
	}
	cache := map[float64]*stepExp{}
	expOf := func(h float64) (*stepExp, error) {
		if st, ok := cache[h]; ok {
			return st, nil
		}
		var ha, e mat.Dense
		ha.Scale(h, a)
		if _, err := ExpContext(ctx, &e, &ha); err != nil {
			return nil, err
		}
		st := &stepExp{E: &e, apriori: denseExpErr(n, h*norm, &e)}
		if D, err := secondRoute(ctx, &ha, &e); err == nil {
			st.D = D
			st.absE = mat.NewDense(n, n, nil)
			st.absE.Apply(func(_, _ int, v float64) float64 { return math.Abs(v) }, &e)
		} else if ctx.Err() != nil {
			return nil, ctx.Err()
		}
		cache[h] = st
		return st, nil
	}
	// localErr estimates the error of E·x for the step's E.
	tmpD, tmpA, absX := make([]float64, n), make([]float64, n), make([]float64, n)
	localErr := func(st *stepExp, x []float64) float64 {
		if st.D == nil {
			return st.apriori * normInf(x)
		}
		gemv(st.D, false, tmpD, x)
		for i, v := range x {
			absX[i] = math.Abs(v)
		}
		gemv(st.absE, false, tmpA, absX)
		return 4*normInf(tmpD) + 2*math.Sqrt(float64(n))*unitRoundoff*normInf(tmpA)
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
			st, err := expOf(h)
			if err != nil {
				return err
			}
			local[i] = localErr(st, u)
			gemv(st.E, false, w, u)
			acc = acc*mat.Norm(st.E, math.Inf(1)) + local[i]
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
		for _, st := range cache {
			E = st.E
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
		for i, t := range times {
			if t == 0 {
				continue
			}
			if err := ctx.Err(); err != nil {
				return err
			}
			st, err := expOf(t)
			if err != nil {
				return err
			}
			if e := localErr(st, u0); e < errs[i] {
				gemv(st.E, false, vals[i], u0)
				errs[i] = e
			}
		}
	}
	return nil
}

// secondRoute computes e^{hA} a second way, as the cube of e^{hÃ/3} with
// every entry of hA perturbed by a relative ±u (signs from a fixed
// sequence), and returns the difference from E. Its product with the
// current vector estimates the step's error a posteriori: the two routes
// use different scalings (a factor 3, not a power of 2, which would
// repeat the same operations exactly), so they round differently in the
// Padé evaluation and the squarings, and the perturbation carries the sensitivity of
// e^{hA} to the rounding of A's entries, which both routes share and
// which dominates for a non-normal A of large norm (‖e^{sA}‖ ≫ 1 between
// 0 and h). The a priori u·(n + h‖A‖₁)‖E‖ (denseExpErr) was measured both
// 20 times below the error (a beam in first-order form, ‖A‖ ≈ 2.6e5) and
// 1e4 times above it (a string).
func secondRoute(ctx context.Context, ha, E *mat.Dense) (*mat.Dense, error) {
	n, _ := ha.Dims()
	third := mat.NewDense(n, n, nil)
	seed := uint64(0x9e3779b97f4a7c15)
	third.Apply(func(_, _ int, v float64) float64 {
		seed ^= seed << 13
		seed ^= seed >> 7
		seed ^= seed << 17
		if seed&1 == 0 {
			return v / 3 * (1 + unitRoundoff)
		}
		return v / 3 * (1 - unitRoundoff)
	}, ha)
	var eh, sq, e2 mat.Dense
	if _, err := ExpContext(ctx, &eh, third); err != nil {
		return nil, err
	}
	sq.Mul(&eh, &eh)
	e2.Mul(&sq, &eh)
	e2.Sub(E, &e2)
	for _, v := range e2.RawMatrix().Data {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, errorf("dense: second route overflowed")
		}
	}
	return &e2, nil
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

// ModeApply sets dst = (E_1 ⊗ E_2 ⊗ … ⊗ E_d) u for square E_i of orders
// n_i, u indexed with the last factor's index fastest (as linop.KronSum):
// one mode product per factor — u viewed as a tensor n_1 × … × n_d, E_i
// applied along its i-th index — by matrix products on contiguous slabs,
// never forming the Kronecker product. work must hold len(u) entries. It
// panics with ErrShape on a size mismatch.
func ModeApply(dst []float64, Es []*mat.Dense, u, work []float64) {
	N := 1
	for _, E := range Es {
		r, c := E.Dims()
		if r != c {
			panic(ErrShape)
		}
		N *= r
	}
	if len(u) != N || len(dst) != N || len(work) != N {
		panic(ErrShape)
	}
	cur, next := work, dst
	// Arrange the swaps so that the last mode writes into dst.
	if len(Es)%2 == 0 {
		cur, next = dst, work
	}
	copy(cur, u)
	pre := 1
	for _, E := range Es {
		ni, _ := E.Dims()
		post := N / (pre * ni)
		for p := 0; p < pre; p++ {
			in := mat.NewDense(ni, post, cur[p*ni*post:(p+1)*ni*post])
			out := mat.NewDense(ni, post, next[p*ni*post:(p+1)*ni*post])
			out.Mul(E, in)
		}
		pre *= ni
		cur, next = next, cur
	}
}

// kronRun computes e^{t(X⊕Y)}u0 = vec(e^{tX} U0 e^{tY}ᵀ) at each time; a
// sum of more factors goes through kronRunModes.
func kronRun(ctx context.Context, k *linop.KronSum, u0 []float64, times []float64, opts Options, vals [][]float64, errs []float64) error {
	if f := linop.KronFactors(k); len(f) > 2 {
		return kronRunModes(ctx, f, u0, times, opts, vals, errs)
	}
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

// kronRunModes computes e^{t(F_1 ⊕ … ⊕ F_d)}u0 = (e^{tF_1} ⊗ … ⊗ e^{tF_d}) u0
// at each time by mode products (ModeApply), each factor's exponential
// dense and small (a factor equal to an earlier one is exponentiated
// once). The estimate extends kronRun's: a perturbation δE_i of one factor
// changes the result by at most ‖δE_i‖∞ Π_{j≠i}‖E_j‖∞ ‖u0‖∞, and the d
// mode products round by at most u·(Σ n_i)·Π‖E_j‖∞‖u0‖∞ (each row of a
// product sums n_i terms), doubled for safety.
func kronRunModes(ctx context.Context, factors []linop.Operator, u0 []float64, times []float64, opts Options, vals [][]float64, errs []float64) error {
	N := len(u0)
	if err := memguard.Vectors(1+len(times), N, memguard.RealBytes, "Kronecker work vectors and results"); err != nil {
		return err
	}
	d := len(factors)
	norms := make([]float64, d)
	sizes := make([]int, d)
	sumN := 0
	for i, f := range factors {
		norms[i] = opNorm1(&counted{a: f})
		sizes[i], _ = f.Dims()
		sumN += sizes[i]
	}
	u0n := normInf(u0)
	work := make([]float64, N)
	Es := make([]*mat.Dense, d)
	for i, t := range times {
		if err := ctx.Err(); err != nil {
			return err
		}
		for j, f := range factors {
			Es[j] = nil
			for q := 0; q < j; q++ {
				if sameOperator(factors[q], f) {
					Es[j] = Es[q]
					break
				}
			}
			if Es[j] == nil {
				e, err := factorExp(ctx, f, t)
				if err != nil {
					return err
				}
				Es[j] = e
			}
		}
		out := make([]float64, N)
		ModeApply(out, Es, u0, work)
		vals[i] = out
		en := make([]float64, d)
		prod := 1.0
		for j, E := range Es {
			en[j] = mat.Norm(E, math.Inf(1))
			prod *= en[j]
		}
		est := 2 * unitRoundoff * float64(sumN) * prod
		for j, E := range Es {
			others := 1.0
			for q := range Es {
				if q != j {
					others *= en[q]
				}
			}
			est += denseExpErr(sizes[j], t*norms[j], E) * others
		}
		errs[i] = est * u0n
		if opts.Progress != nil {
			opts.Progress(i+1, len(times))
		}
	}
	return nil
}

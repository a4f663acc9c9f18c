package spectra

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
	"semiflow/numerics/roundoff"
	"semiflow/numerics/solve"
)

// NumericalRange is a sampled boundary of the numerical range (field of
// values) W(A) = {x*Ax : x*x = 1} in the Euclidean or a weighted inner
// product. W(A) is compact and convex (Toeplitz–Hausdorff) and contains the
// spectrum.
type NumericalRange struct {
	// Angles θ_k in [0, 2π) and, for each, Support[k] = λmax(H_θ) with
	// H_θ = (e^{−iθ}A + e^{iθ}A*)/2, so that W(A) lies in the half plane
	// Re(e^{−iθ}z) ≤ Support[k], and Boundary[k] = x*Ax, x the top
	// eigenvector of H_θ, is a point of ∂W(A) on that supporting line.
	Angles   []float64
	Support  []float64
	Boundary []complex128
	// Abscissa is ω(A) = max Re W(A) = λmax((A + A*)/2), the initial
	// slope of log‖e^{tA}‖ at t = 0.
	Abscissa float64
	// Radius is the numerical radius r(A) = max |z| over W(A) =
	// max_θ Support(θ), refined between samples by golden-section search.
	Radius   float64
	Weighted bool
	Method   string
	Accuracy string
}

// NumRange samples ∂W(A) at nAngles equally spaced angles (nAngles ≥ 3)
// by rotating Hermitian parts (C. R. Johnson, SIAM J. Numer. Anal. 1978,
// cited from memory); the top
// eigenpair of H_θ comes from the dense symmetric eigensolver for n ≤ 64
// and from Lanczos with full reorthogonalisation above. With a
// weight W = RᵀR the inner product is ⟨x, y⟩ = xᵀWy, whose numerical range
// is that of R A R⁻¹. It panics with ErrShape if A is not square or the
// weight has the wrong length, and with ErrOption if nAngles < 3.
func NumRange(a linop.Operator, w Weight, nAngles int) (*NumericalRange, error) {
	return NumRangeContext(context.Background(), a, w, nAngles)
}

// NumRangeContext is NumRange that checks ctx before each angle and in the
// golden-section refinement of the numerical radius, and returns ctx.Err()
// once ctx is cancelled. It panics as NumRange does.
func NumRangeContext(ctx context.Context, a linop.Operator, w Weight, nAngles int) (*NumericalRange, error) {
	if nAngles < 3 {
		panic(ErrOption)
	}
	var b *mat.Dense
	var h *hermParts
	normA := 0.0
	if bc, cc, ok, err := complexParts(a); ok || err != nil {
		// W(A) of A = B + iC itself; the real form's range would be the
		// convex hull of W(A) and its mirror image.
		if err != nil {
			return nil, err
		}
		if w != nil {
			// W real: R A R⁻¹ = R B R⁻¹ + i R C R⁻¹.
			cw, ok := w.(linop.ComplexWeight)
			if !ok {
				return nil, fmt.Errorf("%w: the weight must act on the complex operator's order, not on its real form's", ErrComplex)
			}
			bc, cc = weighted(bc, cw.W), weighted(cc, cw.W)
		}
		b, h = bc, newHermPartsComplex(bc, cc)
		normA = math.Hypot(mat.Norm(bc, 2), mat.Norm(cc, 2))
	} else {
		m, err := toDense(a)
		if err != nil {
			return nil, err
		}
		b = weighted(m, w)
		h = newHermParts(b)
		normA = mat.Norm(b, 2)
	}
	n, _ := b.Dims()
	nr := &NumericalRange{Weighted: w != nil}
	if n == 0 {
		return nr, nil
	}
	h.ctx = ctx
	for k := 0; k < nAngles; k++ {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		th := 2 * math.Pi * float64(k) / float64(nAngles)
		lam, z, err := h.top(th, true)
		if err != nil {
			return nil, err
		}
		nr.Angles = append(nr.Angles, th)
		nr.Support = append(nr.Support, lam)
		nr.Boundary = append(nr.Boundary, z)
	}
	nr.Abscissa = nr.Support[0]
	// Numerical radius: refine the best sampled angle.
	best := 0
	for k := range nr.Support {
		if nr.Support[k] > nr.Support[best] {
			best = k
		}
	}
	d := 2 * math.Pi / float64(nAngles)
	f := func(th float64) float64 {
		if ctx.Err() != nil {
			return math.Inf(-1) // ends the search quickly; the error is returned below
		}
		l, _, _ := h.top(th, false)
		return l
	}
	_, fr := goldenMax(f, nr.Angles[best]-d, nr.Angles[best]+d, 1e-7, 60) // r(θ) is flat at its maximum: error O(δθ²)
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	nr.Radius = math.Max(fr, nr.Support[best])
	nr.Method = fmt.Sprintf("top eigenpair of the Hermitian part H_θ = (e^{−iθ}B + e^{iθ}Bᵀ)/2 of B = %s at %d angles (real symmetric 2n×2n embedding; QR algorithm for n ≤ 64, Lanczos above); numerical radius by golden-section search in θ", map[bool]string{false: "A", true: "RAR⁻¹ (weighted inner product, W = RᵀR)"}[w != nil], nAngles)
	if h.c != nil {
		nr.Method = fmt.Sprintf("top eigenpair of the Hermitian part H_θ = (e^{−iθ}A + e^{iθ}A*)/2 of the complex A = B + iC at %d angles (real symmetric 2n×2n embedding; QR algorithm for n ≤ 64, Lanczos above); numerical radius by golden-section search in θ", nAngles)
	}
	nr.Accuracy = fmt.Sprintf("support values and boundary points to about n·u·‖A‖ ≈ %.1e; the polygon through the boundary points lies inside W(A), the supporting lines enclose it", float64(n)*0x1p-53*normA)
	return nr, nil
}

// NumericalAbscissa returns ω(A) = λmax((B + Bᵀ)/2) with B = A or, for a
// weight W = RᵀR, B = R A R⁻¹: the smallest ω such that A − ωI is
// dissipative in that inner product, so that ‖e^{tA}‖_W ≤ e^{ωt}
// (Lumer–Phillips). It panics with ErrShape on a size mismatch.
//
// For n > 1500 it uses the Lanczos process (full reorthogonalisation,
// stopping when the Ritz residual is below 1e-10·|θ|). Without a weight,
// when A has a sparse form, Lanczos runs on (σI − S)⁻¹ with S = (A + Aᵀ)/2
// and σ just above the Gershgorin bound of S (shift-and-invert, one sparse
// factorisation), which converges in a few dozen steps even for diffusion
// operators whose top eigenvalues are clustered; otherwise on S itself
// through products with A and Aᵀ (at most 400 steps).
func NumericalAbscissa(a linop.Operator, w Weight) (float64, error) {
	return NumericalAbscissaContext(context.Background(), a, w)
}

// NumericalAbscissaContext is NumericalAbscissa returning ctx.Err() within
// one Lanczos step once ctx is cancelled; the dense symmetric eigensolver,
// which cannot be interrupted, runs under abandonable.
func NumericalAbscissaContext(ctx context.Context, a linop.Operator, w Weight) (float64, error) {
	if n, c := a.Dims(); n == c && n > 1500 {
		if w != nil && w.Len() != n {
			panic(ErrShape)
		}
		if w == nil {
			if csr, err := linop.ToCSR(a); err == nil {
				return symTopShiftInvertContext(ctx, csr)
			}
		}
		return symTopLanczos(ctx, a, w, 400, 1e-10)
	}
	m, err := toDense(a)
	if err != nil {
		return 0, err
	}
	b := weighted(m, w)
	n, _ := b.Dims()
	return abandonable(ctx, denseBytes(n, 3), fmt.Sprintf("numerical abscissa of order %d", n), func() (float64, error) { return numAbscissa(b) })
}

func numAbscissa(b *mat.Dense) (float64, error) {
	n, _ := b.Dims()
	if n == 0 {
		return math.Inf(-1), nil
	}
	s := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			s.SetSym(i, j, (b.At(i, j)+b.At(j, i))/2)
		}
	}
	var es mat.EigenSym
	if !es.Factorize(s, false) {
		return 0, numErr("symmetric eigenvalue iteration did not converge")
	}
	v := es.Values(nil)
	return v[n-1], nil
}

// hermParts holds the symmetric and skew parts of B for H_θ = cos θ·S +
// i sin θ·K' where S = (B + Bᵀ)/2 and K = (B − Bᵀ)/2: indeed
// (e^{−iθ}B + e^{iθ}Bᵀ)/2 = cos θ S − i sin θ K.
//
// For a complex A = B + iC (c set) with S_C, K_C the parts of C,
// (e^{−iθ}A + e^{iθ}A*)/2 = (cos θ S + sin θ S_C) + i(cos θ K_C − sin θ K).
type hermParts struct {
	b    *mat.Dense
	n    int
	s, k *mat.Dense
	// c, sc, kc: the imaginary part C of a complex A and its symmetric
	// and skew parts; nil for a real B.
	c, sc, kc *mat.Dense
	// ctx, if not nil, stops the Lanczos iteration of top with ctx.Err().
	ctx context.Context
}

// newHermPartsComplex is newHermParts of the complex matrix B + iC.
func newHermPartsComplex(b, c *mat.Dense) *hermParts {
	h := newHermParts(b)
	p := newHermParts(c)
	h.c, h.sc, h.kc = c, p.s, p.k
	return h
}

// blockEntries returns the entries (i, j) of the real part S' and the
// imaginary part K' of H_θ, with cs = cos θ and sn = sin θ.
func (h *hermParts) blockEntries(cs, sn float64, i, j int) (sv, kv float64) {
	sv, kv = cs*h.s.At(i, j), -sn*h.k.At(i, j)
	if h.c != nil {
		sv += sn * h.sc.At(i, j)
		kv += cs * h.kc.At(i, j)
	}
	return sv, kv
}

func newHermParts(b *mat.Dense) *hermParts {
	n, _ := b.Dims()
	s := mat.NewDense(n, n, nil)
	k := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			s.Set(i, j, (b.At(i, j)+b.At(j, i))/2)
			k.Set(i, j, (b.At(i, j)-b.At(j, i))/2)
		}
	}
	return &hermParts{b: b, n: n, s: s, k: k}
}

// top returns λmax(H_θ) and, if wantPoint, the boundary point x*Bx for the
// top eigenvector x. H_θ = S' + iK' with S' = cos θ S and K' = −sin θ K is
// embedded as the real symmetric [S' −K'; K' S'], whose eigenvalues are
// those of H_θ, each twice; an eigenvector [p; q] gives x = p + iq.
func (h *hermParts) top(th float64, wantPoint bool) (float64, complex128, error) {
	n := h.n
	var lam float64
	var x []complex128
	if n > denseHermitian {
		var err error
		lam, x, err = h.topLanczos(th)
		if err != nil {
			return 0, 0, err
		}
	} else {
		c, s := math.Cos(th), math.Sin(th)
		e := mat.NewSymDense(2*n, nil)
		for i := 0; i < n; i++ {
			for j := i; j < n; j++ {
				sv, _ := h.blockEntries(c, s, i, j)
				e.SetSym(i, j, sv)
				e.SetSym(n+i, n+j, sv)
			}
			for j := 0; j < n; j++ {
				// lower-left block K' (rows n+i, columns j): element (n+i, j)
				_, kv := h.blockEntries(c, s, i, j)
				e.SetSym(j, n+i, kv)
			}
		}
		var es mat.EigenSym
		if !es.Factorize(e, wantPoint) {
			return 0, 0, numErr("symmetric eigenvalue iteration did not converge at θ = %g", th)
		}
		lam = es.Values(nil)[2*n-1]
		if !wantPoint {
			return lam, 0, nil
		}
		var v mat.Dense
		es.VectorsTo(&v)
		x = make([]complex128, n)
		for i := 0; i < n; i++ {
			x[i] = complex(v.At(i, 2*n-1), v.At(n+i, 2*n-1))
		}
	}
	if !wantPoint {
		return lam, 0, nil
	}
	// z = x*Bx / x*x (x*(B + iC)x for a complex A)
	xr, xi := make([]float64, n), make([]float64, n)
	for i, v := range x {
		xr[i], xi[i] = real(v), imag(v)
	}
	br, bi := mat.NewVecDense(n, nil), mat.NewVecDense(n, nil)
	br.MulVec(h.b, mat.NewVecDense(n, xr))
	bi.MulVec(h.b, mat.NewVecDense(n, xi))
	if h.c != nil {
		cr, ci := mat.NewVecDense(n, nil), mat.NewVecDense(n, nil)
		cr.MulVec(h.c, mat.NewVecDense(n, xr))
		ci.MulVec(h.c, mat.NewVecDense(n, xi))
		br.SubVec(br, ci) // Re(Ax) = B xr − C xi
		bi.AddVec(bi, cr) // Im(Ax) = B xi + C xr
	}
	var num complex128
	var den float64
	for i := 0; i < n; i++ {
		num += cmplx.Conj(x[i]) * complex(br.AtVec(i), bi.AtVec(i))
		den += xr[i]*xr[i] + xi[i]*xi[i]
	}
	return lam, num / complex(den, 0), nil
}

// denseHermitian is the order up to which top uses the dense symmetric
// eigensolver; above it, Lanczos.
const denseHermitian = 64

// topLanczos returns the largest eigenvalue of the embedding
// [S' −K'; K' S'] and its eigenvector as x = p + iq, by Lanczos with full
// reorthogonalisation (products with S and K only), stopping when the Ritz
// residual is below 1e-13·(‖S‖_F + ‖K‖_F).
func (h *hermParts) topLanczos(th float64) (float64, []complex128, error) {
	n := h.n
	c, sn := math.Cos(th), math.Sin(th)
	// S' and K' of H_θ = S' + iK': c·S and −sn·K for a real B (scaled
	// inside apply), formed for this angle for a complex A.
	sP, kP, sS, sK := h.s, h.k, c, -sn
	if h.c != nil {
		sP, kP, sS, sK = mat.NewDense(n, n, nil), mat.NewDense(n, n, nil), 1, 1
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				sv, kv := h.blockEntries(c, sn, i, j)
				sP.Set(i, j, sv)
				kP.Set(i, j, kv)
			}
		}
	}
	scale := mat.Norm(h.s, 2) + mat.Norm(h.k, 2) // Frobenius
	if h.c != nil {
		scale += mat.Norm(h.sc, 2) + mat.Norm(h.kc, 2)
	}
	tol := 1e-13 * math.Max(scale, 1e-300)
	sp, kq := mat.NewVecDense(n, nil), mat.NewVecDense(n, nil)
	kp, sq := mat.NewVecDense(n, nil), mat.NewVecDense(n, nil)
	apply := func(dst, x []float64) {
		p, q := mat.NewVecDense(n, x[:n]), mat.NewVecDense(n, x[n:])
		sp.MulVec(sP, p)
		kq.MulVec(kP, q)
		kp.MulVec(kP, p)
		sq.MulVec(sP, q)
		for i := 0; i < n; i++ {
			dst[i] = sS*sp.AtVec(i) - sK*kq.AtVec(i)
			dst[n+i] = sK*kp.AtVec(i) + sS*sq.AtVec(i)
		}
	}
	m := 2 * n
	q := [][]float64{make([]float64, m)}
	xorshiftFill(q[0], 7777777)
	normalise(q[0])
	var alpha, beta []float64
	var theta float64
	var s []float64
	maxIter := min(m, 400)
	conv := false
	for j := 0; j < maxIter; j++ {
		if h.ctx != nil && h.ctx.Err() != nil {
			return 0, nil, h.ctx.Err()
		}
		w := make([]float64, m)
		apply(w, q[j])
		alpha = append(alpha, floatsDot(q[j], w))
		for pass := 0; pass < 2; pass++ {
			for _, qk := range q {
				floatsAxpy(w, -floatsDot(qk, w), qk)
			}
		}
		b := math.Sqrt(floatsDot(w, w))
		if j%4 == 3 || j == maxIter-1 || b <= tol {
			theta, s = tridiagTopFast(alpha, beta)
			if b*math.Abs(s[j]) <= tol || b <= tol {
				conv = true
				break
			}
		}
		if j == maxIter-1 {
			break
		}
		beta = append(beta, b)
		for i := range w {
			w[i] /= b
		}
		q = append(q, w)
	}
	if !conv {
		return 0, nil, numErr("Lanczos for the numerical range did not converge in %d steps at θ = %g", maxIter, th)
	}
	x := make([]complex128, n)
	for k := range s {
		for i := 0; i < n; i++ {
			x[i] += complex(s[k]*q[k][i], s[k]*q[k][n+i])
		}
	}
	return theta, x, nil
}

// goldenMax maximises f on [a, b] by golden-section search, returning the
// argument and value.
func goldenMax(f func(float64) float64, a, b, tol float64, maxIter int) (float64, float64) {
	const g = 0.6180339887498949
	c, d := b-g*(b-a), a+g*(b-a)
	fc, fd := f(c), f(d)
	for it := 0; it < maxIter && b-a > tol*(1+math.Abs(a)+math.Abs(b)); it++ {
		if fc > fd {
			b, d, fd = d, c, fc
			c = b - g*(b-a)
			fc = f(c)
		} else {
			a, c, fc = c, d, fd
			d = a + g*(b-a)
			fd = f(d)
		}
	}
	if fc > fd {
		return c, fc
	}
	return d, fd
}

// symTopShiftInvert returns λmax((A + Aᵀ)/2) for sparse A by Lanczos on
// (σI − S)⁻¹, σ above the Gershgorin bound: λmax = σ − 1/μmax. The shift
// lies 10⁻⁶·max(‖S‖∞, u‖A‖∞) above the bound, so that a symmetric part
// that is zero or tiny beside A (a skew-symmetric or nearly skew operator)
// gives μ of order 1/(u‖A‖), not an overflow; S = 0 exactly gives 0.
func symTopShiftInvert(a *linop.CSR) (float64, error) {
	return symTopShiftInvertContext(context.Background(), a)
}

// symTopShiftInvertContext is symTopShiftInvert stopping with ctx.Err()
// within one Lanczos step once ctx is cancelled.
func symTopShiftInvertContext(ctx context.Context, a *linop.CSR) (float64, error) {
	sym := linop.AddCSR(0.5, a, 0.5, a.Transpose())
	n := sym.Rows
	g, scale := math.Inf(-1), 0.0
	for i := 0; i < n; i++ {
		r := 0.0
		d := 0.0
		for p := sym.RowPtr[i]; p < sym.RowPtr[i+1]; p++ {
			if sym.ColIdx[p] == i {
				d += sym.Val[p]
			} else {
				r += math.Abs(sym.Val[p])
			}
		}
		g = math.Max(g, d+r)
		scale = math.Max(scale, math.Abs(d)+r)
	}
	if scale == 0 {
		return 0, nil // S = 0: every entry of (A + Aᵀ)/2 is zero
	}
	sigma := g + 1e-6*math.Max(scale, roundoff.Unit*a.NormInf())
	f, err := solve.NewShifted(sym, complex(sigma, 0))
	if err != nil {
		return 0, err
	}
	zb, zx := make([]complex128, n), make([]complex128, n)
	var serr error
	inv := linop.Operator(funcOp{n: n, f: func(dst, x []float64) {
		for i, v := range x {
			zb[i] = complex(v, 0)
		}
		if err := f.Solve(zx, zb); err != nil && serr == nil {
			serr = err
		}
		for i, v := range zx {
			dst[i] = real(v)
		}
	}})
	mu, err := symTopLanczos(ctx, inv, nil, 300, 1e-12)
	if serr != nil {
		return 0, serr
	}
	if err != nil {
		return 0, err
	}
	return sigma - 1/mu, nil
}

// funcOp is a symmetric operator given by a function.
type funcOp struct {
	n int
	f func(dst, x []float64)
}

func (o funcOp) Dims() (int, int)        { return o.n, o.n }
func (o funcOp) Apply(dst, x []float64)  { o.f(dst, x) }
func (o funcOp) ApplyT(dst, x []float64) { o.f(dst, x) }

// symTopLanczos returns λmax((B + Bᵀ)/2), B = R A R⁻¹ (B = A if w is nil),
// by Lanczos with full reorthogonalisation, checking ctx at every step.
func symTopLanczos(ctx context.Context, a linop.Operator, w Weight, maxIter int, tol float64) (float64, error) {
	n, _ := a.Dims()
	// Two temporaries and the basis, which grows by one vector a step:
	// each step asks the memory guard first.
	const what = "Lanczos work vectors for the numerical abscissa"
	scratch := linop.Scratch(a) // the temporaries of A's products
	if err := memguard.Vectors(4+scratch, n, memguard.RealBytes, what); err != nil {
		return 0, err
	}
	t1, t2 := make([]float64, n), make([]float64, n)
	// anorm is the largest ‖Bq‖ seen, a lower estimate of ‖B‖₂: a
	// symmetric part that is zero up to rounding (B nearly skew) leaves
	// Ritz residuals of the size of the rounding of Bq, n·u·‖B‖, which is
	// where the iteration stops then.
	anorm := 0.0
	apply := func(dst, x []float64) {
		// dst = (R A R⁻¹ x + R⁻ᵀ Aᵀ Rᵀ x)/2
		if fo, ok := a.(funcOp); ok && w == nil {
			fo.f(dst, x) // already symmetric
			return
		}
		if w == nil {
			a.Apply(dst, x)
			anorm = math.Max(anorm, math.Sqrt(floatsDot(dst, dst)))
			a.ApplyT(t1, x)
			for i := range dst {
				dst[i] = (dst[i] + t1[i]) / 2
			}
			return
		}
		w.FactorSolve(t1, x, false)
		a.Apply(t2, t1)
		w.Factor(dst, t2, false)
		anorm = math.Max(anorm, math.Sqrt(floatsDot(dst, dst)))
		w.Factor(t1, x, true)
		a.ApplyT(t2, t1)
		w.FactorSolve(t1, t2, true)
		for i := range dst {
			dst[i] = (dst[i] + t1[i]) / 2
		}
	}
	q := [][]float64{make([]float64, n)}
	xorshiftFill(q[0], 99991)
	normalise(q[0])
	var alpha, beta []float64
	theta := math.Inf(-1)
	for j := 0; j < min(maxIter, n); j++ {
		if err := ctx.Err(); err != nil {
			return 0, err
		}
		if err := memguard.Vectors(j+4+scratch, n, memguard.RealBytes, what); err != nil {
			return 0, err
		}
		wv := make([]float64, n)
		apply(wv, q[j])
		alpha = append(alpha, floatsDot(q[j], wv))
		for pass := 0; pass < 2; pass++ {
			for _, qk := range q {
				floatsAxpy(wv, -floatsDot(qk, wv), qk)
			}
		}
		b := math.Sqrt(floatsDot(wv, wv))
		// The Ritz value and its residual every fourth step (and at the
		// last and on breakdown), by bisection and inverse iteration on
		// the tridiagonal matrix: a full eigendecomposition at every
		// step would cost O(j³) each, O(maxIter⁴) in all.
		if j%4 == 3 || j == min(maxIter, n)-1 || b == 0 {
			var s []float64
			theta, s = tridiagTopFast(alpha, beta)
			if math.IsNaN(theta) {
				return 0, numErr("Lanczos tridiagonal eigenvalue problem failed")
			}
			if b*math.Abs(s[j]) <= math.Max(tol*math.Abs(theta), roundoff.Threshold(n, anorm)) || b == 0 {
				return theta, nil
			}
		}
		beta = append(beta, b)
		for i := range wv {
			wv[i] /= b
		}
		q = append(q, wv)
	}
	return theta, numErr("Lanczos for the numerical abscissa did not converge in %d steps (estimate %g)", maxIter, theta)
}

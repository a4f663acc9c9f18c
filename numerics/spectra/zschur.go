package spectra

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"sort"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// Complex matrices A = B + iC (linop.Complex) have no eigensolver in gonum,
// whose LAPACK is real only. The real form Φ(A) = [B −C; C B] has spectrum
// spec A ∪ conj(spec A) and resolvent norms max(‖(z−A)⁻¹‖, ‖(z̄−A)⁻¹‖), so
// spectra, pseudospectra and resolvent norms at non-real z are computed
// from a complex Schur form of A itself, by the routines below: Householder
// reduction to upper Hessenberg form and the shifted QR algorithm with
// Wilkinson shifts and deflation (Golub & Van Loan, Matrix Computations,
// 4th ed., §7.4–7.5, in complex arithmetic), without balancing, as for
// real matrices (a similarity would change norms).

// complexParts returns the dense B and C of a complex operator, or ok false
// when a is not complex.
func complexParts(a linop.Operator) (b, c *mat.Dense, ok bool, err error) {
	z, ok := a.(*linop.Complex)
	if !ok {
		return nil, nil, false, nil
	}
	b, c, err = z.DenseParts()
	return b, c, true, err
}

// complexRowMajor returns B + iC row-major, refusing non-finite entries.
func complexRowMajor(b, c *mat.Dense) ([]complex128, int, error) {
	n, m := b.Dims()
	if n != m {
		panic(linop.ErrShape)
	}
	if err := memguard.DenseComplex(n, n); err != nil {
		return nil, 0, err
	}
	h := make([]complex128, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			x, y := b.At(i, j), c.At(i, j)
			if math.IsNaN(x) || math.IsInf(x, 0) || math.IsNaN(y) || math.IsInf(y, 0) {
				return nil, 0, numErr("matrix entry (%d,%d) is %v", i, j, complex(x, y))
			}
			h[i*n+j] = complex(x, y)
		}
	}
	return h, n, nil
}

// complexSchur computes the complex Schur form A = Z T Zᴴ of the n×n
// complex matrix a (row-major, overwritten by T). ctx is checked between
// QR sweeps.
func complexSchur(ctx context.Context, h []complex128, n int) (*Schur, error) {
	z := make([]complex128, n*n)
	for i := 0; i < n; i++ {
		z[i*n+i] = 1
	}
	hessenberg(h, z, n)
	// The QR sweeps rotate pairs of columns of Z: kept transposed meanwhile,
	// so that each rotation runs along two contiguous rows.
	zt := transposeSquare(z, n)
	if err := hessenbergQR(ctx, h, zt, n); err != nil {
		return nil, err
	}
	z = transposeSquare(zt, n)
	for i := 1; i < n; i++ {
		for j := 0; j < i; j++ {
			h[i*n+j] = 0
		}
	}
	return &Schur{N: n, T: h, Z: z}, nil
}

// hessenberg reduces h to upper Hessenberg form by Householder reflectors
// P = I − β v vᴴ (h ← P h P), accumulating z ← z P.
func hessenberg(h, z []complex128, n int) {
	v := make([]complex128, n)
	for k := 0; k+2 < n; k++ {
		alpha := 0.0
		for i := k + 1; i < n; i++ {
			alpha = math.Hypot(alpha, cmplx.Abs(h[i*n+k]))
		}
		if alpha == 0 {
			continue
		}
		x0 := h[(k+1)*n+k]
		phase := complex(1, 0)
		if x0 != 0 {
			phase = x0 / complex(cmplx.Abs(x0), 0)
		}
		// v = x + phase·‖x‖ e₁, so P x = −phase·‖x‖ e₁ without cancellation.
		vv := 0.0
		for i := k + 1; i < n; i++ {
			v[i] = h[i*n+k]
		}
		v[k+1] += phase * complex(alpha, 0)
		for i := k + 1; i < n; i++ {
			vv += real(v[i])*real(v[i]) + imag(v[i])*imag(v[i])
		}
		beta := complex(2/vv, 0)
		// h ← P h on rows k+1.., columns k..
		for j := k; j < n; j++ {
			var s complex128
			for i := k + 1; i < n; i++ {
				s += cmplx.Conj(v[i]) * h[i*n+j]
			}
			s *= beta
			for i := k + 1; i < n; i++ {
				h[i*n+j] -= v[i] * s
			}
		}
		// h ← h P and z ← z P on columns k+1..
		for _, m := range [][]complex128{h, z} {
			for i := 0; i < n; i++ {
				row := m[i*n : (i+1)*n]
				var s complex128
				for j := k + 1; j < n; j++ {
					s += row[j] * v[j]
				}
				s *= beta
				for j := k + 1; j < n; j++ {
					row[j] -= s * cmplx.Conj(v[j])
				}
			}
		}
		h[(k+1)*n+k] = -phase * complex(alpha, 0)
		for i := k + 2; i < n; i++ {
			h[i*n+k] = 0
		}
	}
}

// transposeSquare returns the transpose of the n×n row-major m.
func transposeSquare(m []complex128, n int) []complex128 {
	out := make([]complex128, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			out[j*n+i] = m[i*n+j]
		}
	}
	return out
}

// givens returns c (real) and s with [c s; −s̄ c] [x; y] = [r; 0].
func givens(x, y complex128) (c float64, s complex128) {
	ax, ay := cmplx.Abs(x), cmplx.Abs(y)
	if ay == 0 {
		return 1, 0
	}
	if ax == 0 {
		return 0, cmplx.Conj(y) / complex(ay, 0)
	}
	r := math.Hypot(ax, ay)
	return ax / r, x / complex(ax, 0) * cmplx.Conj(y) / complex(r, 0)
}

// hessenbergQR reduces the upper Hessenberg h to upper triangular form by
// the explicitly shifted QR algorithm on the active window [lo, hi]:
// h − σI = QR, h ← RQ + σI, applied to the whole matrix (columns right of
// the window and rows above it too, so that h stays Zᴴ A Z) and
// accumulated in Z, given transposed as zt. A subdiagonal entry below u·(|h_{k−1,k−1}| + |h_kk|)
// is set to zero (deflation). The shift is Wilkinson's (the eigenvalue of
// the trailing 2×2 block nearer its last diagonal entry), replaced every
// tenth sweep without deflation by an exceptional shift.
func hessenbergQR(ctx context.Context, h, zt []complex128, n int) error {
	const eps = 0x1p-53
	norm := 0.0
	for _, x := range h {
		norm = math.Max(norm, cmplx.Abs(x))
	}
	small := math.Max(norm*eps, math.SmallestNonzeroFloat64/eps)
	cs := make([]float64, n)
	sn := make([]complex128, n)
	hi, iter, total := n-1, 0, 0
	for hi > 0 {
		l := hi
		for ; l > 0; l-- {
			sub := cmplx.Abs(h[l*n+l-1])
			d := cmplx.Abs(h[(l-1)*n+l-1]) + cmplx.Abs(h[l*n+l])
			if sub <= eps*d || sub <= small*eps {
				h[l*n+l-1] = 0
				break
			}
		}
		if l == hi {
			hi--
			iter = 0
			continue
		}
		iter++
		total++
		if total > 30*n+30 {
			return numErr("complex QR algorithm did not converge (%d sweeps for order %d)", total, n)
		}
		if total%16 == 0 && ctx != nil {
			if err := ctx.Err(); err != nil {
				return err
			}
		}
		var sigma complex128
		if iter%10 == 0 {
			sigma = h[hi*n+hi] + complex(1.5*cmplx.Abs(h[hi*n+hi-1]), 0)
		} else {
			a, b := h[(hi-1)*n+hi-1], h[(hi-1)*n+hi]
			c, d := h[hi*n+hi-1], h[hi*n+hi]
			m := (a + d) / 2
			disc := cmplx.Sqrt((a-d)*(a-d)/4 + b*c)
			l1, l2 := m+disc, m-disc
			sigma = l1
			if cmplx.Abs(l2-d) < cmplx.Abs(l1-d) {
				sigma = l2
			}
		}
		for k := l; k <= hi; k++ {
			h[k*n+k] -= sigma
		}
		for k := l; k < hi; k++ {
			c, s := givens(h[k*n+k], h[(k+1)*n+k])
			cs[k], sn[k] = c, s
			cc := complex(c, 0)
			for j := k; j < n; j++ {
				t1, t2 := h[k*n+j], h[(k+1)*n+j]
				h[k*n+j] = cc*t1 + s*t2
				h[(k+1)*n+j] = -cmplx.Conj(s)*t1 + cc*t2
			}
			h[(k+1)*n+k] = 0
		}
		for k := l; k < hi; k++ {
			cc, s := complex(cs[k], 0), sn[k]
			for i := 0; i <= k+1; i++ {
				t1, t2 := h[i*n+k], h[i*n+k+1]
				h[i*n+k] = t1*cc + t2*cmplx.Conj(s)
				h[i*n+k+1] = -t1*s + t2*cc
			}
			zk, zk1 := zt[k*n:(k+1)*n], zt[(k+1)*n:(k+2)*n]
			for i := range zk {
				t1, t2 := zk[i], zk1[i]
				zk[i] = t1*cc + t2*cmplx.Conj(s)
				zk1[i] = -t1*s + t2*cc
			}
		}
		for k := l; k <= hi; k++ {
			h[k*n+k] += sigma
		}
	}
	return nil
}

// triangularEigenvectors returns the right and left eigenvectors of the
// upper triangular t (x_k and y_k with T x = t_kk x, yᴴT = t_kk yᴴ), by back
// and forward substitution; a zero pivot (a repeated eigenvalue) is
// replaced by u·‖T‖, as LAPACK's xTREVC does, giving the nearly parallel
// vectors of a defective eigenvalue and a large condition number.
func triangularEigenvectors(t []complex128, n int) (x, y [][]complex128) {
	norm := 0.0
	for _, v := range t {
		norm = math.Max(norm, cmplx.Abs(v))
	}
	smin := math.Max(0x1p-53*norm, math.SmallestNonzeroFloat64/0x1p-53)
	pivot := func(d complex128) complex128 {
		if cmplx.Abs(d) < smin {
			return complex(smin, 0)
		}
		return d
	}
	x = make([][]complex128, n)
	y = make([][]complex128, n)
	for k := 0; k < n; k++ {
		lam := t[k*n+k]
		v := make([]complex128, n)
		v[k] = 1
		for i := k - 1; i >= 0; i-- {
			var s complex128
			for j := i + 1; j <= k; j++ {
				s += t[i*n+j] * v[j]
			}
			v[i] = -s / pivot(t[i*n+i]-lam)
		}
		x[k] = v
		w := make([]complex128, n)
		w[k] = 1
		for i := k + 1; i < n; i++ {
			var s complex128
			for j := k; j < i; j++ {
				s += cmplx.Conj(t[j*n+i]) * w[j]
			}
			w[i] = -s / pivot(cmplx.Conj(t[i*n+i]-lam))
		}
		y[k] = w
	}
	return x, y
}

// complexDenseSpectrum is DenseSpectrum of the complex matrix B + iC: its
// n eigenvalues with condition numbers and unit right and left eigenvectors.
func complexDenseSpectrum(ctx context.Context, b, c *mat.Dense) (*Spectrum, error) {
	h, n, err := complexRowMajor(b, c)
	if err != nil {
		return nil, err
	}
	sp := &Spectrum{Abscissa: math.Inf(-1)}
	const method = "complex QR algorithm on the dense matrix (Householder reduction to Hessenberg form, Wilkinson shifts), left and right eigenvectors by substitution"
	if n == 0 {
		sp.Method = method
		return sp, nil
	}
	normF := math.Hypot(mat.Norm(b, 2), mat.Norm(c, 2))
	s, err := complexSchur(ctx, h, n)
	if err != nil {
		return nil, err
	}
	tx, ty := triangularEigenvectors(s.T, n)
	vals := s.Eigenvalues()
	x, y := mat.NewCDense(n, n, nil), mat.NewCDense(n, n, nil)
	for k := 0; k < n; k++ {
		for _, p := range []struct {
			src []complex128
			dst *mat.CDense
		}{{tx[k], x}, {ty[k], y}} {
			col := make([]complex128, n)
			nrm := 0.0
			for i := 0; i < n; i++ {
				var acc complex128
				for j, v := range p.src {
					if v != 0 {
						acc += s.Z[i*n+j] * v
					}
				}
				col[i] = acc
				nrm = math.Hypot(nrm, cmplx.Abs(acc))
			}
			for i := range col {
				p.dst.Set(i, k, col[i]/complex(nrm, 0))
			}
		}
	}
	finishSpectrum(sp, vals, x, y, n, normF, method)
	return sp, nil
}

// ComplexResolventApply solves (zI − A)x = b for a complex operator A
// (linop.Complex) through the complex Schur form of A (dense), with one
// step of iterative refinement; relResidual is ‖(zI − A)x − b‖/‖b‖. It
// returns an ErrNumerical error when zI − A is singular.
func ComplexResolventApply(ctx context.Context, a linop.Operator, z complex128, b []complex128) (x []complex128, relResidual float64, err error) {
	s, err := NewSchurContext(ctx, a)
	if err != nil {
		return nil, 0, err
	}
	n := s.N
	if len(b) != n {
		panic(ErrShape)
	}
	residual := func(x []complex128) []complex128 {
		in := make([]float64, 2*n)
		for i, v := range x {
			in[i], in[n+i] = real(v), imag(v)
		}
		out := make([]float64, 2*n)
		a.Apply(out, in)
		r := make([]complex128, n)
		for i := range r {
			r[i] = b[i] - (z*x[i] - complex(out[i], out[n+i]))
		}
		return r
	}
	x = make([]complex128, n)
	if err := s.ResolventSolve(x, b, z); err != nil {
		return nil, 0, err
	}
	r := residual(x)
	d := make([]complex128, n)
	if err := s.ResolventSolve(d, r, z); err == nil {
		for i := range x {
			x[i] += d[i]
		}
		r = residual(x)
	}
	nb, nr := 0.0, 0.0
	for i := range r {
		nb = math.Hypot(nb, cmplx.Abs(b[i]))
		nr = math.Hypot(nr, cmplx.Abs(r[i]))
	}
	if nb == 0 {
		return x, 0, nil
	}
	return x, nr / nb, nil
}

// ComplexRightmost computes a few eigenvalues of a large complex operator
// A = B + iC (linop.Complex) from Krylov–Schur on its real form Φ(A)
// (Rightmost, in real arithmetic, asked for 2·Count values: each
// eigenvalue λ of A appears in Φ(A) as λ and λ̄). Φ(A) leaves invariant
// the subspaces V = {[z; −iz]} and V̄ = {[w; iw]}, on which it acts as A
// and as Ā. A Ritz vector v = [x; y] of Φ(A) for θ splits as [z; −iz] +
// [w; iw] with z = (x + iy)/2 and w = (x − iy)/2, and the two parts carry
// the residual separately; so z gives the approximate eigenpair (θ, z) of
// A and w̄ the pair (θ̄, w̄). Each candidate's residual ‖Az − λz‖/‖z‖ is
// computed with A itself and candidates above the Krylov tolerance are
// dropped; duplicates (the pair λ, λ̄ of Φ(A) gives λ twice) within
// 1e-8·max(1, |λ|) are kept once, so a multiple eigenvalue of A appears
// once, as in any Krylov method. The Count rightmost candidates (or those
// nearest Shift with ShiftInvert) are returned.
func ComplexRightmost(ctx context.Context, a *linop.Complex, opt *EigsOptions) (*Spectrum, error) {
	var o EigsOptions
	if opt != nil {
		o = *opt
	}
	if o.Count == 0 {
		o.Count = 6
	}
	want := o.Count
	o.Count = 2 * want
	if o.Tol == 0 {
		o.Tol = 1e-10
	}
	s, err := Rightmost(ctx, a, &o)
	if err != nil {
		return nil, err
	}
	n, _ := a.ComplexDims()
	type cand struct {
		lam complex128
		vec []complex128
		res float64
	}
	apply := func(z []complex128) []complex128 {
		in := make([]float64, 2*n)
		for i, v := range z {
			in[i], in[n+i] = real(v), imag(v)
		}
		out := make([]float64, 2*n)
		a.Apply(out, in)
		r := make([]complex128, n)
		for i := range r {
			r[i] = complex(out[i], out[n+i])
		}
		return r
	}
	var cands []cand
	consider := func(lam complex128, z []complex128) {
		nz := 0.0
		for _, v := range z {
			nz = math.Hypot(nz, cmplx.Abs(v))
		}
		if nz == 0 {
			return
		}
		for i := range z {
			z[i] /= complex(nz, 0)
		}
		az := apply(z)
		res := 0.0
		for i := range az {
			res = math.Hypot(res, cmplx.Abs(az[i]-lam*z[i]))
		}
		if res > 1e3*o.Tol*math.Max(1, cmplx.Abs(lam)) {
			return // this part of the Ritz vector is not an eigenvector of A
		}
		for k, c := range cands {
			if cmplx.Abs(c.lam-lam) <= 1e-8*math.Max(1, cmplx.Abs(lam)) {
				if res < c.res {
					cands[k] = cand{lam, z, res}
				}
				return
			}
		}
		cands = append(cands, cand{lam, z, res})
	}
	if s.Right != nil {
		_, cols := s.Right.Dims()
		for k := 0; k < cols && k < len(s.Values); k++ {
			z, w := make([]complex128, n), make([]complex128, n)
			for i := 0; i < n; i++ {
				x, y := s.Right.At(i, k), s.Right.At(n+i, k)
				z[i] = (x + 1i*y) / 2
				w[i] = cmplx.Conj((x - 1i*y) / 2)
			}
			consider(s.Values[k], z)
			consider(cmplx.Conj(s.Values[k]), w)
		}
	}
	if o.ShiftInvert {
		sort.SliceStable(cands, func(i, j int) bool {
			return cmplx.Abs(cands[i].lam-complex(o.Shift, 0)) < cmplx.Abs(cands[j].lam-complex(o.Shift, 0))
		})
	} else {
		sort.SliceStable(cands, func(i, j int) bool { return rightOf(cands[i].lam, cands[j].lam) })
	}
	if len(cands) > want {
		cands = cands[:want]
	}
	sort.SliceStable(cands, func(i, j int) bool { return rightOf(cands[i].lam, cands[j].lam) })
	out := &Spectrum{Abscissa: math.Inf(-1), Right: mat.NewCDense(n, max(len(cands), 1), nil)}
	maxRes := 0.0
	for k, c := range cands {
		out.Values = append(out.Values, c.lam)
		out.Residual = append(out.Residual, c.res)
		maxRes = math.Max(maxRes, c.res)
		for i, v := range c.vec {
			out.Right.Set(i, k, v)
		}
	}
	if len(cands) > 0 {
		out.Abscissa = real(out.Values[0])
	}
	out.Method = "Krylov–Schur on the real form [B −C; C B] of A = B + iC (" + s.Method + "), each Ritz vector split into its parts [z; −iz] (an eigenvector z of A) and [w; iw] (w̄ an eigenvector of A for the conjugate value)"
	out.Accuracy = fmt.Sprintf("%d of %d wanted found; residuals ‖Ax − λx‖/‖x‖ computed with A, largest %.2e; a multiple eigenvalue appears once; for non-normal A the eigenvalue error can exceed the residual by the condition number; Abscissa is over the computed values only", len(cands), want, maxRes)
	if len(cands) < want {
		out.Accuracy = "FEWER THAN ASKED: " + out.Accuracy
	}
	return out, nil
}

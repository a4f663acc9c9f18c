package expo

import (
	"math"

	"semiflow/numerics/linop"
)

// triShifted is the LU factorisation with partial pivoting of sI − T for a
// tridiagonal T (the second difference of a 1-D grid), in the manner of
// LAPACK's zgttrf/zgttrs (Anderson et al., LAPACK Users' Guide, 3rd ed.
// 1999): L unit lower bidiagonal with row interchanges, U with two
// superdiagonals. The reciprocals of U's diagonal are kept, so a solve
// multiplies instead of dividing: the contour path of ETDRK4 spends most
// of its time in these solves (measured 3.4× faster than the general band
// solver at n = 1000).
type triShifted struct {
	dl, rd, du, du2 []complex128 // multipliers, 1/U_ii, U's first and second superdiagonals
	swap            []bool       // rows i and i+1 interchanged at step i
}

// tridiagOf returns the three diagonals of A when its sparse form is
// tridiagonal (sub[i] = a_{i+1,i}, diag[i] = a_ii, sup[i] = a_{i,i+1}).
func tridiagOf(A linop.Operator) (sub, diag, sup []float64, ok bool) {
	m, ok := sparseForm(A)
	if !ok || m.Rows < 2 {
		return nil, nil, nil, false
	}
	n := m.Rows
	sub, diag, sup = make([]float64, n-1), make([]float64, n), make([]float64, n-1)
	for i := 0; i < n; i++ {
		for p := m.RowPtr[i]; p < m.RowPtr[i+1]; p++ {
			switch j := m.ColIdx[p]; j - i {
			case 0:
				diag[i] += m.Val[p]
			case 1:
				sup[i] += m.Val[p]
			case -1:
				sub[j] += m.Val[p]
			default:
				return nil, nil, nil, false
			}
		}
	}
	return sub, diag, sup, true
}

func cabs1(z complex128) float64 { return math.Abs(real(z)) + math.Abs(imag(z)) }

// factorTri factors sI − T; it returns an error for an exactly singular
// pivot.
func factorTri(s complex128, sub, diag, sup []float64) (*triShifted, error) {
	n := len(diag)
	f := &triShifted{dl: make([]complex128, n-1), rd: make([]complex128, n), du: make([]complex128, n-1),
		du2: make([]complex128, max(n-2, 0)), swap: make([]bool, n-1)}
	d := make([]complex128, n)
	for i := range diag {
		d[i] = s - complex(diag[i], 0)
	}
	for i := range sub {
		f.dl[i] = complex(-sub[i], 0)
		f.du[i] = complex(-sup[i], 0)
	}
	for i := 0; i < n-1; i++ {
		if cabs1(d[i]) >= cabs1(f.dl[i]) {
			if d[i] == 0 {
				return nil, errorf("sI − A is singular (s = %v)", s)
			}
			fact := f.dl[i] / d[i]
			f.dl[i] = fact
			d[i+1] -= fact * f.du[i]
			continue
		}
		// Interchange rows i and i+1.
		fact := d[i] / f.dl[i]
		d[i] = f.dl[i]
		f.dl[i] = fact
		tmp := f.du[i]
		f.du[i] = d[i+1]
		d[i+1] = tmp - fact*d[i+1]
		if i < n-2 {
			f.du2[i] = f.du[i+1]
			f.du[i+1] = -fact * f.du[i+1]
		}
		f.swap[i] = true
	}
	for i, v := range d {
		if v == 0 {
			return nil, errorf("sI − A is singular (s = %v)", s)
		}
		f.rd[i] = 1 / v
	}
	return f, nil
}

// Solve sets dst = (sI − T)⁻¹b; dst and b may be the same slice.
func (f *triShifted) Solve(dst, b []complex128) error {
	n := len(f.rd)
	if len(dst) != n || len(b) != n {
		panic(ErrShape)
	}
	copy(dst, b)
	for i := 0; i < n-1; i++ {
		if f.swap[i] {
			dst[i], dst[i+1] = dst[i+1], dst[i]-f.dl[i]*dst[i+1]
		} else {
			dst[i+1] -= f.dl[i] * dst[i]
		}
	}
	dst[n-1] *= f.rd[n-1]
	dst[n-2] = (dst[n-2] - f.du[n-2]*dst[n-1]) * f.rd[n-2]
	for i := n - 3; i >= 0; i-- {
		dst[i] = (dst[i] - f.du[i]*dst[i+1] - f.du2[i]*dst[i+2]) * f.rd[i]
	}
	return nil
}

// triNoPivot is the LU factorisation of sI − T when partial pivoting
// interchanges no rows (|d_i| ≥ |t_{i+1,i}| at every step, the test of
// zgttrf), which is the rule for the contour shifts of a negative
// semidefinite T: then L and U are bidiagonal and the solve is
//
//	y_i = b_i − l_i y_{i−1},  x_i = y_i/d_i + q_i x_{i+1},
//
// with l_i = −t_{i,i−1}/d_{i−1} and q_i = t_{i,i+1}/d_i (l_0 = q_{n−1} = 0).
// Real and imaginary parts are kept apart, so that etdFusedPair can run
// the recurrences of two nodes side by side.
type triNoPivot struct {
	lr, li []float64 // l_i
	rr, ri []float64 // 1/d_i
	qr, qi []float64 // q_i
}

// recip returns 1/(a + ib) by Smith's scaling (no overflow for large a, b).
func recip(a, b float64) (float64, float64) {
	if math.Abs(a) >= math.Abs(b) {
		r := b / a
		den := a + b*r
		return 1 / den, -r / den
	}
	r := a / b
	den := a*r + b
	return r / den, -1 / den
}

// recipFast is recip by one division, 1/(a + ib) = (a − ib)/(a² + b²),
// where a² + b² can neither overflow nor underflow; recip otherwise.
func recipFast(a, b float64) (float64, float64) {
	if m := math.Abs(a) + math.Abs(b); m > 1e-150 && m < 1e150 {
		inv := 1 / (a*a + b*b)
		return a * inv, -b * inv
	}
	return recip(a, b)
}

// factorTriNoPivot factors sI − T as triNoPivot; ok is false when partial
// pivoting would interchange a row (use factorTri then), err non-nil for an
// exactly singular pivot.
func factorTriNoPivot(s complex128, sub, diag, sup []float64) (f *triNoPivot, ok bool, err error) {
	n := len(diag)
	f = &triNoPivot{lr: make([]float64, n), li: make([]float64, n), rr: make([]float64, n),
		ri: make([]float64, n), qr: make([]float64, n), qi: make([]float64, n)}
	sr, si := real(s), imag(s)
	for i := 0; i < n; i++ {
		dr, di := sr-diag[i], si
		if i > 0 {
			// d_i = s − t_ii − l_i·t_{i−1,i}, with the entries −t of sI − T.
			dr += f.lr[i] * sup[i-1]
			di += f.li[i] * sup[i-1]
		}
		if dr == 0 && di == 0 {
			return nil, false, errorf("sI − A is singular (s = %v)", s)
		}
		if i < n-1 && math.Abs(dr)+math.Abs(di) < math.Abs(sub[i]) {
			return nil, false, nil
		}
		f.rr[i], f.ri[i] = recipFast(dr, di)
		if i < n-1 {
			f.lr[i+1], f.li[i+1] = -sub[i]*f.rr[i], -sub[i]*f.ri[i]
			f.qr[i], f.qi[i] = sup[i]*f.rr[i], sup[i]*f.ri[i]
		}
	}
	return f, true, nil
}

// Solve sets dst = (sI − T)⁻¹b (for tests; the stepper uses etdFusedPair).
func (f *triNoPivot) Solve(dst, b []complex128) error {
	n := len(f.rr)
	if len(dst) != n || len(b) != n {
		panic(ErrShape)
	}
	var yr, yi float64
	for i := 0; i < n; i++ {
		br, bi := real(b[i]), imag(b[i])
		yr, yi = br-(f.lr[i]*yr-f.li[i]*yi), bi-(f.lr[i]*yi+f.li[i]*yr)
		dst[i] = complex(yr*f.rr[i]-yi*f.ri[i], yr*f.ri[i]+yi*f.rr[i])
	}
	var xr, xi float64
	for i := n - 1; i >= 0; i-- {
		xr, xi = real(dst[i])+f.qr[i]*xr-f.qi[i]*xi, imag(dst[i])+f.qr[i]*xi+f.qi[i]*xr
		dst[i] = complex(xr, xi)
	}
	return nil
}

// etdFusedPair adds to acc the real parts of c0·x0 + c1·x1, where x_k
// solves (s_k I − T)x_k = v + Σ_j p_{k,j} w_j (f0, f1 the factorisations,
// p_k their three coefficients, zero for an absent w_j), and returns
// max_i |x_k,i| (re + im) for each. The right sides are formed in e, the
// forward substitution runs over e in place and the backward one adds
// into acc as it goes; the two nodes' recurrences run side by side, since a
// single recurrence waits on the latency of its complex multiply at every
// row (1.9× faster per node than one node at a time, measured at n = 1000).
// e holds four work vectors of length n.
func etdFusedPair(acc []float64, e *[4][]float64, f0, f1 *triNoPivot, v []float64, w [3][]float64, p0, p1 [3]complex128, c0, c1 complex128) (m0, m1 float64) {
	n := len(v)
	acc = acc[:n]
	w0, w1, w2 := w[0][:n], w[1][:n], w[2][:n]
	e0r, e0i, e1r, e1i := e[0][:n], e[1][:n], e[2][:n], e[3][:n]
	l0r, l0i, r0r, r0i := f0.lr[:n], f0.li[:n], f0.rr[:n], f0.ri[:n]
	l1r, l1i, r1r, r1i := f1.lr[:n], f1.li[:n], f1.rr[:n], f1.ri[:n]
	a0r, a0i, b0r, b0i, g0r, g0i := real(p0[0]), imag(p0[0]), real(p0[1]), imag(p0[1]), real(p0[2]), imag(p0[2])
	a1r, a1i, b1r, b1i, g1r, g1i := real(p1[0]), imag(p1[0]), real(p1[1]), imag(p1[1]), real(p1[2]), imag(p1[2])
	// The right sides first: with the recurrences in the same loop, their
	// twelve coefficients push the recurrences' values out of registers.
	for i := 0; i < n; i++ {
		vi, x, y, z := v[i], w0[i], w1[i], w2[i]
		e0r[i] = vi + x*a0r + y*b0r + z*g0r
		e0i[i] = x*a0i + y*b0i + z*g0i
		e1r[i] = vi + x*a1r + y*b1r + z*g1r
		e1i[i] = x*a1i + y*b1i + z*g1i
	}
	var y0r, y0i, y1r, y1i float64
	for i := 0; i < n; i++ {
		y0r, y0i = e0r[i]-(l0r[i]*y0r-l0i[i]*y0i), e0i[i]-(l0r[i]*y0i+l0i[i]*y0r)
		y1r, y1i = e1r[i]-(l1r[i]*y1r-l1i[i]*y1i), e1i[i]-(l1r[i]*y1i+l1i[i]*y1r)
		e0r[i], e0i[i] = y0r*r0r[i]-y0i*r0i[i], y0r*r0i[i]+y0i*r0r[i]
		e1r[i], e1i[i] = y1r*r1r[i]-y1i*r1i[i], y1r*r1i[i]+y1i*r1r[i]
	}
	q0r, q0i, q1r, q1i := f0.qr[:n], f0.qi[:n], f1.qr[:n], f1.qi[:n]
	c0r, c0i, c1r, c1i := real(c0), imag(c0), real(c1), imag(c1)
	var x0r, x0i, x1r, x1i float64
	for i := n - 1; i >= 0; i-- {
		x0r, x0i = e0r[i]+(q0r[i]*x0r-q0i[i]*x0i), e0i[i]+(q0r[i]*x0i+q0i[i]*x0r)
		x1r, x1i = e1r[i]+(q1r[i]*x1r-q1i[i]*x1i), e1i[i]+(q1r[i]*x1i+q1i[i]*x1r)
		acc[i] += (c0r*x0r - c0i*x0i) + (c1r*x1r - c1i*x1i)
		if a := math.Abs(x0r) + math.Abs(x0i); a > m0 {
			m0 = a
		}
		if a := math.Abs(x1r) + math.Abs(x1i); a > m1 {
			m1 = a
		}
	}
	return m0, m1
}

// packTriQuad packs up to four no-interchange factorisations of order n
// row by row for the four-node kernel: row i holds lr, li, rr, ri, qr, qi
// of lanes 0…3 (24 values); absent lanes are zero, so their solutions are
// zero.
func packTriQuad(fs []*triNoPivot, n int) []float64 {
	q := make([]float64, 24*n)
	for k, f := range fs {
		for i := 0; i < n; i++ {
			r := q[24*i : 24*i+24]
			r[k], r[4+k], r[8+k], r[12+k], r[16+k], r[20+k] = f.lr[i], f.li[i], f.rr[i], f.ri[i], f.qr[i], f.qi[i]
		}
	}
	return q
}

// factorTriQuad factors s_k I − T for up to four shifts straight into q
// (24n values) in the layout of packTriQuad, the lanes side by side so
// that their recurrences (each through a complex reciprocal a row)
// overlap. ok is false when any lane would need a row interchange (then
// use factorTri); err is non-nil for an exactly singular pivot.
func factorTriQuad(q []float64, shifts []complex128, sub, diag, sup []float64) (ok bool, err error) {
	n := len(diag)
	if len(q) < 24*n || len(shifts) > 4 || len(sub) < n-1 || len(sup) < n-1 {
		panic(ErrShape)
	}
	var sr, si, lr, li [4]float64
	for k, s := range shifts {
		sr[k], si[k] = real(s), imag(s)
	}
	lanes := len(shifts)
	for i := 0; i < n; i++ {
		r := q[24*i : 24*i+24 : 24*i+24]
		var above, below, right float64 // t_{i−1,i}, t_{i+1,i}, t_{i,i+1}
		if i > 0 {
			above = sup[i-1]
		}
		if i < n-1 {
			below, right = sub[i], sup[i]
		}
		for k := 0; k < 4; k++ {
			if k >= lanes {
				r[k], r[4+k], r[8+k], r[12+k], r[16+k], r[20+k] = 0, 0, 0, 0, 0, 0
				continue
			}
			dr, di := sr[k]-diag[i]+lr[k]*above, si[k]+li[k]*above
			if dr == 0 && di == 0 {
				return false, errorf("sI − A is singular (s = %v)", shifts[k])
			}
			if math.Abs(dr)+math.Abs(di) < math.Abs(below) {
				return false, nil
			}
			ar, ai := recipFast(dr, di)
			r[k], r[4+k], r[8+k], r[12+k], r[16+k], r[20+k] = lr[k], li[k], ar, ai, right*ar, right*ai
			lr[k], li[k] = -below*ar, -below*ai
		}
	}
	return true, nil
}

// etdFusedQuad is etdFusedPair for four nodes packed by packTriQuad, with
// the assembly kernel (haveTriQuad): p[k] and c[k] are lane k's
// coefficients, e a work vector of length 8n; it returns max_i |x_k,i|
// (re + im) for each lane.
func etdFusedQuad(acc, e, fac, v []float64, w [3][]float64, p [4][3]complex128, c [4]complex128) (m [4]float64) {
	n := len(v)
	if len(acc) < n || len(e) < 8*n || len(fac) < 24*n || len(w[0]) < n || len(w[1]) < n || len(w[2]) < n || n == 0 {
		panic(ErrShape)
	}
	var coef [24]float64
	var cw [8]float64
	for k := range p {
		for j := range p[k] {
			coef[8*j+k], coef[8*j+4+k] = real(p[k][j]), imag(p[k][j])
		}
		cw[k], cw[4+k] = real(c[k]), imag(c[k])
	}
	etdTriFwd4(n, &fac[0], &v[0], &w[0][0], &w[1][0], &w[2][0], &coef[0], &e[0])
	etdTriBwd4(n, &fac[0], &e[0], &acc[0], &cw[0], &m[0])
	return m
}

// triPad holds the off-diagonals of a tridiagonal T of order n padded to
// length n for the four-lane factorisation: above[i] = t_{i−1,i} (0 at
// i = 0), below[i] = t_{i+1,i} and right[i] = t_{i,i+1} (0 at i = n−1).
type triPad struct{ above, below, right []float64 }

func padTri(sub, sup []float64) triPad {
	n := len(sub) + 1
	p := triPad{make([]float64, n), make([]float64, n), make([]float64, n)}
	copy(p.above[1:], sup)
	copy(p.below, sub)
	copy(p.right, sup)
	return p
}

var fourOnes = [4]float64{1, 1, 1, 1}

// factorTriQuadAsm is factorTriQuad by the assembly recurrence
// (haveTriQuad), four lanes in one register chain with one division per
// row. Where a pivot is too small or too large for 1/d = conj(d)/|d|²
// (below 1e-150 or above 1e150 in size, or exactly zero) it leaves the
// work to factorTriQuad, which scales and reports a singular pivot.
func factorTriQuadAsm(q []float64, shifts []complex128, sub, diag, sup []float64, pad triPad) (ok bool, err error) {
	n := len(diag)
	if len(q) < 24*n || len(shifts) == 0 || len(shifts) > 4 || len(pad.above) != n || len(pad.below) != n || len(pad.right) != n {
		panic(ErrShape)
	}
	var sh [8]float64
	for k := range 4 {
		s := shifts[min(k, len(shifts)-1)]
		sh[k], sh[4+k] = real(s), imag(s)
	}
	var st [12]float64
	etdTriFactor4(n, &q[0], &sh[0], &pad.above[0], &diag[0], &pad.below[0], &pad.right[0], &fourOnes[0], &st[0])
	for k := range shifts {
		if !(st[4+k] > 1e-150 && st[8+k] < 1e150) {
			return factorTriQuad(q, shifts, sub, diag, sup)
		}
	}
	for k := range shifts {
		if st[k] < 0 {
			return false, nil
		}
	}
	for k := len(shifts); k < 4; k++ {
		for i := 0; i < n; i++ {
			r := q[24*i : 24*i+24]
			r[k], r[4+k], r[8+k], r[12+k], r[16+k], r[20+k] = 0, 0, 0, 0, 0, 0
		}
	}
	return true, nil
}

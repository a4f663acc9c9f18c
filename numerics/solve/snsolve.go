package solve

import (
	"math"
	"math/cmplx"

	"semiflow/numerics/linop"
)

// solveBlock overwrites the n×m row-major block X (rows in elimination
// order) with M̃⁻¹X, M̃ the permuted matrix: forward substitution with the
// row swaps of each supernode applied as it is reached, then backward
// substitution; each supernode's work is a triangular solve and a matrix
// product on m columns (BLAS-3 for several right-hand sides).
func (f *snFactor[T]) solveBlock(X []T, m int) {
	sn := f.sn
	ns := len(sn.rows)
	var ws workspace
	var tmp []T
	for s := 0; s < ns; s++ {
		c0 := sn.first[s]
		k, r, u, l := f.blocks(s)
		fz := k + r
		for j := 0; j < k; j++ {
			if p := f.piv[c0+j]; p != j {
				a, b := X[(c0+j)*m:(c0+j+1)*m], X[(c0+p)*m:(c0+p+1)*m]
				for c := range a {
					a[c], b[c] = b[c], a[c]
				}
			}
		}
		xs := X[c0*m : (c0+k)*m]
		trsmLowerUnit(k, m, u, fz, xs, m, &ws)
		if r == 0 {
			continue
		}
		if cap(tmp) < r*m {
			tmp = make([]T, r*m)
		}
		t := tmp[:r*m]
		clear(t)
		gemmSub(r, m, k, l, k, xs, m, t, m, &ws)
		for i, g := range sn.rows[s] {
			dst := X[g*m : (g+1)*m]
			for c, v := range t[i*m : (i+1)*m] {
				dst[c] += v
			}
		}
	}
	for s := ns - 1; s >= 0; s-- {
		c0 := sn.first[s]
		k, r, u, _ := f.blocks(s)
		fz := k + r
		xs := X[c0*m : (c0+k)*m]
		if r > 0 {
			if cap(tmp) < r*m {
				tmp = make([]T, r*m)
			}
			t := tmp[:r*m]
			for i, g := range sn.rows[s] {
				copy(t[i*m:(i+1)*m], X[g*m:(g+1)*m])
			}
			gemmSub(k, m, r, u[k:], fz, t, m, xs, m, &ws)
		}
		trsmUpper(k, m, u, fz, xs, m, &ws)
	}
}

// solveAdjoint overwrites x (elimination order) with M̃⁻ᴴx: the operations
// of solveBlock transposed, conjugated and in reverse order.
func (f *snFactor[T]) solveAdjoint(x []T) {
	sn := f.sn
	ns := len(sn.rows)
	for s := 0; s < ns; s++ {
		c0 := sn.first[s]
		k, r, u, _ := f.blocks(s)
		fz := k + r
		xs := x[c0 : c0+k]
		for i := 0; i < k; i++ {
			v := xs[i]
			for p := 0; p < i; p++ {
				v -= conjT(u[p*fz+i]) * xs[p]
			}
			xs[i] = v / conjT(u[i*fz+i])
		}
		for a, g := range sn.rows[s] {
			var v T
			for p := 0; p < k; p++ {
				v += conjT(u[p*fz+k+a]) * xs[p]
			}
			x[g] -= v
		}
	}
	for s := ns - 1; s >= 0; s-- {
		c0 := sn.first[s]
		k, r, u, l := f.blocks(s)
		fz := k + r
		xs := x[c0 : c0+k]
		for a, g := range sn.rows[s] {
			xg := x[g]
			if xg == 0 {
				continue
			}
			for p, v := range l[a*k : (a+1)*k] {
				xs[p] -= conjT(v) * xg
			}
		}
		_ = r
		for i := k - 1; i >= 0; i-- {
			v := xs[i]
			for p := i + 1; p < k; p++ {
				v -= conjT(u[p*fz+i]) * xs[p]
			}
			xs[i] = v
		}
		for j := k - 1; j >= 0; j-- {
			if p := f.piv[c0+j]; p != j {
				xs[j], xs[p] = xs[p], xs[j]
			}
		}
	}
}

// Len returns n.
func (s *Supernodal) Len() int { return s.n }

// Real reports whether the factors are real (z real).
func (s *Supernodal) Real() bool { return s.real }

// NNZ returns the numbers of stored entries of L and U (the unit diagonal
// of L included, explicit zeros of amalgamated supernodes included).
func (s *Supernodal) NNZ() (l, u int) {
	var sn *snodes
	if s.real {
		sn = s.rf.sn
	} else {
		sn = s.cf.sn
	}
	for b := range sn.rows {
		k := sn.first[b+1] - sn.first[b]
		r := len(sn.rows[b])
		l += k*(k+1)/2 + r*k
		u += k*(k+1)/2 + k*r
	}
	return l, u
}

// Solve sets dst = (zI − A)⁻¹ b (dst and b may be the same slice). It
// panics with ErrShape on a length mismatch.
func (s *Supernodal) Solve(dst, b []complex128) error {
	if len(dst) != s.n || len(b) != s.n {
		panic(ErrShape)
	}
	return s.SolveMany([][]complex128{dst}, [][]complex128{b})
}

// SolveMany sets dst[c] = (zI − A)⁻¹ b[c] for every right-hand side c,
// in one blocked pass over the factors (a real factorisation treats the
// real and imaginary parts as two right-hand sides). dst[c] and b[c] may
// be the same slice. It panics with ErrShape on a length mismatch.
func (s *Supernodal) SolveMany(dst, b [][]complex128) error {
	if len(dst) != len(b) {
		panic(ErrShape)
	}
	for c := range b {
		if len(dst[c]) != s.n || len(b[c]) != s.n {
			panic(ErrShape)
		}
	}
	if len(b) == 0 {
		return nil
	}
	var orig [][]complex128
	if s.Weak > 0 {
		orig = make([][]complex128, len(b))
		for c := range b {
			orig[c] = append([]complex128(nil), b[c]...)
		}
	}
	s.apply(dst, b)
	if s.Weak > 0 {
		s.refine(dst, orig)
	}
	return nil
}

// apply sets dst = M⁻¹ b for each column without refinement.
func (s *Supernodal) apply(dst, b [][]complex128) {
	n, m := s.n, len(b)
	if s.real {
		q := s.rf.sn.q
		w := 2 * m
		X := make([]float64, n*w)
		for j, o := range q {
			for c := range b {
				v := b[c][o]
				X[j*w+2*c], X[j*w+2*c+1] = real(v), imag(v)
			}
		}
		s.rf.solveBlock(X, w)
		for j, o := range q {
			for c := range dst {
				dst[c][o] = complex(X[j*w+2*c], X[j*w+2*c+1])
			}
		}
		return
	}
	q := s.cf.sn.q
	X := make([]complex128, n*m)
	for j, o := range q {
		for c := range b {
			X[j*m+c] = b[c][o]
		}
	}
	s.cf.solveBlock(X, m)
	for j, o := range q {
		for c := range dst {
			dst[c][o] = X[j*m+c]
		}
	}
}

// BackwardError returns the normwise backward error
// ‖b − (zI − A)x‖∞ / (‖zI − A‖∞ ‖x‖∞ + ‖b‖∞) of x as a solution.
func (s *Supernodal) BackwardError(x, b []complex128) float64 {
	return backwardError(s.a, s.z, s.anrm, x, b)
}

func backwardError(a linop.Operator, z complex128, norm float64, x, b []complex128) float64 {
	r := Residual(a, z, x, b)
	var rn, xn, bn float64
	for i := range r {
		rn = math.Max(rn, abs1(r[i]))
		xn = math.Max(xn, abs1(x[i]))
		bn = math.Max(bn, abs1(b[i]))
	}
	if d := norm*xn + bn; d > 0 {
		return rn / d
	}
	return 0
}

// refineTarget is the backward error refinement aims for (4u).
const refineTarget = 4 * 0x1p-53

// refine improves each solution x[c] of M x = b[c] (M = zI − a, ‖M‖∞ =
// norm; solve applies M's factors) by iterative refinement, residual and
// correction in working precision, while its backward error exceeds
// refineTarget and keeps decreasing, at most five steps.
func refine(a linop.Operator, z complex128, norm float64, x, b [][]complex128, solve func(d, r []complex128)) {
	for c := range x {
		eta := backwardError(a, z, norm, x[c], b[c])
		for it := 0; it < 5 && eta > refineTarget; it++ {
			r := Residual(a, z, x[c], b[c])
			d := make([]complex128, len(r))
			solve(d, r)
			y := make([]complex128, len(r))
			for i := range y {
				y[i] = x[c][i] + d[i]
			}
			e2 := backwardError(a, z, norm, y, b[c])
			if !(e2 < eta) {
				break
			}
			copy(x[c], y)
			eta = e2
		}
	}
}

func (s *Supernodal) refine(x, b [][]complex128) {
	refine(s.a, s.z, s.anrm, x, b, func(d, r []complex128) {
		s.apply([][]complex128{d}, [][]complex128{r})
	})
}

// SolveH sets dst = (zI − A)⁻ᴴ b (dst and b may be the same slice). It
// panics with ErrShape on a length mismatch.
func (s *Supernodal) SolveH(dst, b []complex128) error {
	n := s.n
	if len(dst) != n || len(b) != n {
		panic(ErrShape)
	}
	var orig []complex128
	if s.Weak > 0 {
		orig = append([]complex128(nil), b...)
	}
	s.applyH(dst, b)
	if s.Weak > 0 {
		// Mᴴ = z̄I − Aᵀ, and ‖Mᴴ‖∞ = ‖M‖₁.
		refine(&linop.Adjoint{A: s.a}, cmplx.Conj(s.z), s.anrm1, [][]complex128{dst}, [][]complex128{orig}, s.applyH)
	}
	return nil
}

func (s *Supernodal) applyH(dst, b []complex128) {
	n := s.n
	if s.real {
		q := s.rf.sn.q
		xr, xi := make([]float64, n), make([]float64, n)
		for j, o := range q {
			xr[j], xi[j] = real(b[o]), imag(b[o])
		}
		s.rf.solveAdjoint(xr)
		s.rf.solveAdjoint(xi)
		for j, o := range q {
			dst[o] = complex(xr[j], xi[j])
		}
		return
	}
	q := s.cf.sn.q
	x := make([]complex128, n)
	for j, o := range q {
		x[j] = b[o]
	}
	s.cf.solveAdjoint(x)
	for j, o := range q {
		dst[o] = x[j]
	}
}

// SolveReal sets dst = (sI − A)⁻¹ b for a real factorisation (Real reports
// it), in real arithmetic throughout; dst and b may be the same slice. It
// panics with ErrShape on a length mismatch, and if the factors are
// complex.
func (s *Supernodal) SolveReal(dst, b []float64) error {
	n := s.n
	if len(dst) != n || len(b) != n || !s.real {
		panic(ErrShape)
	}
	if s.Weak > 0 {
		// Refinement works on the complex form.
		bz, xz := make([]complex128, n), make([]complex128, n)
		for i, v := range b {
			bz[i] = complex(v, 0)
		}
		if err := s.Solve(xz, bz); err != nil {
			return err
		}
		for i, v := range xz {
			dst[i] = real(v)
		}
		return nil
	}
	q := s.rf.sn.q
	X := make([]float64, n)
	for j, o := range q {
		X[j] = b[o]
	}
	s.rf.solveBlock(X, 1)
	for j, o := range q {
		dst[o] = X[j]
	}
	return nil
}

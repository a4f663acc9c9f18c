package spectra

import (
	"math"
	"math/cmplx"
	"sync/atomic"

	"gonum.org/v1/gonum/mat"
)

// triSigma computes σ_min(zI − T) for a fixed upper-triangular T by inverse
// Lanczos: the Lanczos process on the Hermitian positive definite
// B = ((zI − T)ᴴ(zI − T))⁻¹, each step costing one solve with (zI − T)ᴴ
// and one with zI − T (O(n²)), with full reorthogonalisation. The largest
// Ritz value θ of B gives σ_min = θ^{-1/2} (Trefethen, Acta Numerica 1999;
// Lanczos convergence from below, so θ^{-1/2} ≥ σ_min until converged).
// It stops when the Ritz residual r = β_j|s_j| is at most tol·θ (a bound on
// the error of θ), or when r²/(θ₁ − θ₂) ≤ tol·θ and θ changed by at most
// tol·θ in the last step (the gap-based estimate), so the relative error of
// σ_min is about tol/2 or less.
type triSigma struct {
	t       []complex128
	st      *splitTri
	n       int
	tol     float64
	maxIter int

	q     [][]complex128 // Lanczos basis
	w, y  []complex128
	start []complex128 // warm start (previous right singular vector)
	cold  []complex128 // fixed pseudo-random start
	alpha []float64
	beta  []float64
	// mix > 0 adds mix times the unit cold start to a warm start, so that
	// the start keeps a component along every singular vector even when
	// the previous one is nearly orthogonal to the wanted one.
	mix float64
	// done, if not nil, stops the iteration early (unconverged) once it is
	// closed: a cancelled context's Done channel.
	done <-chan struct{}
	// work, if not nil, is increased by n² for every Lanczos step (the
	// unit of a workBudget).
	work *atomic.Int64
	// spent is this solver's own work in the same units.
	spent int64
}

func newTriSigma(t []complex128, n int, tol float64, maxIter int) *triSigma {
	var st *splitTri
	if t != nil {
		st = newSplitTri(t, n)
	}
	return newTriSigmaOn(st, t, n, tol, maxIter)
}

// newTriSigmaOn is newTriSigma for T already split into st (which may be
// shared between solvers: only its work vectors are written, and those
// are the solver's own, see splitTri.share).
func newTriSigmaOn(st *splitTri, t []complex128, n int, tol float64, maxIter int) *triSigma {
	ts := &triSigma{t: t, n: n, tol: tol, maxIter: maxIter, st: st}
	ts.w = make([]complex128, n)
	ts.y = make([]complex128, n)
	ts.start = make([]complex128, n)
	// A fixed pseudo-random start (linear congruential), reproducible and
	// with no special relation to T.
	seed := uint64(12345)
	for i := range ts.start {
		seed = seed*6364136223846793005 + 1442695040888963407
		re := float64(seed>>11)/float64(1<<53) - 0.5
		seed = seed*6364136223846793005 + 1442695040888963407
		im := float64(seed>>11)/float64(1<<53) - 0.5
		ts.start[i] = complex(re, im)
	}
	ts.cold = append([]complex128(nil), ts.start...)
	return ts
}

// sigmaResult is σ_min(zI − T) with the right singular vector v (unit) and
// the number of Lanczos steps; v is nil unless requested.
type sigmaResult struct {
	sigma float64
	v     []complex128
	its   int
	conv  bool
}

// eval computes σ_min(zI − T). If warm, the previous right singular vector
// is used as the start vector. If wantVec, the right singular vector is
// returned (and kept for the next warm start in any case).
func (ts *triSigma) eval(z complex128, warm, wantVec bool) sigmaResult {
	n := ts.n
	if n == 0 {
		return sigmaResult{sigma: math.Inf(1), conv: true}
	}
	for i := 0; i < n; i++ {
		if z == ts.t[i*n+i] {
			v := make([]complex128, n)
			v[i] = 1 // not the singular vector in general, but σ_min = 0 exactly
			return sigmaResult{sigma: 0, v: v, conv: true}
		}
	}
	maxIter := min(ts.maxIter, n)
	for len(ts.q) < maxIter {
		ts.q = append(ts.q, make([]complex128, n))
	}
	q0 := ts.q[0]
	copy(q0, ts.start)
	if !warm {
		copy(q0, ts.cold)
	} else if ts.mix > 0 {
		caxpy(q0, complex(ts.mix/cnorm(ts.cold), 0), ts.cold)
	}
	scal(q0, 1/cnorm(q0))
	ts.alpha = ts.alpha[:0]
	ts.beta = ts.beta[:0]
	var theta float64
	var s []float64
	conv := false
	j := 0
	for ; j < maxIter; j++ {
		if ts.done != nil && j > 0 && j%4 == 0 && isClosed(ts.done) {
			break
		}
		qj := ts.q[j]
		copy(ts.w, qj)
		ts.st.applyInv(z, ts.w)
		w := ts.w
		a := real(cdot(qj, w))
		ts.alpha = append(ts.alpha, a)
		// Full reorthogonalisation (twice is enough; Giraud et al. 2005).
		for pass := 0; pass < 2; pass++ {
			for k := 0; k <= j; k++ {
				c := cdot(ts.q[k], w)
				caxpy(w, -c, ts.q[k])
			}
		}
		b := cnorm(w)
		prev := theta
		var second float64
		theta, second, s = tridiagTop2(ts.alpha, ts.beta, true)
		if math.IsInf(theta, 0) || math.IsNaN(theta) {
			break
		}
		res := b * math.Abs(s[j])
		// Ritz value error ≤ res, and ≈ res²/gap once the gap to the next
		// eigenvalue is resolved (Parlett, The Symmetric Eigenvalue
		// Problem, 1998, §11.7); the gap estimate θ₁ − θ₂ is trusted only
		// when θ₁ has also stopped moving.
		gapOK := j > 0 && theta-second > 0 && res*res/(theta-second) <= ts.tol*theta && math.Abs(theta-prev) <= ts.tol*theta
		if res <= ts.tol*theta || gapOK || b <= 1e-14*theta {
			conv = true
			j++
			break
		}
		if j+1 < maxIter {
			ts.beta = append(ts.beta, b)
			copy(ts.q[j+1], w)
			scal(ts.q[j+1], 1/b)
		}
	}
	if j > maxIter {
		j = maxIter
	}
	ts.spent += int64(max(j, 1)) * int64(n) * int64(n)
	if ts.work != nil {
		ts.work.Add(int64(max(j, 1)) * int64(n) * int64(n))
	}
	r := sigmaResult{sigma: 1 / math.Sqrt(theta), its: j, conv: conv}
	if math.IsInf(theta, 1) || math.IsNaN(theta) {
		r.sigma = 0
	}
	// v = Q s, also stored as the next warm start.
	v := ts.start
	for i := range v {
		v[i] = 0
	}
	for k := 0; k < len(s); k++ {
		caxpy(v, complex(s[k], 0), ts.q[k])
	}
	if nv := cnorm(v); nv > 0 {
		scal(v, 1/nv)
	} else {
		v[0] = 1
	}
	if wantVec {
		r.v = append([]complex128(nil), v...)
	}
	return r
}

// tridiagTop returns the largest and second largest eigenvalues of the
// symmetric tridiagonal matrix with diagonal a and off-diagonal b, and the
// unit eigenvector of the largest.
func tridiagTop(a, b []float64) (float64, float64, []float64) {
	k := len(a)
	if k == 1 {
		return a[0], math.Inf(-1), []float64{1}
	}
	sym := mat.NewSymDense(k, nil)
	for i := 0; i < k; i++ {
		sym.SetSym(i, i, a[i])
		if i+1 < k {
			sym.SetSym(i, i+1, b[i])
		}
	}
	var es mat.EigenSym
	if !es.Factorize(sym, true) {
		return math.NaN(), math.NaN(), make([]float64, k)
	}
	vals := es.Values(nil)
	var vecs mat.Dense
	es.VectorsTo(&vecs)
	top := k - 1 // ascending order
	s := make([]float64, k)
	for i := range s {
		s[i] = vecs.At(i, top)
	}
	return vals[top], vals[top-1], s
}

// leftVector returns u = (zI − T) v / σ, the left singular vector that goes
// with the right singular vector v of zI − T (upper-triangular T).
func leftVector(t []complex128, n int, z complex128, v []complex128, sigma float64) []complex128 {
	u := make([]complex128, n)
	for i := 0; i < n; i++ {
		acc := z * v[i]
		row := t[i*n+i : i*n+n]
		for j, tij := range row {
			acc -= tij * v[i+j]
		}
		u[i] = acc
	}
	if sigma > 0 {
		scal(u, 1/cnorm(u))
	}
	return u
}

func cdot(x, y []complex128) complex128 { // xᴴ y
	var s complex128
	for i, xi := range x {
		s += cmplx.Conj(xi) * y[i]
	}
	return s
}

func cnorm(x []complex128) float64 {
	var s float64
	for _, xi := range x {
		s += real(xi)*real(xi) + imag(xi)*imag(xi)
	}
	return math.Sqrt(s)
}

func caxpy(y []complex128, a complex128, x []complex128) {
	for i, xi := range x {
		y[i] += a * xi
	}
}

func scal(x []complex128, a float64) {
	for i := range x {
		x[i] *= complex(a, 0)
	}
}

// tridiagTopFast returns the largest eigenvalue θ of the symmetric
// tridiagonal matrix T (diagonal a, off-diagonal b) and its unit
// eigenvector, in O(k) operations per bisection step: θ by Sturm-sequence
// bisection on the Gershgorin interval (to relative 1e-15), the vector by
// two steps of inverse iteration with T − θ'I, θ' just above θ, which is
// negative definite so elimination without pivoting is stable.
func tridiagTopFast(a, b []float64) (float64, []float64) {
	th, _, s := tridiagTop2(a, b, false)
	return th, s
}

// tridiagTop2 is tridiagTopFast that also returns the second largest
// eigenvalue (by a second bisection) when second is true, −Inf otherwise
// or when k = 1.
func tridiagTop2(a, b []float64, second bool) (float64, float64, []float64) {
	k := len(a)
	lo, hi := math.Inf(1), math.Inf(-1)
	for i := 0; i < k; i++ {
		r := 0.0
		if i > 0 {
			r += math.Abs(b[i-1])
		}
		if i+1 < k {
			r += math.Abs(b[i])
		}
		lo = math.Min(lo, a[i]-r)
		hi = math.Max(hi, a[i]+r)
	}
	// count returns the number of eigenvalues > x.
	count := func(x float64) int {
		c := 0
		d := 1.0
		for i := 0; i < k; i++ {
			off := 0.0
			if i > 0 {
				off = b[i-1] * b[i-1] / d
			}
			d = a[i] - x - off
			if d == 0 {
				d = -1e-300
			}
			if d > 0 {
				c++
			}
		}
		return c
	}
	scale := math.Max(math.Abs(lo), math.Abs(hi))
	lo0, hi0 := lo, hi
	bisect := func(want int) float64 { // largest x with count(x) ≥ want
		lo, hi := lo0, hi0
		for it := 0; it < 200 && hi-lo > 1e-15*scale; it++ {
			mid := (lo + hi) / 2
			if count(mid) >= want {
				lo = mid
			} else {
				hi = mid
			}
		}
		return hi
	}
	theta := bisect(1)
	theta2 := math.Inf(-1)
	if second && k > 1 {
		theta2 = bisect(2)
	}
	shift := theta + 1e-13*math.Max(scale, 1e-300)
	s := make([]float64, k)
	for i := range s {
		s[i] = 1
	}
	diag := make([]float64, k)
	for pass := 0; pass < 2; pass++ {
		// Solve (T − shift·I) y = s by elimination (negative definite).
		for i := 0; i < k; i++ {
			diag[i] = a[i] - shift
			if i > 0 {
				l := b[i-1] / diag[i-1]
				diag[i] -= l * b[i-1]
				s[i] -= l * s[i-1]
			}
		}
		s[k-1] /= diag[k-1]
		for i := k - 2; i >= 0; i-- {
			s[i] = (s[i] - b[i]*s[i+1]) / diag[i]
		}
		nrm := 0.0
		for _, v := range s {
			nrm += v * v
		}
		nrm = math.Sqrt(nrm)
		for i := range s {
			s[i] /= nrm
		}
	}
	return theta, theta2, s
}

// isClosed reports whether the channel done is closed.
func isClosed(done <-chan struct{}) bool {
	select {
	case <-done:
		return true
	default:
		return false
	}
}

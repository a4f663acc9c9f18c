package gemm

import (
	"math"
	"math/cmplx"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// The LAPACK in use (gonum's or the system one through lapack64) answers
// closed-form problems through gonum's mat, on both sides of lapackSmall.

func secondDifference(n int) *mat.Dense {
	a := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		a.Set(i, i, -2)
		if i+1 < n {
			a.Set(i, i+1, 1)
			a.Set(i+1, i, 1)
		}
	}
	return a
}

// closed form: −4 sin²(kπ/(2(n+1))), k = 1..n.
func secondDifferenceValue(n, k int) float64 {
	s := math.Sin(float64(k) * math.Pi / float64(2*(n+1)))
	return -4 * s * s
}

func TestLAPACKEigenClosedForm(t *testing.T) {
	for _, n := range []int{5, 31, 32, 120} {
		a := secondDifference(n)
		var e mat.Eigen
		if !e.Factorize(a, mat.EigenBoth) {
			t.Fatalf("n=%d: Eigen failed (%s)", n, LAPACK)
		}
		vals := e.Values(nil)
		used := make([]bool, n)
		for k := 1; k <= n; k++ {
			want := secondDifferenceValue(n, k)
			best, at := math.Inf(1), -1
			for i, v := range vals {
				if !used[i] && cmplx.Abs(v-complex(want, 0)) < best {
					best, at = cmplx.Abs(v-complex(want, 0)), i
				}
			}
			used[at] = true
			if best > 1e-13 {
				t.Errorf("n=%d: eigenvalue %d is %.3g from the closed form (%s)", n, k, best, LAPACK)
			}
		}
		var es mat.EigenSym
		if !es.Factorize(mat.NewSymDense(n, a.RawMatrix().Data), true) {
			t.Fatalf("n=%d: EigenSym failed", n)
		}
		for k, v := range es.Values(nil) { // ascending: k-th is the (n−k)-th closed form
			if want := secondDifferenceValue(n, n-k); math.Abs(v-want) > 1e-13 {
				t.Errorf("n=%d: symmetric eigenvalue %d = %.16g, closed form %.16g (%s)", n, k, v, want, LAPACK)
			}
		}
		var svd mat.SVD
		if !svd.Factorize(a, mat.SVDThin) {
			t.Fatalf("n=%d: SVD failed", n)
		}
		// Singular values of a symmetric matrix are |λ|: the largest is
		// 4 sin²(nπ/(2(n+1))).
		if s := svd.Values(nil); math.Abs(s[0]+secondDifferenceValue(n, n)) > 1e-13 {
			t.Errorf("n=%d: σ_max = %.16g, closed form %.16g", n, s[0], -secondDifferenceValue(n, n))
		}
		// LU: solve A x = b for a known x.
		var lu mat.LU
		lu.Factorize(a)
		x := mat.NewVecDense(n, nil)
		for i := 0; i < n; i++ {
			x.SetVec(i, math.Cos(float64(i)))
		}
		var b, got mat.VecDense
		b.MulVec(a, x)
		if err := lu.SolveVecTo(&got, false, &b); err != nil {
			t.Fatalf("n=%d: LU solve: %v", n, err)
		}
		got.SubVec(&got, x)
		if d := mat.Norm(&got, math.Inf(1)); d > 1e-10 {
			t.Errorf("n=%d: LU solve off by %.3g", n, d)
		}
	}
}

func TestRealSchurIdentity(t *testing.T) {
	// A = Z T Zᵀ, Z orthogonal, T quasi-triangular with standardised 2×2
	// blocks (equal diagonal, off-diagonals of opposite signs): the defining
	// identities (common practice, no source). A rotation-plus-shift
	// matrix has complex pairs.
	for _, n := range []int{6, 64} {
		h := make([]float64, n*n)
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				h[i*n+j] = math.Sin(float64(3*i+7*j+1)) + 0.3*float64(j-i)
			}
		}
		orig := append([]float64(nil), h...)
		q := make([]float64, n*n)
		wr, wi := make([]float64, n), make([]float64, n)
		if u := RealSchur(n, h, q, wr, wi); u != 0 {
			t.Fatalf("n=%d: %d unconverged", n, u)
		}
		pairs := 0
		for i := 0; i+1 < n; i++ {
			if c := h[(i+1)*n+i]; c != 0 {
				pairs++
				if h[i*n+i] != h[(i+1)*n+i+1] || c*h[i*n+i+1] >= 0 {
					t.Errorf("n=%d: 2×2 block at %d not standardised", n, i)
				}
			}
			for j := 0; j+1 < i; j++ {
				if h[i*n+j] != 0 {
					t.Fatalf("n=%d: T[%d,%d] = %g", n, i, j, h[i*n+j])
				}
			}
		}
		if pairs == 0 {
			t.Errorf("n=%d: no complex pair — the test lost its point", n)
		}
		Z := mat.NewDense(n, n, q)
		T := mat.NewDense(n, n, h)
		var zt, r mat.Dense
		zt.Mul(Z, T)
		r.Mul(&zt, Z.T())
		r.Sub(&r, mat.NewDense(n, n, orig))
		if d := mat.Norm(&r, math.Inf(1)); d > 1e-12*float64(n) {
			t.Errorf("n=%d: ‖A − Z T Zᵀ‖∞ = %.3g (%s)", n, d, LAPACK)
		}
	}
}

// normalWithKnownSpectrum returns Q D Qᵀ with Q orthogonal (from the QR
// factorisation of a pseudo-random matrix) and D block diagonal: 2×2
// blocks [a b; −b a] (eigenvalues a ± ib) and 1×1 blocks. A normal
// matrix, so its eigenvalues are well conditioned and known exactly.
func normalWithKnownSpectrum(n int) (*mat.Dense, []complex128) {
	g := mat.NewDense(n, n, nil)
	s := uint64(12345)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			s = s*6364136223846793005 + 1442695040888963407
			g.Set(i, j, float64(int64(s>>11))/float64(1<<52)-1)
		}
	}
	var qr mat.QR
	qr.Factorize(g)
	var q mat.Dense
	qr.QTo(&q)
	d := mat.NewDense(n, n, nil)
	var want []complex128
	for k := 0; k < n; {
		a := -float64(k%17) / 4
		if k+1 < n && k%3 != 2 {
			b := 0.5 + float64(k%7)
			d.Set(k, k, a)
			d.Set(k+1, k+1, a)
			d.Set(k, k+1, b)
			d.Set(k+1, k, -b)
			want = append(want, complex(a, b), complex(a, -b))
			k += 2
			continue
		}
		d.Set(k, k, a)
		want = append(want, complex(a, 0))
		k++
	}
	var qd, aa mat.Dense
	qd.Mul(&q, d)
	aa.Mul(&qd, q.T())
	return &aa, want
}

func TestEigenMultishiftKnownSpectrum(t *testing.T) {
	// Orders on both sides of hqrMin and with 4, 10, 20 and more shifts.
	for _, n := range []int{80, 160, 300} {
		a, want := normalWithKnownSpectrum(n)
		var e mat.Eigen
		if !e.Factorize(a, mat.EigenBoth) {
			t.Fatalf("n=%d: Eigen failed (%s)", n, LAPACK)
		}
		if d := matchDistance(e.Values(nil), want); d > 1e-12*float64(n) {
			t.Errorf("n=%d: eigenvalues %.3g from the exact ones (%s)", n, d, LAPACK)
		}
		// Right and left vectors: ‖A v − λ v‖ and ‖u* A − λ u*‖ small.
		var vr, vl mat.CDense
		e.VectorsTo(&vr)
		e.LeftVectorsTo(&vl)
		vals := e.Values(nil)
		worst := 0.0
		for j := 0; j < n; j++ {
			for i := 0; i < n; i++ {
				var r, l complex128
				for k := 0; k < n; k++ {
					r += complex(a.At(i, k), 0) * vr.At(k, j)
					l += cmplx.Conj(vl.At(k, j)) * complex(a.At(k, i), 0)
				}
				worst = math.Max(worst, cmplx.Abs(r-vals[j]*vr.At(i, j)))
				worst = math.Max(worst, cmplx.Abs(l-vals[j]*cmplx.Conj(vl.At(i, j))))
			}
		}
		if worst > 1e-12*float64(n) {
			t.Errorf("n=%d: eigenvector residual %.3g", n, worst)
		}
		h := mat.DenseCopyOf(a).RawMatrix().Data
		q := make([]float64, n*n)
		wr, wi := make([]float64, n), make([]float64, n)
		if u := RealSchur(n, h, q, wr, wi); u != 0 {
			t.Fatalf("n=%d: Schur form: %d unconverged", n, u)
		}
		got := make([]complex128, n)
		for i := range got {
			got[i] = complex(wr[i], wi[i])
		}
		if d := matchDistance(got, want); d > 1e-12*float64(n) {
			t.Errorf("n=%d: Schur eigenvalues %.3g from the exact ones", n, d)
		}
		Z := mat.NewDense(n, n, q)
		var zt, r mat.Dense
		zt.Mul(Z, mat.NewDense(n, n, h))
		r.Mul(&zt, Z.T())
		r.Sub(&r, a)
		if d := mat.Norm(&r, math.Inf(1)); d > 1e-12*float64(n) {
			t.Errorf("n=%d: ‖A − Z T Zᵀ‖∞ = %.3g", n, d)
		}
	}
}

func TestShiftCount(t *testing.T) {
	// The recommended shift counts (Braman, Byers & Mathias; LAPACK's
	// IPARMQ table): 2 below 30, 4, 10, then n/round(log₂ n), 64, 128, 256.
	for _, c := range []struct{ n, ns int }{{20, 2}, {30, 4}, {59, 4}, {60, 10}, {149, 10}, {150, 20}, {500, 54}, {589, 64}, {590, 64}, {3000, 128}, {6000, 256}} {
		if got := shiftCount(c.n); got != c.ns {
			t.Errorf("shiftCount(%d) = %d, want %d", c.n, got, c.ns)
		}
	}
}

// matchDistance pairs each wanted value with the nearest unused one got and
// returns the largest distance.
func matchDistance(got, want []complex128) float64 {
	if len(got) != len(want) {
		return math.Inf(1)
	}
	used := make([]bool, len(got))
	worst := 0.0
	for _, w := range want {
		best, at := math.Inf(1), -1
		for i, g := range got {
			if !used[i] && cmplx.Abs(g-w) < best {
				best, at = cmplx.Abs(g-w), i
			}
		}
		used[at] = true
		worst = math.Max(worst, best)
	}
	return worst
}

//go:build openblas

package lapacke

import (
	"math"
	"math/cmplx"
	"sort"
	"testing"
)

// toeplitz returns the n×n row-major tridiagonal Toeplitz matrix with a on
// the diagonal, b above and c below. Its eigenvalues are
// a + 2√(bc) cos(kπ/(n+1)), k = 1..n (closed form, bc > 0; complex for
// bc < 0).
func toeplitz(n int, a, b, c float64) []float64 {
	m := make([]float64, n*n)
	for i := 0; i < n; i++ {
		m[i*n+i] = a
		if i+1 < n {
			m[i*n+i+1] = b
			m[(i+1)*n+i] = c
		}
	}
	return m
}

func toeplitzValues(n int, a, b, c float64) []complex128 {
	out := make([]complex128, n)
	r := cmplx.Sqrt(complex(b*c, 0))
	for k := 1; k <= n; k++ {
		out[k-1] = complex(a, 0) + 2*r*complex(math.Cos(float64(k)*math.Pi/float64(n+1)), 0)
	}
	return out
}

// matchDistance pairs each wanted value with the nearest unused one got
// and returns the largest distance (the values are well separated).
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

func TestDgeevToeplitz(t *testing.T) {
	// Closed form: tridiagonal Toeplitz eigenvalues, real (bc > 0) and
	// complex (bc < 0).
	for _, tc := range []struct{ a, b, c float64 }{{-2, 1, 1}, {-1, 3, 0.5}, {0.5, 2, -1}} {
		n := 40
		a := toeplitz(n, tc.a, tc.b, tc.c)
		orig := append([]float64(nil), a...)
		wr, wi := make([]float64, n), make([]float64, n)
		vr := make([]float64, n*n)
		if info := Dgeev('N', 'V', n, a, n, wr, wi, nil, 1, vr, n); info != 0 {
			t.Fatalf("Dgeev info %d", info)
		}
		got := make([]complex128, n)
		for i := range got {
			got[i] = complex(wr[i], wi[i])
		}
		want := toeplitzValues(n, tc.a, tc.b, tc.c)
		if d := matchDistance(got, want); d > 1e-12*(1+math.Abs(tc.a)+2*math.Sqrt(math.Abs(tc.b*tc.c))) {
			t.Errorf("a=%g b=%g c=%g: eigenvalues %.3g away from the closed form", tc.a, tc.b, tc.c, d)
		}
		// Residual of the right vectors for the real eigenvalues.
		for j := 0; j < n; j++ {
			if wi[j] != 0 {
				continue
			}
			var res, nv float64
			for i := 0; i < n; i++ {
				s := 0.0
				for k := 0; k < n; k++ {
					s += orig[i*n+k] * vr[k*n+j]
				}
				res = math.Max(res, math.Abs(s-wr[j]*vr[i*n+j]))
				nv = math.Max(nv, math.Abs(vr[i*n+j]))
			}
			if res > 1e-12*nv*8 {
				t.Errorf("residual %g for eigenvalue %g", res, wr[j])
			}
		}
	}
}

func TestDgeesSchur(t *testing.T) {
	// A = Z T Zᵀ with Z orthogonal and T quasi-triangular (common practice,
	// no source: the defining identities of the real Schur form).
	n := 30
	a := make([]float64, n*n)
	s := uint64(7)
	for i := range a {
		s = s*6364136223846793005 + 1442695040888963407
		a[i] = float64(int64(s>>11))/float64(1<<52) - 1
	}
	orig := append([]float64(nil), a...)
	wr, wi := make([]float64, n), make([]float64, n)
	z := make([]float64, n*n)
	if info := Dgees('V', n, a, n, wr, wi, z, n); info != 0 {
		t.Fatalf("Dgees info %d", info)
	}
	for i := 2; i < n; i++ {
		for j := 0; j < i-1; j++ {
			if a[i*n+j] != 0 {
				t.Fatalf("T[%d,%d] = %g below the first subdiagonal", i, j, a[i*n+j])
			}
		}
	}
	var worst, worstQ float64
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			var r, q float64
			for k := 0; k < n; k++ {
				for l := 0; l < n; l++ {
					r += z[i*n+k] * a[k*n+l] * z[j*n+l]
				}
				q += z[k*n+i] * z[k*n+j]
			}
			worst = math.Max(worst, math.Abs(r-orig[i*n+j]))
			if i == j {
				q--
			}
			worstQ = math.Max(worstQ, math.Abs(q))
		}
	}
	if worst > 1e-12 || worstQ > 1e-13 {
		t.Errorf("‖A − Z T Zᵀ‖max = %g, ‖ZᵀZ − I‖max = %g", worst, worstQ)
	}
}

func TestZgeesTriangularSimilarity(t *testing.T) {
	// A = S D S⁻¹ with D = diag(d) and S unit upper triangular: its
	// eigenvalues are d exactly (closed form).
	n := 12
	d := make([]complex128, n)
	for k := range d {
		d[k] = complex(-float64(k)/3, math.Sin(float64(k)))
	}
	// A = S D S⁻¹ with S = I + N (N strictly upper, nilpotent): S⁻¹ = Σ (−N)^k.
	S := make([]complex128, n*n)
	for i := 0; i < n; i++ {
		S[i*n+i] = 1
		for j := i + 1; j < n; j++ {
			S[i*n+j] = complex(0.1*float64(j-i), -0.05*float64(i))
		}
	}
	Sinv := make([]complex128, n*n)
	ipiv := make([]int32, n)
	lu := append([]complex128(nil), S...)
	for i := 0; i < n; i++ {
		Sinv[i*n+i] = 1
	}
	if info := Zgetrf(n, n, lu, n, ipiv); info != 0 {
		t.Fatalf("Zgetrf info %d", info)
	}
	if info := Zgetrs('N', n, n, lu, n, ipiv, Sinv, n); info != 0 {
		t.Fatalf("Zgetrs info %d", info)
	}
	a := make([]complex128, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			var s complex128
			for k := 0; k < n; k++ {
				s += S[i*n+k] * d[k] * Sinv[k*n+j]
			}
			a[i*n+j] = s
		}
	}
	w := make([]complex128, n)
	z := make([]complex128, n*n)
	if info := Zgees('V', n, a, n, w, z, n); info != 0 {
		t.Fatalf("Zgees info %d", info)
	}
	if dist := matchDistance(w, d); dist > 1e-12 {
		t.Errorf("eigenvalues %v are %.3g away from %v", w, dist, d)
	}
}

func TestDgesddAndDgesvd(t *testing.T) {
	// Singular values of the m×n matrix with entries 1/(i+j+1) (a Hilbert
	// section) agree between divide and conquer and QR iteration, and the
	// rank-one matrix u vᵀ has the single singular value ‖u‖‖v‖ (closed form).
	m, n := 7, 5
	a := make([]float64, m*n)
	for i := 0; i < m; i++ {
		for j := 0; j < n; j++ {
			a[i*n+j] = float64(i+1) * float64(2*j-3)
		}
	}
	s := make([]float64, n)
	if info := Dgesdd('N', m, n, append([]float64(nil), a...), n, s, nil, 1, nil, 1); info != 0 {
		t.Fatalf("Dgesdd info %d", info)
	}
	var nu, nv float64
	for i := 0; i < m; i++ {
		nu += float64((i + 1) * (i + 1))
	}
	for j := 0; j < n; j++ {
		nv += float64((2*j - 3) * (2*j - 3))
	}
	if want := math.Sqrt(nu * nv); math.Abs(s[0]-want) > 1e-13*want || s[1] > 1e-13*want {
		t.Errorf("rank one: σ = %v, want %g then zeros", s, want)
	}
	for i := 0; i < m; i++ {
		for j := 0; j < n; j++ {
			a[i*n+j] = 1 / float64(i+j+1)
		}
	}
	s1, s2 := make([]float64, n), make([]float64, n)
	u := make([]float64, m*m)
	vt := make([]float64, n*n)
	if info := Dgesdd('A', m, n, append([]float64(nil), a...), n, s1, u, m, vt, n); info != 0 {
		t.Fatalf("Dgesdd info %d", info)
	}
	if info := Dgesvd('N', 'N', m, n, append([]float64(nil), a...), n, s2, nil, 1, nil, 1); info != 0 {
		t.Fatalf("Dgesvd info %d", info)
	}
	for i := range s1 {
		if math.Abs(s1[i]-s2[i]) > 1e-14*s1[0] {
			t.Errorf("σ_%d: divide and conquer %g, QR %g", i, s1[i], s2[i])
		}
	}
	// U diag(σ) Vᵀ reproduces A.
	for i := 0; i < m; i++ {
		for j := 0; j < n; j++ {
			var r float64
			for k := 0; k < n; k++ {
				r += u[i*m+k] * s1[k] * vt[k*n+j]
			}
			if math.Abs(r-a[i*n+j]) > 1e-14 {
				t.Fatalf("(U Σ Vᵀ)[%d,%d] = %g, A = %g", i, j, r, a[i*n+j])
			}
		}
	}
}

func TestDsyevdSecondDifference(t *testing.T) {
	// −2, 1 second differences: eigenvalues −4 sin²(kπ/(2(n+1))) (closed form).
	n := 50
	a := toeplitz(n, -2, 1, 1)
	w := make([]float64, n)
	if info := Dsyevd('V', 'U', n, a, n, w); info != 0 {
		t.Fatalf("Dsyevd info %d", info)
	}
	want := make([]float64, n)
	for k := 1; k <= n; k++ {
		s := math.Sin(float64(k) * math.Pi / float64(2*(n+1)))
		want[k-1] = -4 * s * s
	}
	sort.Float64s(want)
	for i := range w {
		if math.Abs(w[i]-want[i]) > 1e-13 {
			t.Errorf("λ_%d = %.16g, closed form %.16g", i, w[i], want[i])
		}
	}
}

func TestDgetrfSingularAndSolve(t *testing.T) {
	// A solve against a known solution, and an exactly singular matrix
	// reported through info > 0.
	n := 6
	a := toeplitz(n, 4, -1, -2)
	x := []float64{1, -2, 3, -4, 5, -6}
	b := make([]float64, n)
	for i := 0; i < n; i++ {
		for k := 0; k < n; k++ {
			b[i] += a[i*n+k] * x[k]
		}
	}
	ipiv := make([]int32, n)
	if info := Dgetrf(n, n, a, n, ipiv); info != 0 {
		t.Fatalf("Dgetrf info %d", info)
	}
	if info := Dgetrs('N', n, 1, a, n, ipiv, b, 1); info != 0 {
		t.Fatalf("Dgetrs info %d", info)
	}
	for i := range x {
		if math.Abs(b[i]-x[i]) > 1e-13 {
			t.Errorf("x[%d] = %g, want %g", i, b[i], x[i])
		}
	}
	sing := []float64{1, 2, 2, 4}
	if info := Dgetrf(2, 2, sing, 2, make([]int32, 2)); info != 2 {
		t.Errorf("singular matrix: info %d, want 2 (U[1,1] = 0)", info)
	}
	if info := Dgetrf(-1, 2, sing, 2, make([]int32, 2)); info >= 0 {
		t.Errorf("m = −1: info %d, want < 0", info)
	}
}

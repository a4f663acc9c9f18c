package expo

import (
	"context"
	"fmt"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"
)

// unitRoundoff is u = 2⁻⁵³, the unit roundoff of IEEE double precision.
const unitRoundoff = 0x1p-53

// padeTheta[m] is θ_m, the largest ‖A‖ (in the sense of the α_p bounds)
// for which the [m/m] Padé approximant r_m(A) has relative backward error
// at most u = 2⁻⁵³ in exact arithmetic.
//
// Values as published: Higham, SIAM J. Matrix Anal. Appl. 26 (2005),
// Table 2.3 (θ3…θ9), and Al-Mohy & Higham, SIAM J. Matrix Anal. Appl. 31
// (2009), Algorithm 6.1, which uses θ13 = 4.25 together with the ℓ
// correction against overscaling. Written in from memory of those tables.
var padeTheta = map[int]float64{
	3:  1.495585217958292e-2,
	5:  2.539398330063230e-1,
	7:  9.504178996162932e-1,
	9:  2.097847961257068e0,
	13: 4.25,
}

// ExpInfo records how Exp computed e^A.
type ExpInfo struct {
	Degree     int  // degree m of the [m/m] Padé approximant
	Squarings  int  // number s of squarings; e^A = r_m(2⁻ˢA)^(2ˢ)
	Triangular bool // A was upper triangular; diagonal and superdiagonal recomputed exactly
	Products   int  // matrix–matrix products (excluding the solve)
}

// Exp sets dst = e^A = Σ_k A^k/k! for a square real matrix A, by scaling
// and squaring with Padé approximants of degree 3, 5, 7, 9 or 13 (Higham,
// SIAM J. Matrix Anal. Appl. 2005) and the refinements of Al-Mohy & Higham
// (SIAM J. Matrix Anal. Appl. 2009): the degree and scaling are chosen from
// the quantities ‖A^k‖₁^{1/k} (computed or estimated) rather than ‖A‖₁, so a
// non-normal A with large ‖A‖ but small powers is not overscaled, and a
// backward-error bound ℓ(A,m) adds squarings only when needed. When A is
// upper triangular the diagonal and first superdiagonal of every squaring are
// replaced by their exact values e^{2^{-i}a_jj} and the 2×2 formula
//
//	[e^{λ1}, t(e^{λ2}−e^{λ1})/(λ2−λ1); 0, e^{λ2}],
//
// evaluated as t·e^{(λ1+λ2)/2}·sinh((λ2−λ1)/2)/((λ2−λ1)/2).
//
// A lower triangular A is handled through e^A = (e^{Aᵀ})ᵀ.
//
// dst must be empty or n×n; it may not alias a. Exp panics with ErrShape if
// A is not square or dst has the wrong size. It returns an error if A has a
// non-finite entry or the Padé denominator is numerically singular.
func Exp(dst *mat.Dense, a mat.Matrix) (ExpInfo, error) {
	return ExpContext(context.Background(), dst, a)
}

// ExpContext is Exp with a context checked between the matrix products;
// it returns the context's error when cancelled.
func ExpContext(ctx context.Context, dst *mat.Dense, a mat.Matrix) (ExpInfo, error) {
	n, c := a.Dims()
	if n != c {
		panic(ErrShape)
	}
	if dst.IsEmpty() {
		dst.ReuseAs(n, n)
	} else if r, c := dst.Dims(); r != n || c != n {
		panic(ErrShape)
	}
	var info ExpInfo
	if n == 0 {
		return info, nil
	}
	A := mat.DenseCopyOf(a)
	raw := A.RawMatrix()
	tri, lower := true, true
	for i := 0; i < n; i++ {
		row := raw.Data[i*raw.Stride : i*raw.Stride+n]
		for j, v := range row {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return info, fmt.Errorf("expo: matrix entry (%d,%d) is %v", i, j, v)
			}
			if j < i && v != 0 {
				tri = false
			}
			if j > i && v != 0 {
				lower = false
			}
		}
	}
	if lower && !tri {
		// e^A = (e^{Aᵀ})ᵀ, and Aᵀ is upper triangular.
		var e mat.Dense
		info, err := ExpContext(ctx, &e, A.T())
		dst.Copy(e.T())
		return info, err
	}
	info.Triangular = tri
	if n == 1 {
		dst.Set(0, 0, math.Exp(A.At(0, 0)))
		info.Degree = 0
		return info, nil
	}
	diag := make([]float64, n)
	super := make([]float64, n-1)
	for i := 0; i < n; i++ {
		diag[i] = A.At(i, i)
		if i+1 < n {
			super[i] = A.At(i, i+1)
		}
	}

	normA := mat.Norm(A, 1)
	if normA == 0 {
		dst.Zero()
		for i := 0; i < n; i++ {
			dst.Set(i, i, 1)
		}
		return info, nil
	}
	mul := func(x, y *mat.Dense) *mat.Dense {
		if ctx.Err() != nil {
			return mat.NewDense(n, n, nil) // result discarded below
		}
		var z mat.Dense
		z.Mul(x, y)
		info.Products++
		return &z
	}
	// root returns x^{1/p} for x ≈ ‖A^p‖₁, or ‖A‖₁ (an upper bound on it)
	// when the power overflowed: for ‖A‖₁ beyond ~1e50, A⁶ is not finite,
	// and an infinite η once chose no scaling at all (NaN entries).
	root := func(x float64, p int) float64 {
		if r := math.Pow(x, 1/float64(p)); r <= normA {
			return r
		}
		return normA
	}
	pow := func(b *mat.Dense, p int) float64 { // estimate of ‖b^p‖₁
		return normEst1Dense(b, p)
	}
	A2 := mul(A, A)
	d6 := root(pow(A2, 3), 6)
	eta1 := math.Max(root(pow(A2, 2), 4), d6)
	var A4, A6 *mat.Dense
	choose := func() (m, s int) {
		if eta1 <= padeTheta[3] && ell(A, normA, 3) == 0 {
			return 3, 0
		}
		A4 = mul(A2, A2)
		d4 := root(mat.Norm(A4, 1), 4)
		eta2 := math.Max(d4, d6)
		if eta2 <= padeTheta[5] && ell(A, normA, 5) == 0 {
			return 5, 0
		}
		A6 = mul(A2, A4)
		d6 = root(mat.Norm(A6, 1), 6)
		d8 := root(pow(A4, 2), 8)
		eta3 := math.Max(d6, d8)
		for _, m := range []int{7, 9} {
			if eta3 <= padeTheta[m] && ell(A, normA, m) == 0 {
				return m, 0
			}
		}
		d10 := root(normEst1Prod(A4, A6), 10)
		eta4 := math.Max(d8, d10)
		eta5 := math.Min(eta3, eta4)
		s = 0
		if eta5 > 0 {
			s = int(math.Max(math.Ceil(math.Log2(eta5/padeTheta[13])), 0))
		}
		As := mat.DenseCopyOf(A)
		As.Scale(math.Ldexp(1, -s), As)
		s += ell(As, normA*math.Ldexp(1, -s), 13)
		return 13, s
	}
	m, s := choose()
	info.Degree, info.Squarings = m, s
	if s > 0 {
		A.Scale(math.Ldexp(1, -s), A)
		finite := func(x *mat.Dense) bool {
			return x == nil || !math.IsInf(mat.Norm(x, 1), 0) && !math.IsNaN(mat.Norm(x, 1))
		}
		if finite(A2) && finite(A4) && finite(A6) {
			A2.Scale(math.Ldexp(1, -2*s), A2)
			if A4 != nil {
				A4.Scale(math.Ldexp(1, -4*s), A4)
			}
			if A6 != nil {
				A6.Scale(math.Ldexp(1, -6*s), A6)
			}
		} else {
			// The powers of the unscaled A overflowed (‖A‖₁ ≳ 1e77):
			// form them again from the scaled one.
			A2 = mul(A, A)
			A4 = mul(A2, A2)
			A6 = mul(A2, A4)
		}
	}
	b := padeCoeffs(m)
	var U, V mat.Dense
	switch m {
	case 13:
		// U = A[A6(b13 A6 + b11 A4 + b9 A2) + b7 A6 + b5 A4 + b3 A2 + b1 I]
		// V = A6(b12 A6 + b10 A4 + b8 A2) + b6 A6 + b4 A4 + b2 A2 + b0 I
		var t mat.Dense
		combine(&t, 0, []float64{b[13], b[11], b[9]}, A6, A4, A2)
		inner := mul(A6, &t)
		addCombination(inner, b[1], []float64{b[7], b[5], b[3]}, A6, A4, A2)
		U = *mul(A, inner)
		combine(&t, 0, []float64{b[12], b[10], b[8]}, A6, A4, A2)
		V = *mul(A6, &t)
		addCombination(&V, b[0], []float64{b[6], b[4], b[2]}, A6, A4, A2)
	default:
		pows := []*mat.Dense{A2}
		if m >= 5 {
			pows = append(pows, A4)
		}
		if m >= 7 {
			pows = append(pows, A6)
		}
		if m >= 9 {
			pows = append(pows, mul(A4, A4))
		}
		odd := make([]float64, len(pows))
		even := make([]float64, len(pows))
		for k := range pows {
			odd[k], even[k] = b[2*k+3], b[2*k+2]
		}
		var t mat.Dense
		combine(&t, b[1], odd, pows...)
		U = *mul(A, &t)
		combine(&V, b[0], even, pows...)
	}
	if err := ctx.Err(); err != nil {
		return info, err
	}
	var P, Q mat.Dense
	P.Add(&V, &U)
	Q.Sub(&V, &U)
	var lu mat.LU
	lu.Factorize(&Q)
	if err := lu.SolveTo(dst, false, &P); err != nil {
		// A finite condition number only warns; the solution is still usable.
		if c, ok := err.(mat.Condition); !ok || math.IsInf(float64(c), 1) {
			return info, fmt.Errorf("expo: Padé denominator is singular: %w", ErrNumerical)
		}
	}
	if tri {
		fixTriangular(dst, diag, super, math.Ldexp(1, -s))
	}
	// Square s times, alternating between dst and one scratch matrix.
	cur, next := dst, mat.NewDense(n, n, nil)
	for i := s - 1; i >= 0; i-- {
		if err := ctx.Err(); err != nil {
			return info, err
		}
		next.Mul(cur, cur)
		info.Products++
		cur, next = next, cur
		if tri {
			fixTriangular(cur, diag, super, math.Ldexp(1, -i))
		}
	}
	if cur != dst {
		dst.Copy(cur)
	}
	for _, v := range dst.RawMatrix().Data {
		if math.IsNaN(v) {
			return info, fmt.Errorf("expo: e^A has NaN entries (overflow in squaring?): %w", ErrNumerical)
		}
	}
	return info, nil
}

// combine sets d = c0 I + Σ c[k] m[k] in one pass over the entries; the
// m[k] are n×n.
func combine(d *mat.Dense, c0 float64, c []float64, m ...*mat.Dense) {
	n, _ := m[0].Dims()
	if d.IsEmpty() {
		d.ReuseAs(n, n)
	}
	d.Zero()
	addCombination(d, c0, c, m...)
}

// addCombination sets d += c0 I + Σ c[k] m[k] in one pass over the entries.
func addCombination(d *mat.Dense, c0 float64, c []float64, m ...*mat.Dense) {
	n, _ := d.Dims()
	dr := d.RawMatrix()
	rows := make([][]float64, len(m))
	for i := 0; i < n; i++ {
		for k, x := range m {
			r := x.RawMatrix()
			rows[k] = r.Data[i*r.Stride : i*r.Stride+n]
		}
		out := dr.Data[i*dr.Stride : i*dr.Stride+n]
		if len(rows) == 3 { // the degree-13 case, unrolled
			r0, r1, r2 := rows[0][:n], rows[1][:n], rows[2][:n]
			for j := range out {
				out[j] += c[0]*r0[j] + c[1]*r1[j] + c[2]*r2[j]
			}
		} else {
			for j := range out {
				v := out[j]
				for k, row := range rows {
					v += c[k] * row[j]
				}
				out[j] = v
			}
		}
		out[i] += c0
	}
}

// addScaled sets d += α b.
func addScaled(d *mat.Dense, alpha float64, b mat.Matrix) {
	if alpha == 0 {
		return
	}
	var t mat.Dense
	t.Scale(alpha, b)
	d.Add(d, &t)
}

// padeCoeffs returns b_0…b_m of the [m/m] Padé approximant of e^x,
// p_m(x) = Σ b_j x^j with b_j = (2m−j)! m! / ((2m)! j! (m−j)!), and
// r_m(x) = p_m(x)/p_m(−x).
func padeCoeffs(m int) []float64 {
	b := make([]float64, m+1)
	b[0] = 1
	for j := 1; j <= m; j++ {
		b[j] = b[j-1] * float64(m-j+1) / float64(j*(2*m-j+1))
	}
	return b
}

// ell returns ℓ(A, m) = max(⌈log₂(α/u)/(2m)⌉, 0) with
// α = |c_{2m+1}| ‖|A|^{2m+1}‖₁/‖A‖₁ and |c_{2m+1}| = (m!)²/((2m)!(2m+1)!),
// the number of extra squarings Al-Mohy & Higham (2009, eq. (5.1)) add so
// that the leading term of the backward error of r_m stays below u.
// ‖|A|^p‖₁ is computed exactly as ‖(|A|ᵀ)^p 1‖_∞.
func ell(A *mat.Dense, normA float64, m int) int {
	if normA == 0 {
		return 0
	}
	n, _ := A.Dims()
	raw := A.RawMatrix()
	abs := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			abs[i*n+j] = math.Abs(raw.Data[i*raw.Stride+j])
		}
	}
	absA := blas64.General{Rows: n, Cols: n, Stride: n, Data: abs}
	v := make([]float64, n)
	w := make([]float64, n)
	for i := range v {
		v[i] = 1
	}
	p := 2*m + 1
	for k := 0; k < p; k++ {
		blas64.Gemv(blas.Trans, 1, absA, blas64.Vector{N: n, Inc: 1, Data: v}, 0, blas64.Vector{N: n, Inc: 1, Data: w})
		v, w = w, v
	}
	normAbs := 0.0
	for _, x := range v {
		normAbs = math.Max(normAbs, x)
	}
	// log|c_{2m+1}| = 2 log m! − log (2m)! − log (2m+1)!
	lf := func(k int) float64 { x, _ := math.Lgamma(float64(k + 1)); return x }
	logc := 2*lf(m) - lf(2*m) - lf(2*m+1)
	log2Alpha := (logc + math.Log(normAbs) - math.Log(normA)) / math.Ln2
	if math.IsInf(log2Alpha, -1) || math.IsNaN(log2Alpha) {
		return 0
	}
	val := int(math.Ceil((log2Alpha - math.Log2(unitRoundoff)) / float64(2*m)))
	if val < 0 {
		return 0
	}
	return val
}

// fixTriangular overwrites the diagonal and superdiagonal of X with the exact
// values of e^{σT}, where T is the upper triangular matrix with diagonal diag
// and superdiagonal super (Al-Mohy & Higham 2009, Code Fragment 2.1).
func fixTriangular(X *mat.Dense, diag, super []float64, sigma float64) {
	n := len(diag)
	for i := 0; i < n; i++ {
		X.Set(i, i, math.Exp(sigma*diag[i]))
	}
	for i := 0; i+1 < n; i++ {
		X.Set(i, i+1, expTriOffDiag(sigma*diag[i], sigma*diag[i+1], sigma*super[i]))
	}
}

// expTriOffDiag returns the (1,2) entry of exp([λ1, t; 0, λ2]),
// t (e^{λ2} − e^{λ1})/(λ2 − λ1) = t e^{(λ1+λ2)/2} sinh(δ)/δ, δ = (λ2−λ1)/2
// (Higham, Functions of Matrices, SIAM 2008, eq. (10.42)).
func expTriOffDiag(l1, l2, t float64) float64 {
	if t == 0 {
		return 0
	}
	d := (l2 - l1) / 2
	sinch := 1.0
	if d != 0 {
		sinch = math.Sinh(d) / d
	}
	ave := (l1 + l2) / 2
	if math.IsInf(sinch, 0) { // |δ| beyond ~710: combine the exponentials
		return t * (math.Exp(l2) - math.Exp(l1)) / (l2 - l1)
	}
	return t * math.Exp(ave) * sinch
}

package solve

import (
	"math"
	"math/cmplx"
)

// scalar is the element type of the banded and supernodal factorisations:
// real when the shift is real, complex otherwise.
type scalar interface{ float64 | complex128 }

// argmax returns the index and magnitude (|re|+|im| for complex) of the
// largest element of s, the first one on ties; (0, 0) for an empty s. The
// type switch is on the slice, once per call, not per element.
func argmax[T scalar](s []T) (int, float64) {
	k, best := 0, -1.0
	switch v := any(s).(type) {
	case []float64:
		for i, x := range v {
			if a := math.Abs(x); a > best {
				k, best = i, a
			}
		}
	case []complex128:
		for i, x := range v {
			if a := abs1(x); a > best {
				k, best = i, a
			}
		}
	}
	return k, max(best, 0)
}

func conj[T scalar](x T) T {
	if v, ok := any(x).(complex128); ok {
		return any(cmplx.Conj(v)).(T)
	}
	return x
}

// BandLU is the LU factorisation with partial pivoting of an n×n band
// matrix with kl sub- and ku superdiagonals, in the storage of LAPACK's
// gbtrf: column j is AB[j*ld : (j+1)*ld] with ld = 2kl+ku+1, and A_ij is
// AB[j*ld + kl+ku+i−j] for max(0, j−ku) ≤ i ≤ min(n−1, j+kl). The first kl
// entries of each column hold the fill created by row interchanges (U then
// has kl+ku superdiagonals). Work is O(n·kl·(kl+ku)).
type BandLU[T scalar] struct {
	n, kl, ku int
	ab        []T
	piv       []int
}

// Band is a real band factorisation; ZBand a complex one.
type (
	Band  = BandLU[float64]
	ZBand = BandLU[complex128]
)

// BandLD returns the leading dimension 2kl+ku+1 of the band storage.
func BandLD(kl, ku int) int { return 2*kl + ku + 1 }

// FactorBand factors the band matrix stored in ab (length n·BandLD(kl, ku),
// overwritten; the fill rows must be zero on entry). It returns an error
// wrapping ErrSingular if a pivot is negligible. FactorBand panics with
// ErrShape if len(ab) is wrong or kl, ku are negative.
func FactorBand[T scalar](n, kl, ku int, ab []T) (*BandLU[T], error) {
	if n < 0 || kl < 0 || ku < 0 {
		panic(ErrShape)
	}
	ld := BandLD(kl, ku)
	if len(ab) != n*ld {
		panic(ErrShape)
	}
	kv := kl + ku
	f := &BandLU[T]{n: n, kl: kl, ku: ku, ab: ab, piv: make([]int, n)}
	_, amax := argmax(ab)
	tol := pivotTol * float64(n) * amax
	ju := 0 // last column touched by the interchanges so far
	for j := 0; j < n; j++ {
		km := min(kl, n-1-j)
		col := ab[j*ld+kv : j*ld+kv+km+1] // rows j..j+km of column j
		jp, pv := argmax(col)
		f.piv[j] = j + jp
		if pv <= tol || pv == 0 {
			return nil, &SingularError{Pivot: j, N: n, Method: "band"}
		}
		ju = max(ju, min(j+ku+jp, n-1))
		if jp != 0 {
			// Swap rows j and j+jp in columns j..ju.
			for c := j; c <= ju; c++ {
				b := c*ld + kv - c
				ab[b+j], ab[b+j+jp] = ab[b+j+jp], ab[b+j]
			}
		}
		inv := 1 / col[0]
		for p := 1; p <= km; p++ {
			col[p] *= inv
		}
		for c := j + 1; c <= ju; c++ {
			b := c*ld + kv - c
			u := ab[b+j]
			if u == 0 {
				continue
			}
			dst := ab[b+j+1 : b+j+1+km]
			for p, l := range col[1:] {
				dst[p] -= l * u
			}
		}
	}
	return f, nil
}

// Dims returns the order and bandwidths of the factored matrix.
func (f *BandLU[T]) Dims() (n, kl, ku int) { return f.n, f.kl, f.ku }

// Solve sets dst = A⁻¹ b (dst and b may be the same slice). It panics with
// ErrShape on a length mismatch.
func (f *BandLU[T]) Solve(dst, b []T) error {
	n, kl, ld, kv := f.n, f.kl, BandLD(f.kl, f.ku), f.kl+f.ku
	if len(dst) != n || len(b) != n {
		panic(ErrShape)
	}
	copy(dst, b)
	ab := f.ab
	for j := 0; j < n-1; j++ {
		km := min(kl, n-1-j)
		if p := f.piv[j]; p != j {
			dst[j], dst[p] = dst[p], dst[j]
		}
		bj := dst[j]
		if bj == 0 {
			continue
		}
		l := ab[j*ld+kv+1 : j*ld+kv+1+km]
		for p, v := range l {
			dst[j+1+p] -= v * bj
		}
	}
	for j := n - 1; j >= 0; j-- {
		b0 := j*ld + kv - j
		dst[j] /= ab[b0+j]
		xj := dst[j]
		for i := max(0, j-kv); i < j; i++ {
			dst[i] -= ab[b0+i] * xj
		}
	}
	return nil
}

// SolveH sets dst = A⁻ᴴ b (the transpose for real T). dst and b may be the
// same slice. It panics with ErrShape on a length mismatch.
func (f *BandLU[T]) SolveH(dst, b []T) error {
	n, kl, ld, kv := f.n, f.kl, BandLD(f.kl, f.ku), f.kl+f.ku
	if len(dst) != n || len(b) != n {
		panic(ErrShape)
	}
	copy(dst, b)
	ab := f.ab
	for j := 0; j < n; j++ {
		b0 := j*ld + kv - j
		s := dst[j]
		for i := max(0, j-kv); i < j; i++ {
			s -= conj(ab[b0+i]) * dst[i]
		}
		dst[j] = s / conj(ab[b0+j])
	}
	for j := n - 2; j >= 0; j-- {
		km := min(kl, n-1-j)
		s := dst[j]
		l := ab[j*ld+kv+1 : j*ld+kv+1+km]
		for p, v := range l {
			s -= conj(v) * dst[j+1+p]
		}
		dst[j] = s
		if p := f.piv[j]; p != j {
			dst[j], dst[p] = dst[p], dst[j]
		}
	}
	return nil
}

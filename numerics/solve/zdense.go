package solve

import (
	"context"
	"math"
	"math/cmplx"
	"runtime"
	"sync"

	"semiflow/numerics/memguard"
)

// ZDense is the LU factorisation P A = L U of a dense complex n×n matrix
// with partial pivoting (row interchanges), stored row-major.
type ZDense struct {
	n   int
	lu  []complex128
	piv []int
}

// FactorZDense factors the row-major n×n matrix a (a[i*n+j] = A_ij), which it
// overwrites with the factors. It returns an error wrapping ErrSingular if a
// pivot is negligible (|u_jj| ≤ n·ε·max|a_ij|). FactorZDense panics with
// ErrShape if len(a) != n².
func FactorZDense(n int, a []complex128) (*ZDense, error) {
	return FactorZDenseContext(context.Background(), n, a, nil)
}

// zBlock is the panel width of the blocked factorisation.
const zBlock = 48

// FactorZDenseContext is FactorZDense with cancellation and progress. It is
// a right-looking blocked LU: each panel of zBlock columns is factored with
// partial pivoting, then the trailing matrix is updated by A22 −= L21 U12,
// split over the cores by rows. It checks ctx and calls progress(done, n)
// (if not nil) after each panel, and returns ctx.Err() when cancelled.
func FactorZDenseContext(ctx context.Context, n int, a []complex128, progress func(done, total int)) (*ZDense, error) {
	if len(a) != n*n {
		panic(ErrShape)
	}
	f := &ZDense{n: n, lu: a, piv: make([]int, n)}
	var amax float64
	for _, v := range a {
		amax = math.Max(amax, abs1(v))
	}
	tol := pivotTol * float64(n) * amax
	workers := runtime.GOMAXPROCS(0)
	for k0 := 0; k0 < n; k0 += zBlock {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		k1 := min(k0+zBlock, n) // panel columns [k0, k1)
		for k := k0; k < k1; k++ {
			p, pv := k, abs1(a[k*n+k])
			for i := k + 1; i < n; i++ {
				if v := abs1(a[i*n+k]); v > pv {
					p, pv = i, v
				}
			}
			f.piv[k] = p
			if pv <= tol || pv == 0 {
				return nil, &SingularError{Pivot: k, N: n, Method: "dense"}
			}
			if p != k {
				swapRows(a, n, k, p)
			}
			eliminateBelow(a, n, k, n, k1)
		}
		if k1 == n {
			break
		}
		// U12 = L11⁻¹ A12 (unit lower triangular, rows k0..k1−1).
		for r := k0 + 1; r < k1; r++ {
			row := a[r*n+k1 : (r+1)*n]
			for s := k0; s < r; s++ {
				l := a[r*n+s]
				if l == 0 {
					continue
				}
				for j, u := range a[s*n+k1 : (s+1)*n] {
					row[j] -= l * u
				}
			}
		}
		// A22 −= L21 U12.
		update := func(lo, hi int) {
			for i := lo; i < hi; i++ {
				rankUpdate(a[i*n+k1:(i+1)*n], a[i*n+k0:i*n+k1], a[k0*n+k1:], n)
			}
		}
		rows := n - k1
		if workers < 2 || rows*rows*(k1-k0) < 1<<18 {
			update(k1, n)
		} else {
			var wg sync.WaitGroup
			for w := 0; w < workers; w++ {
				lo, hi := k1+rows*w/workers, k1+rows*(w+1)/workers
				wg.Add(1)
				go func() {
					defer wg.Done()
					update(lo, hi)
				}()
			}
			wg.Wait()
		}
		if progress != nil {
			progress(k1, n)
		}
	}
	if progress != nil {
		progress(n, n)
	}
	return f, nil
}

// NewZDenseShifted factors zI − A for the row-major real n×n matrix a
// (not modified). The memory guard refuses an n×n complex matrix too large
// for the machine. NewZDenseShifted panics with ErrShape if len(a) != n².
func NewZDenseShifted(n int, a []float64, z complex128) (*ZDense, error) {
	return newZDenseShifted(context.Background(), n, a, z, nil)
}

func newZDenseShifted(ctx context.Context, n int, a []float64, z complex128, progress func(done, total int)) (*ZDense, error) {
	if len(a) != n*n {
		panic(ErrShape)
	}
	if err := memguard.DenseComplex(n, n); err != nil {
		return nil, err
	}
	m := make([]complex128, n*n)
	for i, v := range a {
		m[i] = complex(-v, 0)
	}
	for i := 0; i < n; i++ {
		m[i*n+i] += z
	}
	f, err := FactorZDenseContext(ctx, n, m, progress)
	return f, withShift(err, z)
}

// Len returns n.
func (f *ZDense) Len() int { return f.n }

// Solve sets dst = A⁻¹ b (dst and b may be the same slice). It panics with
// ErrShape on a length mismatch.
func (f *ZDense) Solve(dst, b []complex128) error {
	n := f.n
	if len(dst) != n || len(b) != n {
		panic(ErrShape)
	}
	copy(dst, b)
	for k := 0; k < n; k++ {
		if p := f.piv[k]; p != k {
			dst[k], dst[p] = dst[p], dst[k]
		}
	}
	for i := 0; i < n; i++ {
		s := dst[i]
		for j, l := range f.lu[i*n : i*n+i] {
			s -= l * dst[j]
		}
		dst[i] = s
	}
	for i := n - 1; i >= 0; i-- {
		s := dst[i]
		row := f.lu[i*n : (i+1)*n]
		for j := i + 1; j < n; j++ {
			s -= row[j] * dst[j]
		}
		dst[i] = s / row[i]
	}
	return nil
}

// SolveH sets dst = A⁻ᴴ b (dst and b may be the same slice). It panics with
// ErrShape on a length mismatch.
func (f *ZDense) SolveH(dst, b []complex128) error {
	n := f.n
	if len(dst) != n || len(b) != n {
		panic(ErrShape)
	}
	copy(dst, b)
	// Aᴴ = Uᴴ Lᴴ P: solve Uᴴ y = b (forward, column-oriented on rows of U).
	for i := 0; i < n; i++ {
		row := f.lu[i*n : (i+1)*n]
		dst[i] /= cmplx.Conj(row[i])
		yi := dst[i]
		for j := i + 1; j < n; j++ {
			dst[j] -= cmplx.Conj(row[j]) * yi
		}
	}
	// Lᴴ w = y (backward).
	for i := n - 1; i >= 0; i-- {
		yi := dst[i]
		for j, l := range f.lu[i*n : i*n+i] {
			dst[j] -= cmplx.Conj(l) * yi
		}
	}
	for k := n - 1; k >= 0; k-- {
		if p := f.piv[k]; p != k {
			dst[k], dst[p] = dst[p], dst[k]
		}
	}
	return nil
}

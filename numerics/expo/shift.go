package expo

import (
	"context"
	"fmt"
	"math/cmplx"

	"semiflow/numerics/linop"
)

// maxBandEntries bounds the storage n·(2kl+ku+1) of a banded factorisation.
const maxBandEntries = 1 << 27

// bandLU is an LU factorisation with partial pivoting of the complex band
// matrix zI − A (kl subdiagonals, ku superdiagonals), stored row by row
// with the fill-in room kl of LAPACK's band LU (Golub & Van Loan, Matrix
// Computations, 4th ed., §4.3.5). A dense matrix is the case kl = ku = n−1.
type bandLU struct {
	n, kl, ku, w int
	ab           []complex128 // row i, column j at ab[i*w + j − i + kl]
	piv          []int
}

// newShiftedLU factors zI − A for an operator with an explicit sparse form,
// or from its dense matrix otherwise. ctx is checked every few columns.
func newShiftedLU(ctx context.Context, a linop.Operator, z complex128) (*bandLU, error) {
	n, _ := a.Dims()
	var csr *linop.CSR
	if s, ok := a.(linop.Sparser); ok {
		if c, err := s.ToCSR(); err == nil {
			csr = c
		}
	}
	if csr == nil {
		d, err := toDense(a)
		if err != nil {
			return nil, err
		}
		csr = linop.CSRFromDense(d, 0)
	}
	kl, ku := csr.Bandwidth()
	w := 2*kl + ku + 1
	if n*w > maxBandEntries {
		return nil, fmt.Errorf("expo: banded factorisation of order %d with bandwidths (%d, %d) needs %d entries, above the limit %d", n, kl, ku, n*w, maxBandEntries)
	}
	f := &bandLU{n: n, kl: kl, ku: ku, w: w, ab: make([]complex128, n*w), piv: make([]int, n)}
	for i := 0; i < n; i++ {
		f.ab[i*w+kl] = z
		for p := csr.RowPtr[i]; p < csr.RowPtr[i+1]; p++ {
			j := csr.ColIdx[p]
			f.ab[i*w+j-i+kl] -= complex(csr.Val[p], 0)
		}
	}
	return f, f.factor(ctx)
}

func (f *bandLU) at(i, j int) *complex128 { return &f.ab[i*f.w+j-i+f.kl] }

func (f *bandLU) factor(ctx context.Context) error {
	n, kl, ku := f.n, f.kl, f.ku
	for k := 0; k < n; k++ {
		if k%64 == 0 {
			if err := ctx.Err(); err != nil {
				return err
			}
		}
		last := min(n-1, k+kl)
		p, pm := k, cmplx.Abs(*f.at(k, k))
		for i := k + 1; i <= last; i++ {
			if a := cmplx.Abs(*f.at(i, k)); a > pm {
				p, pm = i, a
			}
		}
		f.piv[k] = p
		if pm == 0 {
			return errorf("shifted matrix is singular at column %d", k)
		}
		jl := min(n-1, k+ku+kl)
		if p != k {
			for j := k; j <= jl; j++ {
				a, b := f.at(k, j), f.at(p, j)
				*a, *b = *b, *a
			}
		}
		piv := *f.at(k, k)
		rowk := f.ab[k*f.w+f.kl : k*f.w+f.kl+jl-k+1]
		for i := k + 1; i <= last; i++ {
			l := *f.at(i, k) / piv
			*f.at(i, k) = l
			if l == 0 {
				continue
			}
			base := i*f.w + k - i + f.kl
			row := f.ab[base : base+jl-k+1]
			for j := 1; j < len(rowk); j++ {
				row[j] -= l * rowk[j]
			}
		}
	}
	return nil
}

// Solve sets dst = (zI − A)⁻¹ b. dst and b may be the same slice.
func (f *bandLU) Solve(dst, b []complex128) error {
	n, kl, ku := f.n, f.kl, f.ku
	if len(dst) != n || len(b) != n {
		panic(ErrShape)
	}
	copy(dst, b)
	for k := 0; k < n; k++ {
		if p := f.piv[k]; p != k {
			dst[k], dst[p] = dst[p], dst[k]
		}
		for i := k + 1; i <= min(n-1, k+kl); i++ {
			dst[i] -= *f.at(i, k) * dst[k]
		}
	}
	for i := n - 1; i >= 0; i-- {
		s := dst[i]
		for j := i + 1; j <= min(n-1, i+ku+kl); j++ {
			s -= *f.at(i, j) * dst[j]
		}
		dst[i] = s / *f.at(i, i)
	}
	return nil
}

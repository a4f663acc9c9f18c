package pencil

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"
	"sync"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
	"semiflow/numerics/solve"
)

// ErrSingularMass is matched (errors.Is) by the error for a mass matrix
// that is singular to working precision.
var ErrSingularMass = errors.New("pencil: the mass matrix is singular to working precision")

// ErrNotDefinite is matched by the errors for a matrix that must be
// symmetric positive definite and is not.
var ErrNotDefinite = errors.New("pencil: matrix is not symmetric positive definite")

// massFactor solves with a real square matrix M (and with Mᵀ) from one
// factorisation chosen by M's structure: its diagonal, a real band LU, a
// sparse LU (the shifted solver at z = 0, complex arithmetic), or a dense
// LU. It is safe for concurrent solves.
type massFactor struct {
	n      int
	method string
	diag   []float64
	band   *solve.Band
	sparse solve.AdjointSolver
	dense  *mat.LU
	zbuf   sync.Pool
}

// factorMass factors M. A singular M gives an error wrapping
// ErrSingularMass; the memory guard's refusals and ctx's error pass through.
func factorMass(ctx context.Context, m linop.Operator) (*massFactor, error) {
	n, _ := m.Dims()
	f := &massFactor{n: n}
	if d, ok := m.(*linop.Diag); ok {
		return f.fromDiag(d.D)
	}
	csr, err := linop.ToCSR(m)
	if errors.Is(err, memguard.ErrTooLarge) {
		return nil, err
	}
	if err == nil {
		if isDiagonal(csr) {
			return f.fromDiag(csr.Diagonal())
		}
		if solve.Choose(csr) == solve.BandMethod {
			// NewBandShifted factors sI − A; with A = M and s = 0 that is −M.
			b, err := solve.NewBandShifted(csr, 0)
			if err != nil {
				return nil, singularMass(err)
			}
			f.band, f.method = b, "band LU with partial pivoting"
			return f, nil
		}
		if solve.Choose(csr) == solve.SparseMethod {
			s, err := solve.NewShiftedContext(ctx, csr, 0, solve.Options{})
			if err != nil {
				return nil, singularMass(err)
			}
			as, ok := s.(solve.AdjointSolver)
			if !ok {
				return nil, fmt.Errorf("pencil: the sparse factorisation of M offers no transposed solve")
			}
			f.sparse, f.method = as, "sparse LU with a fill-reducing order"
			return f, nil
		}
	}
	d, err := linop.ToDense(m)
	if err != nil {
		return nil, err
	}
	var lu mat.LU
	lu.Factorize(d)
	if c := lu.Cond(); !(c < 1/(float64(n)*0x1p-53)) {
		return nil, fmt.Errorf("%w (dense LU: condition number %.3g)", ErrSingularMass, c)
	}
	f.dense, f.method = &lu, "dense LU with partial pivoting"
	return f, nil
}

func singularMass(err error) error {
	if errors.Is(err, solve.ErrSingular) {
		var s *solve.SingularError
		if errors.As(err, &s) {
			return fmt.Errorf("%w (%s LU, pivot %d of %d)", ErrSingularMass, s.Method, s.Pivot+1, s.N)
		}
		return fmt.Errorf("%w", ErrSingularMass)
	}
	return err
}

func (f *massFactor) fromDiag(d []float64) (*massFactor, error) {
	var big float64
	for _, v := range d {
		big = math.Max(big, math.Abs(v))
	}
	for i, v := range d {
		if !(math.Abs(v) > big*float64(len(d))*0x1p-53) {
			return nil, fmt.Errorf("%w (diagonal entry %d of %d is %g)", ErrSingularMass, i+1, len(d), v)
		}
	}
	f.diag, f.method = append([]float64(nil), d...), "diagonal (lumped) mass"
	return f, nil
}

// isDiagonal reports whether every stored off-diagonal entry is zero.
func isDiagonal(a *linop.CSR) bool {
	for i := 0; i < a.Rows; i++ {
		for p := a.RowPtr[i]; p < a.RowPtr[i+1]; p++ {
			if a.ColIdx[p] != i && a.Val[p] != 0 {
				return false
			}
		}
	}
	return true
}

// solve sets dst = M⁻¹ b, or M⁻ᵀ b if trans; dst and b may alias.
func (f *massFactor) solve(dst, b []float64, trans bool) {
	switch {
	case f.diag != nil:
		for i, v := range f.diag {
			dst[i] = b[i] / v
		}
	case f.band != nil:
		var err error
		if trans {
			err = f.band.SolveH(dst, b)
		} else {
			err = f.band.Solve(dst, b)
		}
		if err != nil {
			panic(err) // a factored band matrix solves without failure
		}
		for i := range dst {
			dst[i] = -dst[i] // the factor is of −M
		}
	case f.sparse != nil:
		zp, _ := f.zbuf.Get().(*[]complex128)
		if zp == nil || len(*zp) != f.n {
			z := make([]complex128, f.n)
			zp = &z
		}
		z := *zp
		for i, v := range b {
			z[i] = complex(v, 0)
		}
		var err error
		if trans {
			err = f.sparse.SolveH(z, z)
		} else {
			err = f.sparse.Solve(z, z)
		}
		if err != nil {
			panic(err)
		}
		for i, v := range z {
			dst[i] = -real(v)
		}
		f.zbuf.Put(zp)
	default:
		x := mat.NewVecDense(len(dst), dst)
		if err := f.dense.SolveVecTo(x, trans, mat.NewVecDense(len(b), append([]float64(nil), b...))); err != nil {
			var c mat.Condition
			if !errors.As(err, &c) {
				panic(err)
			}
		}
	}
}

// term is one coefficient–matrix pair of a combination Σ c_k A_k.
type term struct {
	c complex128
	a linop.Operator
}

// combined is a factorisation of P = Σ c_k A_k, solving P x = b and
// Pᴴ x = b.
type combined struct {
	solve.AdjointSolver
	method string
}

// factorCombination factors P = Σ c_k A_k of order n (nil matrices are
// skipped): when every A_k has a sparse form, by a band LU if P is narrow,
// otherwise by a sparse LU (for real coefficients the shifted solver's
// multifrontal one at z = 0, for complex ones the left-looking one in a
// reverse Cuthill–McKee order); else by a dense complex LU. A singular P
// gives an error wrapping solve.ErrSingular.
func factorCombination(ctx context.Context, n int, terms []term, progress func(done, total int)) (*combined, error) {
	var parts []*linop.CSR
	var coefs []complex128
	sparse, real := true, true
	for _, t := range terms {
		if t.a == nil || t.c == 0 {
			continue
		}
		m, err := linop.ToCSR(t.a)
		if err != nil {
			sparse = false
			break
		}
		parts, coefs = append(parts, m), append(coefs, t.c)
		if imag(t.c) != 0 {
			real = false
		}
	}
	if sparse {
		rows, cols, vals := combine(n, parts, coefs)
		if real {
			p := &linop.CSR{Rows: n, Cols: n, RowPtr: rows, ColIdx: cols, Val: make([]float64, len(vals))}
			for i, v := range vals {
				p.Val[i] = -realPart(v) // NewShifted factors zI − A: A = −P, z = 0
			}
			s, err := solve.NewShiftedContext(ctx, p, 0, solve.Options{Progress: progress})
			if err != nil {
				return nil, err
			}
			as, ok := s.(solve.AdjointSolver)
			if !ok {
				return nil, fmt.Errorf("pencil: the sparse factorisation of the pencil offers no adjoint solve")
			}
			return &combined{AdjointSolver: as, method: solve.Choose(p).String() + " LU (real coefficients)"}, nil
		}
		pat := &linop.CSR{Rows: n, Cols: n, RowPtr: rows, ColIdx: cols, Val: make([]float64, len(vals))}
		for i := range pat.Val {
			pat.Val[i] = 1
		}
		if solve.Choose(pat) == solve.BandMethod {
			kl, ku := pat.Bandwidth()
			ld := solve.BandLD(kl, ku)
			if err := memguard.Check(n*ld, memguard.ComplexBytes, "complex band storage of the pencil"); err != nil {
				return nil, err
			}
			ab := make([]complex128, n*ld)
			for i := 0; i < n; i++ {
				for p := rows[i]; p < rows[i+1]; p++ {
					j := cols[p]
					ab[j*ld+kl+ku+i-j] = vals[p]
				}
			}
			f, err := solve.FactorBand(n, kl, ku, ab)
			if err != nil {
				return nil, err
			}
			return &combined{AdjointSolver: f, method: "complex band LU"}, nil
		}
		if err := memguard.Check(len(vals)+n, memguard.ComplexBytes, "complex sparse form of the pencil"); err != nil {
			return nil, err
		}
		csc := toCSC(n, rows, cols, vals)
		f, err := solve.FactorSparse(ctx, csc, solve.RCM(pat), progress)
		if err != nil {
			return nil, err
		}
		return &combined{AdjointSolver: f, method: "complex sparse LU (left-looking, reverse Cuthill–McKee order)"}, nil
	}
	if err := memguard.Dense(n, n, memguard.ComplexBytes+memguard.RealBytes); err != nil {
		return nil, err
	}
	a := make([]complex128, n*n)
	for _, t := range terms {
		if t.a == nil || t.c == 0 {
			continue
		}
		d, err := linop.ToDense(t.a)
		if err != nil {
			return nil, err
		}
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				a[i*n+j] += t.c * complex(d.At(i, j), 0)
			}
		}
	}
	f, err := solve.FactorZDenseContext(ctx, n, a, progress)
	if err != nil {
		return nil, err
	}
	return &combined{AdjointSolver: f, method: "dense complex LU"}, nil
}

func realPart(z complex128) float64 { return real(z) }

// combine forms the rows of Σ c_k A_k (sorted columns, structural entries
// of every term kept) by scattering each row into a dense accumulator.
func combine(n int, parts []*linop.CSR, coefs []complex128) (rowPtr, colIdx []int, val []complex128) {
	acc := make([]complex128, n)
	mark := make([]int, n)
	for i := range mark {
		mark[i] = -1
	}
	rowPtr = make([]int, n+1)
	var cols []int
	for i := 0; i < n; i++ {
		cols = cols[:0]
		for k, m := range parts {
			for p := m.RowPtr[i]; p < m.RowPtr[i+1]; p++ {
				j := m.ColIdx[p]
				if mark[j] != i {
					mark[j] = i
					acc[j] = 0
					cols = append(cols, j)
				}
				acc[j] += coefs[k] * complex(m.Val[p], 0)
			}
		}
		sort.Ints(cols)
		for _, j := range cols {
			colIdx = append(colIdx, j)
			val = append(val, acc[j])
		}
		rowPtr[i+1] = len(colIdx)
	}
	return rowPtr, colIdx, val
}

// toCSC turns complex rows into compressed columns.
func toCSC(n int, rowPtr, colIdx []int, val []complex128) *solve.CSC {
	m := &solve.CSC{N: n, ColPtr: make([]int, n+1), RowIdx: make([]int, len(colIdx)), Val: make([]complex128, len(val))}
	for _, j := range colIdx {
		m.ColPtr[j+1]++
	}
	for j := 0; j < n; j++ {
		m.ColPtr[j+1] += m.ColPtr[j]
	}
	next := append([]int(nil), m.ColPtr[:n]...)
	for i := 0; i < n; i++ {
		for p := rowPtr[i]; p < rowPtr[i+1]; p++ {
			j := colIdx[p]
			m.RowIdx[next[j]], m.Val[next[j]] = i, val[p]
			next[j]++
		}
	}
	return m
}

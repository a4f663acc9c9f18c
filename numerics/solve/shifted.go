package solve

import (
	"context"
	"fmt"

	"gonum.org/v1/gonum/mat"

	"semiflow/numerics/linop"
	"semiflow/numerics/memguard"
)

// Method names a factorisation chosen by NewShifted.
type Method int

const (
	Auto         Method = iota // choose from the structure
	BandMethod                 // banded LU
	SparseMethod               // sparse LU with a fill-reducing ordering
	DenseMethod                // dense LU
	// FrontalMethod is the sparse frontal LU with delayed pivots
	// (Multifrontal) instead of the supernodal one; SparseMethod and Auto
	// fall back to it when a pivot inside a supernode is too small.
	FrontalMethod
)

func (m Method) String() string {
	switch m {
	case BandMethod:
		return "band"
	case SparseMethod:
		return "sparse"
	case DenseMethod:
		return "dense"
	case FrontalMethod:
		return "frontal"
	}
	return "auto"
}

// NewShifted factors zI − A for a square operator A and returns a solver
// for (zI − A) x = b. It chooses from A's structure: banded LU when A has a
// sparse form with a narrow band (1-D grid operators), the supernodal
// sparse LU (Supernodal: approximate minimum degree or nested dissection,
// real arithmetic for real z) for other sparse operators, and dense
// complex LU otherwise (refused by the memory guard when too
// large). A singular shift returns an error wrapping ErrSingular that names
// z. NewShifted panics with ErrShape if A is not square.
func NewShifted(a linop.Operator, z complex128) (ShiftedSolver, error) {
	return NewShiftedContext(context.Background(), a, z, Options{})
}

// Shifter is implemented by operators that factor zI − A from structure
// of their own, never forming A: A = M⁻¹K factors the pencil zM − K, the
// first-order form of a second-order system the quadratic pencil
// z²M + zC + K. NewShiftedContext hands such an operator its shifts (with
// Options.Method Auto), so every shifted solve (shift-and-invert,
// contour, resolvent powers, eigenvalue searches) uses that structure.
type Shifter interface {
	NewShifted(ctx context.Context, z complex128, opt Options) (ShiftedSolver, error)
}

// Options control NewShiftedContext.
type Options struct {
	// Method forces a factorisation; Auto (the zero value) chooses.
	Method Method
	// Progress, if not nil, is called during long factorisations with the
	// number of columns done and the total.
	Progress func(done, total int)
	// Grid, if nonzero, declares that a sparse operator lives on an
	// nx × ny tensor grid (index ix*ny + iy), so that the sparse
	// factorisation orders it by nested dissection (see GridOrder). Without
	// it the grid is found from a Kronecker sum inside the operator, if any.
	Grid [2]int
}

// NewShiftedContext is NewShifted with options and a context that
// interrupts long factorisations (the context's error is returned).
func NewShiftedContext(ctx context.Context, a linop.Operator, z complex128, opt Options) (ShiftedSolver, error) {
	n, c := a.Dims()
	if n != c {
		panic(ErrShape)
	}
	m := opt.Method
	if s, ok := a.(Shifter); ok && m == Auto {
		return s.NewShifted(ctx, z, opt)
	}
	var csr *linop.CSR
	if m == Auto {
		m, csr = choose(a)
	}
	switch m {
	case BandMethod, SparseMethod, FrontalMethod:
		if csr == nil {
			var err error
			if csr, err = linop.ToCSR(a); err != nil {
				return nil, err
			}
		}
		if m == BandMethod {
			return NewZBandShifted(csr, z)
		}
		return newSparse(ctx, a, csr, z, opt)
	}
	// The real copy and the complex matrix factorised in place live
	// together; each is checked again where it is made.
	need := float64(n) * float64(n) * (memguard.RealBytes + memguard.ComplexBytes)
	if err := memguard.Bytes(need, fmt.Sprintf("dense %d×%d real copy and complex factorisation of zI − A", n, n)); err != nil {
		return nil, err
	}
	var d *mat.Dense
	var err error
	if csr != nil {
		d, err = csr.ToDense()
	} else {
		d, err = linop.ToDense(a)
	}
	if err != nil {
		return nil, err
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	return newZDenseShifted(ctx, n, flat(d.RawMatrix().Data, d.RawMatrix().Stride, n), z, opt.Progress)
}

func flat(data []float64, stride, n int) []float64 {
	if stride == n {
		return data
	}
	out := make([]float64, 0, n*n)
	for i := 0; i < n; i++ {
		out = append(out, data[i*stride:i*stride+n]...)
	}
	return out
}

// Choose returns the method NewShifted uses for a: BandMethod when A has a
// sparse form whose band storage is at most 8 times its number of entries
// plus n (a band matrix, or nearly one), SparseMethod for other operators
// with a sparse form filled to less than a quarter, DenseMethod otherwise.
func Choose(a linop.Operator) Method {
	m, _ := choose(a)
	return m
}

func choose(a linop.Operator) (Method, *linop.CSR) {
	if _, ok := a.(*linop.Dense); ok {
		return DenseMethod, nil
	}
	csr, err := linop.ToCSR(a)
	if err != nil {
		return DenseMethod, nil
	}
	kl, ku := csr.Bandwidth()
	n := csr.Rows
	switch {
	case BandLD(kl, ku)*n <= 8*(csr.NNZ()+n):
		return BandMethod, csr
	case float64(csr.NNZ()) < 0.25*float64(n)*float64(n):
		return SparseMethod, csr
	}
	return DenseMethod, csr
}

// NewZBandShifted factors zI − A in band storage for a square sparse A,
// with the bandwidths of A. The memory guard refuses band storage too large
// for the machine. It panics with ErrShape if A is not square.
func NewZBandShifted(a *linop.CSR, z complex128) (*ZBand, error) {
	if a.Rows != a.Cols {
		panic(ErrShape)
	}
	n := a.Rows
	kl, ku := a.Bandwidth()
	ld := BandLD(kl, ku)
	if err := memguard.Check(n*ld, memguard.ComplexBytes, "complex band storage"); err != nil {
		return nil, err
	}
	ab := make([]complex128, n*ld)
	kv := kl + ku
	for i := 0; i < n; i++ {
		for p := a.RowPtr[i]; p < a.RowPtr[i+1]; p++ {
			j := a.ColIdx[p]
			ab[j*ld+kv+i-j] -= complex(a.Val[p], 0)
		}
		ab[i*ld+kv] += z
	}
	f, err := FactorBand(n, kl, ku, ab)
	return f, withShift(err, z)
}

// NewBandShifted factors the real matrix sI − A in band storage for a
// square sparse A and real s (as implicit time steps need). It panics with
// ErrShape if A is not square.
func NewBandShifted(a *linop.CSR, s float64) (*Band, error) {
	if a.Rows != a.Cols {
		panic(ErrShape)
	}
	n := a.Rows
	kl, ku := a.Bandwidth()
	ld := BandLD(kl, ku)
	if err := memguard.Check(n*ld, memguard.RealBytes, "band storage"); err != nil {
		return nil, err
	}
	ab := make([]float64, n*ld)
	kv := kl + ku
	for i := 0; i < n; i++ {
		for p := a.RowPtr[i]; p < a.RowPtr[i+1]; p++ {
			j := a.ColIdx[p]
			ab[j*ld+kv+i-j] -= a.Val[p]
		}
		ab[i*ld+kv] += s
	}
	f, err := FactorBand(n, kl, ku, ab)
	return f, withShift(err, complex(s, 0))
}

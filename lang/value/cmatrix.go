package value

import (
	"math"

	"semiflow/lang/syntax"
)

// CMatrix is a complex rows×cols matrix stored row-major. A matrix literal
// with at least one complex entry gives a CMatrix; arithmetic between a
// real Matrix and a complex number or CMatrix gives a CMatrix (which stays
// complex even when every imaginary part is 0, as a complex number does).
type CMatrix struct {
	Rows, Cols int
	Data       []complex128 // len Rows*Cols, entry (i, j) at i*Cols+j
}

// NewCMatrix returns a zero rows×cols complex matrix.
func NewCMatrix(rows, cols int) *CMatrix {
	return &CMatrix{Rows: rows, Cols: cols, Data: make([]complex128, rows*cols)}
}

// Complexify returns m as a complex matrix (a copy).
func Complexify(m *Matrix) *CMatrix {
	out := NewCMatrix(m.Rows, m.Cols)
	for i, x := range m.Data {
		out.Data[i] = complex(x, 0)
	}
	return out
}

func (m *CMatrix) Type() string { return "matrix" }

// At returns entry (i, j).
func (m *CMatrix) At(i, j int) complex128 { return m.Data[i*m.Cols+j] }

// Dims returns the number of rows and columns.
func (m *CMatrix) Dims() (int, int) { return m.Rows, m.Cols }

// Parts returns the real and imaginary parts as real matrices.
func (m *CMatrix) Parts() (re, im *Matrix) {
	re, im = NewMatrix(m.Rows, m.Cols), NewMatrix(m.Rows, m.Cols)
	for i, z := range m.Data {
		re.Data[i], im.Data[i] = real(z), imag(z)
	}
	return re, im
}

// Index2 returns a complex number, a complex vector or a sub-matrix, as
// Matrix.Index2 does.
func (m *CMatrix) Index2(ri, ci []int, scalarRow, scalarCol bool) Value {
	switch {
	case scalarRow && scalarCol:
		return Complex(m.At(ri[0], ci[0]))
	case scalarRow || scalarCol:
		out := make([]complex128, 0, len(ri)*len(ci))
		for _, i := range ri {
			for _, j := range ci {
				out = append(out, m.At(i, j))
			}
		}
		return ComplexVec(out)
	}
	out := NewCMatrix(len(ri), len(ci))
	for a, i := range ri {
		for b, j := range ci {
			out.Data[a*out.Cols+b] = m.At(i, j)
		}
	}
	return out
}

// Len is the number of rows.
func (m *CMatrix) Len() int { return m.Rows }

// Index returns row i as a complex vector.
func (m *CMatrix) Index(i int) Value {
	return ComplexVec(append([]complex128(nil), m.Data[i*m.Cols:(i+1)*m.Cols]...))
}

// String shows the matrix in literal syntax, entries as complex numbers.
func (m *CMatrix) String() string {
	return formatGrid(m.Rows, m.Cols, func(i, j int) string { return FormatComplex(m.At(i, j)) })
}

// Transpose returns mᵀ; with conj, the conjugate transpose m*.
func (m *CMatrix) Transpose(conj bool) *CMatrix {
	out := NewCMatrix(m.Cols, m.Rows)
	for i := 0; i < m.Rows; i++ {
		for j := 0; j < m.Cols; j++ {
			z := m.Data[i*m.Cols+j]
			if conj {
				z = complex(real(z), -imag(z))
			}
			out.Data[j*m.Rows+i] = z
		}
	}
	return out
}

// CMatMul returns the product m·n. It panics if m.Cols != n.Rows.
func CMatMul(m, n *CMatrix) *CMatrix {
	if m.Cols != n.Rows {
		panic("value: CMatMul shape mismatch")
	}
	out := NewCMatrix(m.Rows, n.Cols)
	mulInto(out.Data, m.Data, n.Data, m.Rows, m.Cols, n.Cols)
	return out
}

// CMatVec returns m·x. It panics if len(x) != m.Cols.
func CMatVec(m *CMatrix, x []complex128) []complex128 {
	if len(x) != m.Cols {
		panic("value: CMatVec shape mismatch")
	}
	out := make([]complex128, m.Rows)
	mulInto(out, m.Data, x, m.Rows, m.Cols, 1)
	return out
}

func (m *CMatrix) scale(c complex128) *CMatrix {
	out := NewCMatrix(m.Rows, m.Cols)
	scaleInto(out.Data, m.Data, c)
	return out
}

// complexMatrixOperands reports whether op on x and y is complex matrix
// arithmetic: a CMatrix on either side, or a real matrix with a complex
// number.
func complexMatrixOperands(x, y Value) bool {
	_, cx := x.(*CMatrix)
	_, cy := y.(*CMatrix)
	if cx || cy {
		return true
	}
	_, mx := x.(*Matrix)
	_, my := y.(*Matrix)
	_, zx := x.(Complex)
	_, zy := y.(Complex)
	return mx && zy || zx && my
}

// asCMatrix returns v as a complex matrix when it is a matrix of either kind.
func asCMatrix(v Value) (*CMatrix, bool) {
	switch t := v.(type) {
	case *CMatrix:
		return t, true
	case *Matrix:
		return Complexify(t), true
	}
	return nil, false
}

// asComplexScalar returns v as a complex number when it is a number.
func asComplexScalar(v Value) (complex128, bool) {
	switch t := v.(type) {
	case Num:
		return complex(float64(t), 0), true
	case Complex:
		return complex128(t), true
	}
	return 0, false
}

// cmatrixOp applies op when complexMatrixOperands(x, y); the rules are the
// real matrix rules of Binary with complex entries.
func cmatrixOp(op syntax.Token, x, y Value) (Value, error) {
	m, mok := asCMatrix(x)
	n, nok := asCMatrix(y)
	switch {
	case mok && nok:
		switch op {
		case syntax.ADD, syntax.SUB:
			if m.Rows != n.Rows || m.Cols != n.Cols {
				return nil, ValueErrorf("shape mismatch for %s: %d×%d and %d×%d", op, m.Rows, m.Cols, n.Rows, n.Cols)
			}
			out := NewCMatrix(m.Rows, m.Cols)
			for i := range out.Data {
				if op == syntax.ADD {
					out.Data[i] = m.Data[i] + n.Data[i]
				} else {
					out.Data[i] = m.Data[i] - n.Data[i]
				}
			}
			return out, nil
		case syntax.MUL:
			if m.Cols != n.Rows {
				return nil, ValueErrorf("matrix product needs inner dimensions to agree: %d×%d times %d×%d", m.Rows, m.Cols, n.Rows, n.Cols)
			}
			return CMatMul(m, n), nil
		}
		return nil, TypeErrorf("unsupported operands for %s: matrix and matrix (element-wise product: hadamard)", op)
	case mok:
		if v, ok := y.(*Vec); ok {
			if op != syntax.MUL {
				break
			}
			if v.Len() != m.Cols {
				return nil, ValueErrorf("matrix–vector product needs len(v) = columns: %d×%d matrix times vector of length %d", m.Rows, m.Cols, v.Len())
			}
			return ComplexVec(CMatVec(m, v.Complex128())), nil
		}
		s, ok := asComplexScalar(y)
		if !ok {
			break
		}
		switch op {
		case syntax.MUL:
			return m.scale(s), nil
		case syntax.QUO:
			if s == 0 {
				return nil, ValueErrorf("division by zero")
			}
			return m.scale(1 / s), nil
		case syntax.POW:
			k := real(s)
			if m.Rows != m.Cols {
				return nil, ValueErrorf("matrix power needs a square matrix, not %d×%d", m.Rows, m.Cols)
			}
			if imag(s) != 0 || k < 0 || k != math.Trunc(k) || math.IsInf(k, 0) {
				return nil, ValueErrorf("matrix power needs an integer exponent ≥ 0, not %s", y)
			}
			return cmatPow(m, k), nil
		case syntax.ADD, syntax.SUB:
			return nil, TypeErrorf("matrix %s number is not defined; to shift by c·I build the identity matrix explicitly", op)
		}
	case nok:
		if _, ok := x.(*Vec); ok && op == syntax.MUL {
			return nil, TypeErrorf("vector * matrix is not defined: a vector is a column; write transpose(M) * v")
		}
		if s, ok := asComplexScalar(x); ok {
			if op == syntax.MUL {
				return n.scale(s), nil
			}
			if op == syntax.ADD || op == syntax.SUB {
				return nil, TypeErrorf("number %s matrix is not defined; to shift by c·I build the identity matrix explicitly", op)
			}
		}
	}
	return nil, TypeErrorf("unsupported operands for %s: %s and %s", op, TypeName(x), TypeName(y))
}

func cmatPow(m *CMatrix, k float64) *CMatrix {
	r := NewCMatrix(m.Rows, m.Cols)
	for i := 0; i < m.Rows; i++ {
		r.Data[i*m.Cols+i] = 1
	}
	a := m
	for k > 0 {
		if math.Mod(k, 2) == 1 {
			r = CMatMul(r, a)
		}
		k = math.Floor(k / 2)
		if k > 0 {
			a = CMatMul(a, a)
		}
	}
	return r
}

package value

import (
	"math"
	"math/cmplx"

	"semiflow/lang/syntax"
)

// Arithmetic rules.
//
//   - One real number type (float64) and complex128; a real and a complex
//     operand give a complex result (which stays complex even when its
//     imaginary part is 0).
//   - + - * / % ^ act element-wise on vectors: vector ⊙ scalar, scalar ⊙
//     vector and vector ⊙ vector of equal length. A range acts as the
//     vector of its entries. A length mismatch is a "bad value" error naming both
//     lengths.
//   - M * N is the matrix product, M * v the matrix–vector product, M ± N
//     needs equal shapes, c*M, M*c and M/c scale, M^k (integer k ≥ 0) is a
//     power. A matrix with a complex entry is a CMatrix; a real matrix
//     with a complex number or a CMatrix gives a CMatrix (cmatrixOp).
//   - Division by zero (x/0, x%0, 0^negative) is a "bad value" error, also inside
//     vectors (the message names the index). Overflow follows IEEE 754 and
//     gives inf; nan and inf operands propagate.
//   - a % b is the floored remainder a − b·floor(a/b): it has the sign of b.
//   - A negative real base with a non-integer exponent is a "bad value" error that
//     suggests the complex form: (-8 + 0i)^(1/3).
//   - s + t concatenates strings.
//   - Comparisons are scalar-only: numbers (all six), strings (all six,
//     by code point), complex numbers and bools (== and != only).
//
// Values of other types take part through HasBinary.

// Binary applies the arithmetic or comparison operator op to x and y.
func Binary(op syntax.Token, x, y Value) (Value, error) {
	switch op {
	case syntax.EQL, syntax.NEQ, syntax.LSS, syntax.LEQ, syntax.GTR, syntax.GEQ:
		return compare(op, x, y)
	}
	if r, ok := x.(*Range); ok {
		x = r.Vec()
	}
	if r, ok := y.(*Range); ok {
		y = r.Vec()
	}
	if complexMatrixOperands(x, y) {
		return cmatrixOp(op, x, y)
	}
	switch a := x.(type) {
	case Num:
		switch b := y.(type) {
		case Num:
			z, err := realOp(op, float64(a), float64(b))
			return Num(z), err
		case Complex:
			z, err := complexOp(op, complex(float64(a), 0), complex128(b))
			return Complex(z), err
		case *Vec:
			return vecOp(op, x, y)
		case *Matrix:
			if op == syntax.MUL {
				return b.scale(float64(a)), nil
			}
		}
	case Complex:
		switch b := y.(type) {
		case Num:
			z, err := complexOp(op, complex128(a), complex(float64(b), 0))
			return Complex(z), err
		case Complex:
			z, err := complexOp(op, complex128(a), complex128(b))
			return Complex(z), err
		case *Vec:
			return vecOp(op, x, y)
		}
	case *Vec:
		switch y.(type) {
		case Num, Complex, *Vec:
			return vecOp(op, x, y)
		case *Matrix:
			if op == syntax.MUL {
				return nil, TypeErrorf("vector * matrix is not defined: a vector is a column; write transpose(M) * v")
			}
		}
	case *Matrix:
		if v, err, ok := matrixOp(op, a, y); ok {
			return v, err
		}
	case Str:
		if b, ok := y.(Str); ok && op == syntax.ADD {
			return a + b, nil
		}
	}
	if h, ok := x.(HasBinary); ok {
		if v, err := h.Binary(op, y, false); v != nil || err != nil {
			return v, err
		}
	}
	if h, ok := y.(HasBinary); ok {
		if v, err := h.Binary(op, x, true); v != nil || err != nil {
			return v, err
		}
	}
	return nil, TypeErrorf("unsupported operands for %s: %s and %s", op, TypeName(x), TypeName(y))
}

// Unary applies - or + to x.
func Unary(op syntax.Token, x Value) (Value, error) {
	if r, ok := x.(*Range); ok {
		x = r.Vec()
	}
	neg := op == syntax.SUB
	switch a := x.(type) {
	case Num:
		if neg {
			return -a, nil
		}
		return a, nil
	case Complex:
		if neg {
			return -a, nil
		}
		return a, nil
	case *Vec:
		if !neg {
			return a, nil
		}
		return vecOp(syntax.MUL, Num(-1), a)
	case *Matrix:
		if !neg {
			return a, nil
		}
		return a.scale(-1), nil
	case *CMatrix:
		if !neg {
			return a, nil
		}
		return a.scale(-1), nil
	case HasUnary:
		return a.Unary(op)
	}
	return nil, TypeErrorf("unsupported operand for unary %s: %s", op, TypeName(x))
}

func realOp(op syntax.Token, a, b float64) (float64, error) {
	switch op {
	case syntax.ADD:
		return a + b, nil
	case syntax.SUB:
		return a - b, nil
	case syntax.MUL:
		return a * b, nil
	case syntax.QUO:
		if b == 0 {
			return 0, ValueErrorf("division by zero")
		}
		return a / b, nil
	case syntax.REM:
		if b == 0 {
			return 0, ValueErrorf("division by zero in %%")
		}
		r := math.Mod(a, b)
		if r != 0 && (r < 0) != (b < 0) {
			r += b
		}
		return r, nil
	case syntax.POW:
		if a == 0 && b < 0 {
			return 0, ValueErrorf("division by zero: 0 to the negative power %s", FormatNum(b))
		}
		if a < 0 && b != math.Trunc(b) && !math.IsInf(b, 0) {
			return 0, ValueErrorf("negative base %s with non-integer exponent %s has no real power; for the complex power write (%s + 0i)^%s",
				FormatNum(a), FormatNum(b), FormatNum(a), FormatNum(b))
		}
		return math.Pow(a, b), nil
	}
	return 0, TypeErrorf("unsupported operator %s on numbers", op)
}

func complexOp(op syntax.Token, a, b complex128) (complex128, error) {
	switch op {
	case syntax.ADD:
		return a + b, nil
	case syntax.SUB:
		return a - b, nil
	case syntax.MUL:
		return a * b, nil
	case syntax.QUO:
		if b == 0 {
			return 0, ValueErrorf("division by zero")
		}
		return a / b, nil
	case syntax.POW:
		if a == 0 && (real(b) < 0 || real(b) == 0 && imag(b) != 0) {
			return 0, ValueErrorf("division by zero: 0 to the power %s", FormatComplex(b))
		}
		if b == 0 {
			return 1, nil
		}
		if imag(b) == 0 && real(b) == math.Trunc(real(b)) && math.Abs(real(b)) <= 64 {
			return intPow(a, int(real(b))), nil
		}
		return cmplx.Pow(a, b), nil
	case syntax.REM:
		return 0, TypeErrorf("%% needs real numbers, not complex")
	}
	return 0, TypeErrorf("unsupported operator %s on complex numbers", op)
}

// intPow is a^k by repeated squaring, exact for small Gaussian integers
// (cmplx.Pow goes through polar form and leaves rounding residue: i^2 ≠ -1).
func intPow(a complex128, k int) complex128 {
	if k < 0 {
		return 1 / intPow(a, -k)
	}
	r := complex(1, 0)
	for k > 0 {
		if k&1 == 1 {
			r *= a
		}
		a *= a
		k >>= 1
	}
	return r
}

// vecOp applies op element-wise; at least one of x, y is a *Vec.
func vecOp(op syntax.Token, x, y Value) (Value, error) {
	n := -1
	cplx := false
	for _, v := range []Value{x, y} {
		switch t := v.(type) {
		case *Vec:
			if n >= 0 && t.Len() != n {
				return nil, ValueErrorf("length mismatch for %s: vectors of length %d and %d", op, n, t.Len())
			}
			n = t.Len()
			cplx = cplx || t.IsComplex()
		case Complex:
			cplx = true
		}
	}
	if cplx {
		ax, bx := complexSeq(x), complexSeq(y)
		out := make([]complex128, n)
		for i := range out {
			z, err := complexOp(op, ax(i), bx(i))
			if err != nil {
				return nil, atIndex(err, i)
			}
			out[i] = z
		}
		return ComplexVec(out), nil
	}
	ax, bx := realSeq(x), realSeq(y)
	out := make([]float64, n)
	for i := range out {
		z, err := realOp(op, ax(i), bx(i))
		if err != nil {
			return nil, atIndex(err, i)
		}
		out[i] = z
	}
	return RealVec(out), nil
}

func atIndex(err error, i int) error {
	if e, ok := err.(*Error); ok {
		return &Error{Name: e.Name, Msg: e.Msg + " (at index " + FormatNum(float64(i)) + ")"}
	}
	return err
}

func realSeq(v Value) func(int) float64 {
	switch t := v.(type) {
	case Num:
		return func(int) float64 { return float64(t) }
	case *Vec:
		return func(i int) float64 { return t.R[i] }
	}
	panic("value: realSeq of " + v.Type())
}

func complexSeq(v Value) func(int) complex128 {
	switch t := v.(type) {
	case Num:
		return func(int) complex128 { return complex(float64(t), 0) }
	case Complex:
		return func(int) complex128 { return complex128(t) }
	case *Vec:
		if t.C != nil {
			return func(i int) complex128 { return t.C[i] }
		}
		return func(i int) complex128 { return complex(t.R[i], 0) }
	}
	panic("value: complexSeq of " + v.Type())
}

func (m *Matrix) scale(c float64) *Matrix {
	out := NewMatrix(m.Rows, m.Cols)
	scaleInto(out.Data, m.Data, c)
	return out
}

// MatMul returns the product m·n. It panics if m.Cols != n.Rows.
func MatMul(m, n *Matrix) *Matrix {
	if m.Cols != n.Rows {
		panic("value: MatMul shape mismatch")
	}
	out := NewMatrix(m.Rows, n.Cols)
	mulInto(out.Data, m.Data, n.Data, m.Rows, m.Cols, n.Cols)
	return out
}

// MatVec returns m·x. It panics if len(x) != m.Cols.
func MatVec(m *Matrix, x []float64) []float64 {
	if len(x) != m.Cols {
		panic("value: MatVec shape mismatch")
	}
	out := make([]float64, m.Rows)
	mulInto(out, m.Data, x, m.Rows, m.Cols, 1)
	return out
}

// entry is a real or complex matrix entry.
type entry interface{ ~float64 | ~complex128 }

// scaleInto sets out = c·x.
func scaleInto[T entry](out, x []T, c T) {
	for i, v := range x {
		out[i] = c * v
	}
}

// mulInto adds a·b to out, for row-major a (r×k), b (k×c) and out (r×c),
// skipping the zero entries of a (a sparse or triangular a costs less).
func mulInto[T entry](out, a, b []T, r, k, c int) {
	for i := 0; i < r; i++ {
		row := out[i*c : (i+1)*c]
		for p := 0; p < k; p++ {
			x := a[i*k+p]
			if x == 0 {
				continue
			}
			bp := b[p*c : (p+1)*c]
			for j := range row {
				row[j] += x * bp[j]
			}
		}
	}
}

// matrixOp handles op with a matrix left operand; ok is false when the
// combination is not a matrix operation.
func matrixOp(op syntax.Token, m *Matrix, y Value) (Value, error, bool) {
	switch b := y.(type) {
	case *Matrix:
		switch op {
		case syntax.ADD, syntax.SUB:
			if m.Rows != b.Rows || m.Cols != b.Cols {
				return nil, ValueErrorf("shape mismatch for %s: %d×%d and %d×%d", op, m.Rows, m.Cols, b.Rows, b.Cols), true
			}
			out := NewMatrix(m.Rows, m.Cols)
			for i := range out.Data {
				if op == syntax.ADD {
					out.Data[i] = m.Data[i] + b.Data[i]
				} else {
					out.Data[i] = m.Data[i] - b.Data[i]
				}
			}
			return out, nil, true
		case syntax.MUL:
			if m.Cols != b.Rows {
				return nil, ValueErrorf("matrix product needs inner dimensions to agree: %d×%d times %d×%d", m.Rows, m.Cols, b.Rows, b.Cols), true
			}
			return MatMul(m, b), nil, true
		}
		return nil, TypeErrorf("unsupported operands for %s: matrix and matrix (element-wise product: hadamard)", op), true
	case *Vec:
		if op != syntax.MUL {
			break
		}
		if b.Len() != m.Cols {
			return nil, ValueErrorf("matrix–vector product needs len(v) = columns: %d×%d matrix times vector of length %d", m.Rows, m.Cols, b.Len()), true
		}
		if b.C == nil {
			return RealVec(MatVec(m, b.R)), nil, true
		}
		re, im := make([]float64, len(b.C)), make([]float64, len(b.C))
		for i, z := range b.C {
			re[i], im[i] = real(z), imag(z)
		}
		pr, pi := MatVec(m, re), MatVec(m, im)
		out := make([]complex128, len(pr))
		for i := range out {
			out[i] = complex(pr[i], pi[i])
		}
		return ComplexVec(out), nil, true
	case Num:
		switch op {
		case syntax.MUL:
			return m.scale(float64(b)), nil, true
		case syntax.QUO:
			if b == 0 {
				return nil, ValueErrorf("division by zero"), true
			}
			return m.scale(1 / float64(b)), nil, true
		case syntax.POW:
			k := float64(b)
			if m.Rows != m.Cols {
				return nil, ValueErrorf("matrix power needs a square matrix, not %d×%d", m.Rows, m.Cols), true
			}
			if k < 0 || k != math.Trunc(k) || math.IsInf(k, 0) {
				return nil, ValueErrorf("matrix power needs an integer exponent ≥ 0, not %s", FormatNum(k)), true
			}
			return matPow(m, k), nil, true
		case syntax.ADD, syntax.SUB:
			return nil, TypeErrorf("matrix %s number is not defined; to shift by c·I build the identity matrix explicitly", op), true
		}
	}
	return nil, nil, false
}

func matPow(m *Matrix, k float64) *Matrix {
	r := NewMatrix(m.Rows, m.Cols)
	for i := 0; i < m.Rows; i++ {
		r.Data[i*m.Cols+i] = 1
	}
	a := m
	for k > 0 {
		if math.Mod(k, 2) == 1 {
			r = MatMul(r, a)
		}
		k = math.Floor(k / 2)
		if k > 0 {
			a = MatMul(a, a)
		}
	}
	return r
}

func compare(op syntax.Token, x, y Value) (Value, error) {
	ordered := op != syntax.EQL && op != syntax.NEQ
	switch a := x.(type) {
	case Num:
		switch b := y.(type) {
		case Num:
			return Bool(cmpFloat(op, float64(a), float64(b))), nil
		case Complex:
			if !ordered {
				return Bool((complex(float64(a), 0) == complex128(b)) == (op == syntax.EQL)), nil
			}
			return nil, TypeErrorf("complex numbers are not ordered; compare re(z) or abs(z)")
		}
	case Complex:
		var b complex128
		switch t := y.(type) {
		case Num:
			b = complex(float64(t), 0)
		case Complex:
			b = complex128(t)
		default:
			return nil, cmpTypeError(op, x, y)
		}
		if ordered {
			return nil, TypeErrorf("complex numbers are not ordered; compare re(z) or abs(z)")
		}
		return Bool((complex128(a) == b) == (op == syntax.EQL)), nil
	case Str:
		if b, ok := y.(Str); ok {
			c := 0
			if a < b {
				c = -1
			} else if a > b {
				c = 1
			}
			return Bool(cmpFloat(op, float64(c), 0)), nil
		}
	case Bool:
		if b, ok := y.(Bool); ok && !ordered {
			return Bool((a == b) == (op == syntax.EQL)), nil
		}
		if _, ok := y.(Bool); ok {
			return nil, TypeErrorf("bools are not ordered; %s needs numbers or strings", op)
		}
	}
	return nil, cmpTypeError(op, x, y)
}

func cmpTypeError(op syntax.Token, x, y Value) error {
	for _, v := range []Value{x, y} {
		switch v.(type) {
		case *Vec, *Range, *Matrix, *CMatrix, List:
			return TypeErrorf("comparison %s needs scalars, got %s and %s; compare entries, e.g. v[0] %s 1, or use min, max or norm",
				op, TypeName(x), TypeName(y), op)
		}
	}
	return TypeErrorf("cannot compare %s with %s", TypeName(x), TypeName(y))
}

func cmpFloat(op syntax.Token, a, b float64) bool {
	switch op {
	case syntax.EQL:
		return a == b
	case syntax.NEQ:
		return a != b
	case syntax.LSS:
		return a < b
	case syntax.LEQ:
		return a <= b
	case syntax.GTR:
		return a > b
	}
	return a >= b
}

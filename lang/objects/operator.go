package objects

import (
	"fmt"
	"strings"

	"gonum.org/v1/gonum/mat"

	"semiflow/lang/syntax"
	"semiflow/lang/value"
	"semiflow/numerics/linop"
)

// Operator is a language operator: a linear map with the grid it acts on
// (nil for explicit matrices) and a label describing how it was built. A
// complex operator A = B + iC has Op of type *linop.Complex, its
// realification acting on [Re u; Im u] (see linop.Complex); everything
// user-visible — sizes, entries, vectors — is in terms of A itself.
type Operator struct {
	Op    linop.Operator
	Grid  *Grid // may be nil
	Label string
	// Lift holds the boundary data of the grid's ends that entered the
	// operator (derivatives on an interval with data, and what sums,
	// multiples and products made of them): the affine part b(t) of
	// u ↦ Op u + b(t), which propagate adds as a forcing. Op stays linear.
	Lift []LiftTerm
}

func (a *Operator) Type() string { return "operator" }

// Dims returns the dimensions of the operator (of A, not of its
// realification, for a complex operator).
func (a *Operator) Dims() (r, c int) {
	if z, ok := a.Op.(*linop.Complex); ok {
		return z.ComplexDims()
	}
	return a.Op.Dims()
}

// Size is the number of rows of A (the order of a square operator).
func (a *Operator) Size() int {
	r, _ := a.Dims()
	return r
}

// IsComplex reports whether the operator is complex (Op a *linop.Complex).
func (a *Operator) IsComplex() bool {
	_, ok := a.Op.(*linop.Complex)
	return ok
}

func (a *Operator) String() string {
	r, c := a.Dims()
	s := fmt.Sprintf("operator %s: %d×%d, %s", a.Label, r, c, structure(a.Op))
	if a.Grid != nil {
		s += "\n  on " + a.Grid.describe()
	}
	if l := liftText(a.Lift); l != "" {
		s += "\n  " + l
	}
	if m := a.smallEntries(); m != nil {
		s += "\n  entries " + strings.ReplaceAll(m.String(), "\n", "\n          ")
	}
	return s
}

// ShownEntries is the largest number of rows and of columns of an
// operator whose display lists its entries.
const ShownEntries = 8

// smallEntries returns the entries of an operator of at most ShownEntries
// rows and columns, column j as A e_j: the stored entries of a matrix or a
// sparse operator; for a sum, product or Kronecker sum, the entries as its
// product forms them. A larger operator gives nil.
func (a *Operator) smallEntries() value.Indexable2 {
	r, c := a.Dims()
	if r == 0 || c == 0 || r > ShownEntries || c > ShownEntries {
		return nil
	}
	if z, ok := a.Op.(*linop.Complex); ok {
		m := value.NewCMatrix(r, c)
		e, col := make([]float64, 2*c), make([]float64, 2*r)
		for j := range c {
			e[j] = 1
			z.Apply(col, e)
			e[j] = 0
			for i := range r {
				m.Data[i*c+j] = complex(col[i], col[r+i])
			}
		}
		return m
	}
	m := value.NewMatrix(r, c)
	e, col := make([]float64, c), make([]float64, r)
	for j := range c {
		e[j] = 1
		a.Op.Apply(col, e)
		e[j] = 0
		for i, v := range col {
			m.Data[i*c+j] = v
		}
	}
	return m
}

// Structure describes how the operator is stored: "dense", "sparse, k
// nonzeros", "Kronecker sum", "diagonal" or "matrix-free".
func (a *Operator) Structure() string { return structure(a.Op) }

// structure describes the storage of op.
func structure(op linop.Operator) string {
	switch t := op.(type) {
	case *linop.CSR:
		return fmt.Sprintf("sparse, %d nonzeros", t.NNZ())
	case *linop.Dense:
		return "dense"
	case *linop.KronSum:
		return "Kronecker sum"
	case *linop.Diag:
		return "diagonal"
	case *linop.Block:
		return fmt.Sprintf("%d×%d blocks (sizes %s)", len(t.RowSizes), len(t.ColSizes), blockSizesText(t))
	case *linop.Sum:
		parts := make([]string, len(t.Terms))
		for k, term := range t.Terms {
			parts[k] = structure(term)
		}
		return "sum of " + strings.Join(parts, " and ")
	case *linop.Complex:
		switch {
		case t.Re == nil:
			return "complex: i times a real operator, " + structure(t.Im)
		case t.Im == nil:
			return "complex: real entries, " + structure(t.Re)
		}
		return "complex: real part " + structure(t.Re) + ", imaginary part " + structure(t.Im)
	case interface{ Structure() string }:
		return t.Structure()
	}
	return "matrix-free"
}

// AsOperator converts v to an operator: an *Operator is returned as it is,
// a square *value.Matrix is wrapped (copied) as a dense operator. Other
// values give a "wrong type" error, a non-square matrix a "bad value" error; both messages
// start with "must be", for the caller to put the argument's name before.
func AsOperator(v value.Value) (*Operator, error) {
	switch t := v.(type) {
	case *Operator:
		return t, nil
	case *value.Matrix:
		if t.Rows != t.Cols {
			return nil, value.ValueErrorf("must be a square matrix to act as an operator, not %d×%d", t.Rows, t.Cols)
		}
		return FromMatrix(t), nil
	case *value.CMatrix:
		if t.Rows != t.Cols {
			return nil, value.ValueErrorf("must be a square matrix to act as an operator, not %d×%d", t.Rows, t.Cols)
		}
		return FromCMatrix(t), nil
	}
	return nil, value.TypeErrorf("must be an operator or a square matrix, not %s", value.TypeName(v))
}

// FromCMatrix returns the complex operator with the entries of m (copied):
// dense real and imaginary parts.
func FromCMatrix(m *value.CMatrix) *Operator {
	re, im := m.Parts()
	return &Operator{Op: linop.NewComplex(FromMatrix(re).Op, FromMatrix(im).Op), Label: "matrix"}
}

// scalarLabel writes a complex scalar for an operator's label: 2i for a
// purely imaginary one, (1+2i) otherwise.
func scalarLabel(s complex128) string {
	if real(s) == 0 {
		return value.FormatNum(imag(s)) + "i"
	}
	return "(" + value.FormatComplex(s) + ")"
}

// errComplexLift refuses complex arithmetic on an operator with boundary
// data: the lifting of the data into the forcing is real.
var errComplexLift = value.ValueErrorf("an operator with boundary data takes part only in real arithmetic; give a complex problem homogeneous ends and the data as a forcing")

// Complexified returns a as a complex operator: a itself when complex, else
// the operator with a's entries as real parts.
func (a *Operator) Complexified() *linop.Complex {
	if z, ok := a.Op.(*linop.Complex); ok {
		return z
	}
	return linop.NewComplex(a.Op, nil)
}

// FromMatrix returns the dense operator with the entries of m (copied).
func FromMatrix(m *value.Matrix) *Operator {
	d := mat.NewDense(m.Rows, m.Cols, append([]float64(nil), m.Data...))
	return &Operator{Op: linop.NewDense(d), Label: "matrix"}
}

// Operator algebra (the Binary and Unary methods).
//
//   - A + B, A − B: operators of equal size; sparse operands stay sparse,
//     dense stay dense, Kronecker sums of equal factor sizes add factor-wise,
//     (X₁⊕Y₁) + (X₂⊕Y₂) = (X₁+X₂)⊕(Y₁+Y₂); otherwise a matrix-free sum.
//   - s*A, A*s, A/s, −A: scalar multiples; s(X⊕Y) = (sX)⊕(sY) keeps the
//     Kronecker structure.
//   - A*B: the product (sparse or dense when both are), A*v: the vector A v.
//   - A square matrix operand is taken as a dense operator.
//
// A size mismatch is a "bad value" error naming both sizes; division by zero is a
// "bad value".

// Binary implements value.HasBinary.
func (a *Operator) Binary(op syntax.Token, y value.Value, right bool) (value.Value, error) {
	switch b := y.(type) {
	case value.Num:
		s := float64(b)
		switch {
		case op == syntax.MUL:
			return a.scale(s, value.FormatNum(s)+"·"+a.Label), nil
		case op == syntax.QUO && !right:
			if s == 0 {
				return nil, value.ValueErrorf("division of an operator by zero")
			}
			return a.scale(1/s, a.Label+"/"+value.FormatNum(s)), nil
		}
		return nil, value.TypeErrorf("unsupported operands for %s: %s and an operator; only s*A, A*s and A/s mix numbers with operators", op, "a number")
	case value.Complex:
		s := complex128(b)
		if len(a.Lift) > 0 {
			return nil, errComplexLift
		}
		switch {
		case op == syntax.MUL:
			return a.scaleComplex(s, scalarLabel(s)+"·"+a.Label), nil
		case op == syntax.QUO && !right:
			if s == 0 {
				return nil, value.ValueErrorf("division of an operator by zero")
			}
			return a.scaleComplex(1/s, a.Label+"/"+scalarLabel(s)), nil
		}
		return nil, value.TypeErrorf("unsupported operands for %s: %s and an operator; only s*A, A*s and A/s mix numbers with operators", op, "a complex number")
	case *value.CMatrix:
		if b.Rows != b.Cols {
			return nil, value.ValueErrorf("an operator mixes only with square matrices, not %d×%d", b.Rows, b.Cols)
		}
		m := FromCMatrix(b)
		if right {
			return m.combine(op, a)
		}
		return a.combine(op, m)
	case *value.Vec:
		if op == syntax.MUL && !right {
			return a.applyVec(b)
		}
		if op == syntax.MUL {
			return nil, value.TypeErrorf("vector * operator is not defined: a vector is a column; write A * v")
		}
	case *value.Matrix:
		if b.Rows != b.Cols {
			return nil, value.ValueErrorf("an operator mixes only with square matrices, not %d×%d", b.Rows, b.Cols)
		}
		m := FromMatrix(b)
		if right {
			return m.combine(op, a)
		}
		return a.combine(op, m)
	case *Operator:
		if right {
			return b.combine(op, a)
		}
		return a.combine(op, b)
	}
	return nil, nil
}

// Unary implements value.HasUnary.
func (a *Operator) Unary(op syntax.Token) (value.Value, error) {
	if op == syntax.SUB {
		return a.scale(-1, "−"+a.Label), nil
	}
	return a, nil
}

func (a *Operator) applyVec(v *value.Vec) (value.Value, error) {
	r, c := a.Dims()
	if v.Len() != c {
		return nil, value.ValueErrorf("operator * vector: the operator is %d×%d but the vector has %d entries", r, c, v.Len())
	}
	if !a.IsComplex() && !v.IsComplex() {
		dst := make([]float64, r)
		a.Op.Apply(dst, v.R)
		return value.RealVec(dst), nil
	}
	// A(x + iy) through the realification: [Re; Im] = Φ(A)[x; y].
	z := a.Complexified()
	x := make([]float64, 2*c)
	for i, w := range v.Complex128() {
		x[i], x[c+i] = real(w), imag(w)
	}
	dst := make([]float64, 2*r)
	z.Apply(dst, x)
	out := make([]complex128, r)
	for i := range out {
		out[i] = complex(dst[i], dst[r+i])
	}
	return value.ComplexVec(out), nil
}

// SameGrid returns the grid shared by a and b: either one's grid when the
// other has none, nil when they differ.
func SameGrid(a, b *Grid) *Grid {
	switch {
	case a == nil:
		return b
	case b == nil || a == b:
		return a
	}
	return nil
}

func (a *Operator) scale(s float64, label string) *Operator {
	out := &Operator{Grid: a.Grid, Label: label, Lift: scaleLift(s, a.Lift)}
	switch t := a.Op.(type) {
	case *linop.Complex:
		out.Op = linop.NewComplex(scaleOpNil(s, t.Re), scaleOpNil(s, t.Im))
	case *linop.CSR:
		out.Op = linop.ScaleCSR(s, t)
	case *linop.Dense:
		var m mat.Dense
		m.Scale(s, t.Mat())
		out.Op = linop.NewDense(&m)
	case *linop.KronSum:
		out.Op = linop.NewKronSum(scaleOp(s, t.X), scaleOp(s, t.Y))
	case *linop.Diag:
		d := make([]float64, len(t.D))
		for i, x := range t.D {
			d[i] = s * x
		}
		out.Op = &linop.Diag{D: d}
	default:
		out.Op = &linop.Scaled{Alpha: s, A: a.Op}
	}
	return out
}

func scaleOp(s float64, op linop.Operator) linop.Operator {
	return (&Operator{Op: op}).scale(s, "").Op
}

// scaleOpNil is scaleOp with nil (a zero part) kept nil.
func scaleOpNil(s float64, op linop.Operator) linop.Operator {
	if op == nil {
		return nil
	}
	return scaleOp(s, op)
}

// scaleComplex returns s·A for a complex s = p + iq: with A = B + iC,
// (pB − qC) + i(qB + pC), parts that vanish kept nil. A real s keeps a
// real operator real.
func (a *Operator) scaleComplex(s complex128, label string) *Operator {
	if imag(s) == 0 && !a.IsComplex() {
		return a.scale(real(s), label)
	}
	z := a.Complexified()
	p, q := real(s), imag(s)
	comb := func(x float64, u linop.Operator, y float64, w linop.Operator) linop.Operator {
		if x == 0 || u == nil {
			return scaleOpNil(y, nilIfZero(y, w))
		}
		if y == 0 || w == nil {
			return scaleOp(x, u)
		}
		return addOps(scaleOp(x, u), y, w)
	}
	re := comb(p, z.Re, -q, z.Im)
	im := comb(q, z.Re, p, z.Im)
	if re == nil && im == nil {
		re = scaleOp(0, firstPart(z))
	}
	return &Operator{Op: linop.NewComplex(re, im), Grid: a.Grid, Label: label}
}

func nilIfZero(s float64, op linop.Operator) linop.Operator {
	if s == 0 {
		return nil
	}
	return op
}

func firstPart(z *linop.Complex) linop.Operator {
	if z.Re != nil {
		return z.Re
	}
	return z.Im
}

func (a *Operator) combine(op syntax.Token, b *Operator) (value.Value, error) {
	if a.IsComplex() || b.IsComplex() {
		if len(a.Lift) > 0 || len(b.Lift) > 0 {
			return nil, errComplexLift
		}
		return a.combineComplex(op, b)
	}
	ar, ac := a.Op.Dims()
	br, bc := b.Op.Dims()
	g := SameGrid(a.Grid, b.Grid)
	switch op {
	case syntax.ADD, syntax.SUB:
		if ar != br || ac != bc {
			return nil, value.ValueErrorf("operator sizes differ for %s: %d×%d and %d×%d", op, ar, ac, br, bc)
		}
		sign := 1.0
		if op == syntax.SUB {
			sign = -1
		}
		lift := append(append([]LiftTerm(nil), a.Lift...), scaleLift(sign, b.Lift)...)
		return &Operator{Op: addOps(a.Op, sign, b.Op), Grid: g, Label: "(" + a.Label + " " + op.String() + " " + b.Label + ")", Lift: lift}, nil
	case syntax.MUL:
		if ac != br {
			return nil, value.ValueErrorf("operator product needs inner sizes to agree: %d×%d times %d×%d", ar, ac, br, bc)
		}
		// A(Bu + b) + a = ABu + (Ab + a).
		lift := append(mapLift(a.Op, b.Lift), a.Lift...)
		return &Operator{Op: mulOps(a.Op, b.Op), Grid: g, Label: a.Label + "·" + b.Label, Lift: lift}, nil
	}
	return nil, value.TypeErrorf("unsupported operands for %s: operator and operator (use +, −, * or kronsum)", op)
}

// combineComplex is combine when a or b is complex: parts add part by
// part; (B₁ + iC₁)(B₂ + iC₂) = (B₁B₂ − C₁C₂) + i(B₁C₂ + C₁B₂).
func (a *Operator) combineComplex(op syntax.Token, b *Operator) (value.Value, error) {
	ar, ac := a.Dims()
	br, bc := b.Dims()
	g := SameGrid(a.Grid, b.Grid)
	x, y := a.Complexified(), b.Complexified()
	switch op {
	case syntax.ADD, syntax.SUB:
		if ar != br || ac != bc {
			return nil, value.ValueErrorf("operator sizes differ for %s: %d×%d and %d×%d", op, ar, ac, br, bc)
		}
		sign := 1.0
		if op == syntax.SUB {
			sign = -1
		}
		add := func(u, w linop.Operator) linop.Operator {
			switch {
			case w == nil:
				return u
			case u == nil:
				return scaleOpNil(sign, w)
			}
			return addOps(u, sign, w)
		}
		re, im := add(x.Re, y.Re), add(x.Im, y.Im)
		if re == nil && im == nil {
			re = scaleOp(0, firstPart(x))
		}
		return &Operator{Op: linop.NewComplex(re, im), Grid: g, Label: "(" + a.Label + " " + op.String() + " " + b.Label + ")"}, nil
	case syntax.MUL:
		if ac != br {
			return nil, value.ValueErrorf("operator product needs inner sizes to agree: %d×%d times %d×%d", ar, ac, br, bc)
		}
		mul := func(u, w linop.Operator) linop.Operator {
			if u == nil || w == nil {
				return nil
			}
			return mulOps(u, w)
		}
		add := func(u linop.Operator, sign float64, w linop.Operator) linop.Operator {
			switch {
			case w == nil:
				return u
			case u == nil:
				return scaleOpNil(sign, w)
			}
			return addOps(u, sign, w)
		}
		re := add(mul(x.Re, y.Re), -1, mul(x.Im, y.Im))
		im := add(mul(x.Re, y.Im), 1, mul(x.Im, y.Re))
		if re == nil && im == nil {
			re = mulOps(firstPart(x), firstPart(y))
			re = scaleOp(0, re)
		}
		return &Operator{Op: linop.NewComplex(re, im), Grid: g, Label: a.Label + "·" + b.Label}, nil
	}
	return nil, value.TypeErrorf("unsupported operands for %s: operator and operator (use +, −, * or kronsum)", op)
}

// addOps returns x + sign·y in the most structured form available.
func addOps(x linop.Operator, sign float64, y linop.Operator) linop.Operator {
	if kx, ok := x.(*linop.KronSum); ok {
		if ky, ok := y.(*linop.KronSum); ok {
			nx, _ := kx.X.Dims()
			my, _ := ky.X.Dims()
			if nx == my {
				return linop.NewKronSum(addOps(kx.X, sign, ky.X), addOps(kx.Y, sign, ky.Y))
			}
		}
	}
	if dx, ok := x.(*linop.Dense); ok {
		if dy, ok := y.(*linop.Dense); ok {
			var m mat.Dense
			m.Scale(sign, dy.Mat())
			m.Add(dx.Mat(), &m)
			return linop.NewDense(&m)
		}
	}
	if sx, ok := sparse(x); ok {
		if sy, ok := sparse(y); ok {
			return linop.AddCSR(1, sx, sign, sy)
		}
	}
	if sign != 1 {
		y = scaleOp(sign, y)
	}
	return &linop.Sum{Terms: []linop.Operator{x, y}}
}

// mulOps returns the product x y in the most structured form available.
func mulOps(x, y linop.Operator) linop.Operator {
	if dx, ok := x.(*linop.Dense); ok {
		if dy, ok := y.(*linop.Dense); ok {
			var m mat.Dense
			m.Mul(dx.Mat(), dy.Mat())
			return linop.NewDense(&m)
		}
	}
	if sx, ok := sparse(x); ok {
		if sy, ok := sparse(y); ok {
			return linop.MulCSR(sx, sy)
		}
	}
	return &linop.Product{Factors: []linop.Operator{x, y}}
}

// sparse returns the CSR form of op when it is sparse by construction (not
// for dense matrices, which stay dense).
func sparse(op linop.Operator) (*linop.CSR, bool) {
	if _, ok := op.(*linop.Dense); ok {
		return nil, false
	}
	s, ok := op.(linop.Sparser)
	if !ok {
		return nil, false
	}
	c, err := s.ToCSR()
	return c, err == nil
}

// KronSum returns A ⊕ B = A ⊗ I + I ⊗ B of two square operators. Its grid is
// the tensor product of their 1-D grids when both have one.
func KronSum(a, b *Operator) (*Operator, error) {
	ar, ac := a.Dims()
	br, bc := b.Dims()
	if ar != ac || br != bc {
		return nil, value.ValueErrorf("needs square operators, not %d×%d and %d×%d", ar, ac, br, bc)
	}
	if len(a.Lift) > 0 || len(b.Lift) > 0 {
		return nil, value.ValueErrorf("needs operators without boundary data: data on a tensor grid vary along the boundary, which a 1-D datum cannot say; give the tensor grid's problem homogeneous ends and the data as a forcing")
	}
	var op linop.Operator
	if a.IsComplex() || b.IsComplex() {
		// (X₁ + iX₂) ⊕ (Y₁ + iY₂) = (X₁ ⊕ Y₁) + i(X₂ ⊕ Y₂): ⊕ is linear in each factor.
		x, y := a.Complexified(), b.Complexified()
		part := func(u, w linop.Operator) linop.Operator {
			switch {
			case u == nil && w == nil:
				return nil
			case u == nil:
				u = &linop.Diag{D: make([]float64, ar)}
			case w == nil:
				w = &linop.Diag{D: make([]float64, br)}
			}
			return linop.NewKronSum(u, w)
		}
		op = linop.NewComplex(part(x.Re, y.Re), part(x.Im, y.Im))
	} else {
		op = linop.NewKronSum(a.Op, b.Op)
	}
	out := &Operator{Op: op, Label: a.Label + " ⊕ " + b.Label}
	if a.Grid != nil && b.Grid != nil {
		switch fa, fb := a.Grid.Factors(), b.Grid.Factors(); {
		case len(fa) == 1 && len(fb) == 1:
			out.Grid = NewTensor(a.Grid, b.Grid)
		case len(fa)+len(fb) == 3:
			f := append(append([]*Grid(nil), fa...), fb...)
			out.Grid = NewTensor3(f[0], f[1], f[2])
		}
	}
	return out, nil
}

// MIME returns an HTML table: label, size, storage, the grid, and the norms
// ‖A‖₁ and ‖A‖∞ where one pass over the entries gives them exactly; for an
// operator of at most ShownEntries rows and columns, a second table of its
// entries.
func (a *Operator) MIME() map[string]any {
	r, c := a.Dims()
	t := &textTable{caption: "operator " + a.Label, left: true}
	t.add("size", fmt.Sprintf("%d×%d", r, c))
	t.add("storage", structure(a.Op))
	if a.Grid != nil {
		t.add("grid", a.Grid.describe())
	}
	if l := liftText(a.Lift); l != "" {
		t.add("boundary data", strings.TrimPrefix(l, "boundary data "))
	}
	if !a.IsComplex() {
		// For a complex A the sums of Φ(A) are not A's; left out.
		if n, ok := linop.Norm1(a.Op); ok {
			t.add("‖A‖₁ (max column sum)", value.FormatNum(n))
		}
		if n, ok := linop.NormInf(a.Op); ok {
			t.add("‖A‖∞ (max row sum)", value.FormatNum(n))
		}
	}
	out := t.html()
	if m := a.smallEntries(); m != nil {
		e := &textTable{caption: "entries a_ij (row i, column j)"}
		e.head = append(e.head, "")
		mr, mc := m.Dims()
		for j := range mc {
			e.head = append(e.head, fmt.Sprint(j))
		}
		for i := range mr {
			row := []string{fmt.Sprint(i)}
			for j := range mc {
				row = append(row, m.Index2([]int{i}, []int{j}, true, true).String())
			}
			e.add(row...)
		}
		out += e.html()
	}
	return map[string]any{"text/html": out}
}

// blockSizesText lists a block operator's block-row sizes, and its
// block-column sizes too when they differ.
func blockSizesText(b *linop.Block) string {
	text := func(s []int) string {
		parts := make([]string, len(s))
		for i, k := range s {
			parts[i] = fmt.Sprint(k)
		}
		return strings.Join(parts, ", ")
	}
	r, c := text(b.RowSizes), text(b.ColSizes)
	if r == c {
		return r
	}
	return r + " by " + c
}

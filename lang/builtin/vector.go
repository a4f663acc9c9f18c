package builtin

import (
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/mat"

	"semiflow/lang/eval"
	"semiflow/lang/syntax"
	"semiflow/lang/value"
)

// vectorFamily: reductions, norms, constructors and matrix helpers.
var vectorFamily = []*Builtin{
	{
		Name:   "sum",
		Params: []value.Param{req("v", "a vector, range or list of numbers")},
		Doc:    "The sum Σ_k v_k of the entries (0 for an empty vector), accumulated left to right.",
		Examples: []Example{
			{"sum(1 .. 100)", "5050"},
			{"sum([1i, 2])", "2+1i"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			re, cx, err := numbers(c, "v", c.Args[0])
			if err != nil {
				return nil, err
			}
			if cx != nil {
				var s complex128
				for _, z := range cx {
					s += z
				}
				return value.Complex(s), nil
			}
			s := 0.0
			for _, x := range re {
				s += x
			}
			return value.Num(s), nil
		},
	},
	{
		Name:   "prod",
		Params: []value.Param{req("v", "a vector, range or list of numbers")},
		Doc:    "The product Π_k v_k of the entries (1 for an empty vector).",
		Examples: []Example{
			{"prod(1 .. 5)", "120"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			re, cx, err := numbers(c, "v", c.Args[0])
			if err != nil {
				return nil, err
			}
			if cx != nil {
				s := complex(1, 0)
				for _, z := range cx {
					s *= z
				}
				return value.Complex(s), nil
			}
			s := 1.0
			for _, x := range re {
				s *= x
			}
			return value.Num(s), nil
		},
	},
	{
		Name:   "min",
		Params: []value.Param{rest("values", "one vector, range or list, or several numbers")},
		Doc:    "The least of the values: min(v) of the entries of a vector, or min(a, b, ...) of several real numbers. nan if any entry is nan. Complex numbers are not ordered.",
		Examples: []Example{
			{"min([3, 1, 2])", "1"},
			{"min(4, -2)", "-2"},
		},
		Impl: func(c *eval.Call) (value.Value, error) { return extremum(c, -1) },
	},
	{
		Name:   "max",
		Params: []value.Param{rest("values", "one vector, range or list, or several numbers")},
		Doc:    "The greatest of the values: max(v) of the entries of a vector, or max(a, b, ...) of several real numbers. nan if any entry is nan. Complex numbers are not ordered.",
		Examples: []Example{
			{"max(0 .. 1 by 0.25)", "1"},
			{"max(4, -2, 7)", "7"},
		},
		Impl: func(c *eval.Call) (value.Value, error) { return extremum(c, 1) },
	},
	{
		Name:   "mean",
		Params: []value.Param{req("v", "a non-empty vector, range or list of numbers")},
		Doc:    "The arithmetic mean (1/n) Σ_k v_k of the n entries.",
		Examples: []Example{
			{"mean([1, 2, 3, 4])", "2.5"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			re, cx, err := numbers(c, "v", c.Args[0])
			if err != nil {
				return nil, err
			}
			n := len(re) + len(cx)
			if n == 0 {
				return nil, value.ValueErrorf("mean of an empty vector")
			}
			if cx != nil {
				var s complex128
				for _, z := range cx {
					s += z
				}
				return value.Complex(s / complex(float64(n), 0)), nil
			}
			s := 0.0
			for _, x := range re {
				s += x
			}
			return value.Num(s / float64(n)), nil
		},
	},
	{
		Name: "norm",
		Params: []value.Param{
			req("x", "a vector (real or complex) or a matrix"),
			opt("p", value.Num(2), "1, 2, inf, or for vectors any real p ≥ 1"),
		},
		Doc: "The p-norm. For a vector ‖v‖_p = (Σ_k |v_k|^p)^{1/p}, with ‖v‖_inf = max_k |v_k|; the 2-norm is computed with scaling, so it neither overflows nor underflows needlessly. For a matrix the induced norm: p = 1 the largest column sum of |a_ij|, p = inf the largest row sum, p = 2 the largest singular value σ_max; for a complex matrix the same with moduli |a_ij|.",
		Examples: []Example{
			{"norm([3, 4])", "5"},
			{"norm([3, -4], p=1)", "7"},
			{"norm([1, -7, 2], p=inf)", "7"},
			{"norm({1, 2 | 3, 4})", "5.464985704"},
		},
		Impl: normImpl,
	},
	{
		Name:   "dot",
		Params: []value.Param{req("u", "a vector"), req("v", "a vector of the same length")},
		Doc:    "The inner product ⟨u, v⟩ = Σ_k conj(u_k) v_k, linear in v and conjugate-linear in u; for real vectors the ordinary dot product.",
		Examples: []Example{
			{"dot([1, 2, 3], [4, 5, 6])", "32"},
			{"dot([1i], [1i])", "1+0i"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			ur, uc, err := numbers(c, "u", c.Args[0])
			if err != nil {
				return nil, err
			}
			vr, vc, err := numbers(c, "v", c.Args[1])
			if err != nil {
				return nil, err
			}
			nu, nv := len(ur)+len(uc), len(vr)+len(vc)
			if nu != nv {
				return nil, value.ValueErrorf("dot: length mismatch: vectors of length %d and %d", nu, nv)
			}
			if uc == nil && vc == nil {
				s := 0.0
				for i := range ur {
					s += ur[i] * vr[i]
				}
				return value.Num(s), nil
			}
			if uc == nil {
				uc = toComplex(ur)
			}
			if vc == nil {
				vc = toComplex(vr)
			}
			var s complex128
			for i := range uc {
				s += cmplx.Conj(uc[i]) * vc[i]
			}
			return value.Complex(s), nil
		},
	},
	{
		Name: "equispaced",
		Params: []value.Param{
			req("a", "first point"),
			req("b", "last point"),
			opt("n", value.Num(50), "number of points, ≥ 1"),
		},
		Doc: "The n equally spaced points x_k = a + k (b − a)/(n − 1), k = 0 … n−1, from a to b inclusive (the last point is exactly b). With n = 1 the single point a.",
		Examples: []Example{
			{"equispaced(0, 1, 5)", "[0, 0.25, 0.5, 0.75, 1]"},
			{"len(equispaced(-1, 1))", "50"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			a, err := argReal(c, 0)
			if err != nil {
				return nil, err
			}
			b, err := argReal(c, 1)
			if err != nil {
				return nil, err
			}
			n, err := argCount(c, 2)
			if err != nil {
				return nil, err
			}
			if n < 1 {
				return nil, value.ValueErrorf("equispaced: n must be at least 1, not %d", n)
			}
			if math.IsNaN(a) || math.IsInf(a, 0) || math.IsNaN(b) || math.IsInf(b, 0) || math.IsInf(b-a, 0) {
				return nil, value.ValueErrorf("equispaced: needs finite end points a finite distance apart, got a = %s, b = %s", value.FormatNum(a), value.FormatNum(b))
			}
			out := make([]float64, n)
			if n == 1 {
				out[0] = a
				return value.RealVec(out), nil
			}
			h := (b - a) / float64(n-1)
			for k := range out {
				out[k] = a + float64(k)*h
			}
			out[n-1] = b
			return value.RealVec(out), nil
		},
	},
	{
		Name:     "zeros",
		Params:   []value.Param{req("n", "length, a whole number ≥ 0")},
		Doc:      "The vector of n zeros.",
		Examples: []Example{{"zeros(3)", "[0, 0, 0]"}},
		Impl: func(c *eval.Call) (value.Value, error) {
			n, err := argCount(c, 0)
			if err != nil {
				return nil, err
			}
			return value.RealVec(make([]float64, n)), nil
		},
	},
	{
		Name:     "ones",
		Params:   []value.Param{req("n", "length, a whole number ≥ 0")},
		Doc:      "The vector of n ones.",
		Examples: []Example{{"ones(2) * 7", "[7, 7]"}},
		Impl: func(c *eval.Call) (value.Value, error) {
			n, err := argCount(c, 0)
			if err != nil {
				return nil, err
			}
			out := make([]float64, n)
			for i := range out {
				out[i] = 1
			}
			return value.RealVec(out), nil
		},
	},
	{
		Name:   "hadamard",
		Params: []value.Param{req("a", "a vector or matrix"), req("b", "of the same length or shape")},
		Doc:    "The entry-wise (Hadamard) product (a ∘ b)_ij = a_ij b_ij of two matrices of the same shape, or of two vectors of the same length (which is also a * b).",
		Examples: []Example{
			{"hadamard({1, 2 | 3, 4}, {5, 6 | 7, 8})", "{ 5, 12 |\n 21, 32}"},
			{"hadamard([1, 2], [3, 4])", "[3, 8]"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			a, b := c.Args[0], c.Args[1]
			if za, zb, ok := complexPair(a, b); ok {
				if za.Rows != zb.Rows || za.Cols != zb.Cols {
					return nil, value.ValueErrorf("hadamard: shape mismatch: %d×%d and %d×%d", za.Rows, za.Cols, zb.Rows, zb.Cols)
				}
				out := value.NewCMatrix(za.Rows, za.Cols)
				for i := range out.Data {
					out.Data[i] = za.Data[i] * zb.Data[i]
				}
				return out, nil
			}
			ma, okA := a.(*value.Matrix)
			mb, okB := b.(*value.Matrix)
			if okA != okB {
				return nil, value.TypeErrorf("hadamard needs two matrices or two vectors, not %s and %s", value.TypeName(a), value.TypeName(b))
			}
			if !okA {
				_, _, err := numbers(c, "a", a)
				if err != nil {
					return nil, err
				}
				if _, _, err := numbers(c, "b", b); err != nil {
					return nil, err
				}
				if value.IsNumeric(a) || value.IsNumeric(b) {
					return nil, value.TypeErrorf("hadamard needs two vectors or two matrices; for a scalar multiple use *")
				}
				return value.Binary(syntax.MUL, a, b)
			}
			if ma.Rows != mb.Rows || ma.Cols != mb.Cols {
				return nil, value.ValueErrorf("hadamard: shape mismatch: %d×%d and %d×%d", ma.Rows, ma.Cols, mb.Rows, mb.Cols)
			}
			out := value.NewMatrix(ma.Rows, ma.Cols)
			for i := range out.Data {
				out.Data[i] = ma.Data[i] * mb.Data[i]
			}
			return out, nil
		},
	},
	{
		Name:   "transpose",
		Params: []value.Param{req("M", "a matrix")},
		Doc:    "The transpose Mᵀ, (Mᵀ)_ij = M_ji, of a real or complex matrix (no conjugation: the conjugate transpose M* is transpose(conj(M))). Vectors are columns and have no transpose of their own.",
		Examples: []Example{
			{"transpose({1, 2, 3 | 4, 5, 6})", "{1, 4 |\n 2, 5 |\n 3, 6}"},
			{"transpose(conj({1, 2i | 0, 3}))", "{1+0i, 0+0i |\n 0-2i, 3+0i}"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			if z, ok := c.Args[0].(*value.CMatrix); ok {
				return z.Transpose(false), nil
			}
			m, ok := c.Args[0].(*value.Matrix)
			if !ok {
				return nil, value.TypeErrorf("transpose needs a matrix, not %s", value.TypeName(c.Args[0]))
			}
			out := value.NewMatrix(m.Cols, m.Rows)
			for i := 0; i < m.Rows; i++ {
				for j := 0; j < m.Cols; j++ {
					out.Data[j*m.Rows+i] = m.At(i, j)
				}
			}
			return out, nil
		},
	},
}

// complexPair returns a and b as complex matrices when both are matrices
// and at least one is complex.
func complexPair(a, b value.Value) (x, y *value.CMatrix, ok bool) {
	conv := func(v value.Value) (*value.CMatrix, bool, bool) {
		switch t := v.(type) {
		case *value.CMatrix:
			return t, true, true
		case *value.Matrix:
			return value.Complexify(t), false, true
		}
		return nil, false, false
	}
	x, cx, okx := conv(a)
	y, cy, oky := conv(b)
	return x, y, okx && oky && (cx || cy)
}

func extremum(c *eval.Call, sign float64) (value.Value, error) {
	vals := c.Rest
	var xs []float64
	switch {
	case len(vals) == 0:
		return nil, value.TypeErrorf("%s needs a vector or at least one number", c.Name)
	case len(vals) == 1 && !value.IsNumeric(vals[0]):
		re, cx, err := numbers(c, "values", vals[0])
		if err != nil {
			return nil, err
		}
		if cx != nil {
			return nil, value.TypeErrorf("%s: complex numbers are not ordered; use abs or re first", c.Name)
		}
		xs = re
	default:
		for _, v := range vals {
			switch t := v.(type) {
			case value.Num:
				xs = append(xs, float64(t))
			case value.Complex:
				return nil, value.TypeErrorf("%s: complex numbers are not ordered; use abs or re first", c.Name)
			default:
				return nil, value.TypeErrorf("%s of several values needs numbers, not %s; for a vector pass it alone", c.Name, value.TypeName(v))
			}
		}
	}
	if len(xs) == 0 {
		return nil, value.ValueErrorf("%s of an empty vector", c.Name)
	}
	best := xs[0]
	for _, x := range xs {
		if math.IsNaN(x) {
			return value.Num(math.NaN()), nil
		}
		if sign*(x-best) > 0 {
			best = x
		}
	}
	return value.Num(best), nil
}

func normImpl(c *eval.Call) (value.Value, error) {
	p, err := argReal(c, 1)
	if err != nil {
		return nil, err
	}
	if m, ok := c.Args[0].(*value.Matrix); ok {
		return matrixNorm(m, p)
	}
	if m, ok := c.Args[0].(*value.CMatrix); ok {
		return complexMatrixNorm(m, p)
	}
	re, cx, err := numbers(c, "x", c.Args[0])
	if err != nil {
		return nil, err
	}
	if !(p >= 1) {
		return nil, value.ValueErrorf("norm: p must be ≥ 1 (or inf), not %s", value.FormatNum(p))
	}
	abs := make([]float64, 0, len(re)+len(cx))
	for _, x := range re {
		abs = append(abs, math.Abs(x))
	}
	for _, z := range cx {
		abs = append(abs, cmplx.Abs(z))
	}
	return value.Num(vectorNorm(abs, p)), nil
}

// vectorNorm is the p-norm of non-negative entries a, scaled by max a_k so
// that the powers neither overflow nor underflow.
func vectorNorm(a []float64, p float64) float64 {
	scale := 0.0
	for _, x := range a {
		if math.IsNaN(x) {
			return math.NaN()
		}
		scale = math.Max(scale, x)
	}
	if scale == 0 || math.IsInf(p, 1) || math.IsInf(scale, 1) {
		return scale
	}
	s := 0.0
	for _, x := range a {
		s += math.Pow(x/scale, p)
	}
	if p == 1 {
		return scale * s
	}
	if p == 2 {
		return scale * math.Sqrt(s)
	}
	return scale * math.Pow(s, 1/p)
}

// complexMatrixNorm is the induced p-norm of a complex matrix: for p = 1
// and inf those of the matrix of moduli |m_ij| (the same sums); for p = 2
// the 2-norm of the realification [[B, −C], [C, B]] of M = B + iC, whose
// singular values are M's, each twice.
func complexMatrixNorm(m *value.CMatrix, p float64) (value.Value, error) {
	if p == 2 {
		b, cm := m.Parts()
		return matrixNorm(realify(b, cm), 2)
	}
	abs := value.NewMatrix(m.Rows, m.Cols)
	for i, z := range m.Data {
		abs.Data[i] = cmplx.Abs(z)
	}
	return matrixNorm(abs, p)
}

// realify returns [[B, −C], [C, B]], the real matrix of B + iC acting on
// [re x; im x].
func realify(b, cm *value.Matrix) *value.Matrix {
	r, c := b.Rows, b.Cols
	out := value.NewMatrix(2*r, 2*c)
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			x, y := b.At(i, j), cm.At(i, j)
			out.Data[i*2*c+j] = x
			out.Data[i*2*c+c+j] = -y
			out.Data[(r+i)*2*c+j] = y
			out.Data[(r+i)*2*c+c+j] = x
		}
	}
	return out
}

func matrixNorm(m *value.Matrix, p float64) (value.Value, error) {
	if m.Rows == 0 || m.Cols == 0 {
		if p == 1 || p == 2 || math.IsInf(p, 1) {
			return value.Num(0), nil
		}
	}
	switch {
	case p == 1 || math.IsInf(p, 1):
		best := 0.0
		outer, inner := m.Cols, m.Rows
		if p != 1 {
			outer, inner = m.Rows, m.Cols
		}
		for a := 0; a < outer; a++ {
			s := 0.0
			for b := 0; b < inner; b++ {
				if p == 1 {
					s += math.Abs(m.At(b, a))
				} else {
					s += math.Abs(m.At(a, b))
				}
			}
			best = math.Max(best, s)
		}
		return value.Num(best), nil
	case p == 2:
		var svd mat.SVD
		if !svd.Factorize(mat.NewDense(m.Rows, m.Cols, append([]float64(nil), m.Data...)), mat.SVDNone) {
			return nil, value.ValueErrorf("norm: the singular value decomposition did not converge")
		}
		return value.Num(svd.Values(nil)[0]), nil
	}
	return nil, value.ValueErrorf("norm of a matrix: p must be 1, 2 or inf, not %s", value.FormatNum(p))
}

package builtin

import (
	"math"
	"math/cmplx"

	"semiflow/lang/eval"
	"semiflow/lang/value"
)

// Element-wise functions act on a number, a complex number, or each entry
// of a vector or range. They do not act on matrices (exp of a matrix is the
// matrix exponential, not the entry-wise one).
//
// Domain rule: a real function applied to a real argument outside its real
// domain — sqrt, log, log10 of a negative number, asin, acos outside
// [-1, 1] — is a "bad value" error that suggests the complex form, e.g.
// sqrt(-1 + 0i). The pole log(0) is a "bad value" error too. Complex arguments
// use the principal branch. nan and inf arguments propagate.

// elem describes one element-wise function.
type elem struct {
	name, doc string
	// re maps a real argument; it returns ok=false outside the real
	// domain (and then the complex form is suggested).
	re func(x float64) (y float64, ok bool)
	// cx maps a complex argument to a complex result; nil when the
	// function is real-only.
	cx func(z complex128) complex128
	// cr maps a complex argument to a real result (abs, re, im, arg).
	cr       func(z complex128) float64
	examples []Example
	// onMatrix: the function acts entry-wise on matrices too (re, im,
	// conj, abs: the parts of a complex matrix).
	onMatrix bool
}

// applyMatrix applies e to each entry of a real or complex matrix.
func (e elem) applyMatrix(v value.Value) (value.Value, error) {
	var z *value.CMatrix
	switch t := v.(type) {
	case *value.Matrix:
		out := value.NewMatrix(t.Rows, t.Cols)
		for i, x := range t.Data {
			y, err := e.real(x)
			if err != nil {
				return nil, err
			}
			out.Data[i] = y
		}
		return out, nil
	case *value.CMatrix:
		z = t
	}
	if e.cr != nil {
		out := value.NewMatrix(z.Rows, z.Cols)
		for i, x := range z.Data {
			out.Data[i] = e.cr(x)
		}
		return out, nil
	}
	out := value.NewCMatrix(z.Rows, z.Cols)
	for i, x := range z.Data {
		out.Data[i] = e.cx(x)
	}
	return out, nil
}

func always(f func(float64) float64) func(float64) (float64, bool) {
	return func(x float64) (float64, bool) { return f(x), true }
}

var elements = []elem{
	{name: "sqrt", doc: "Square root: the non-negative √x for x ≥ 0; for complex z the principal root, with Re √z ≥ 0 (branch cut along the negative real axis).",
		re: func(x float64) (float64, bool) { return math.Sqrt(x), !(x < 0) }, cx: cmplx.Sqrt,
		examples: []Example{{"sqrt(2)", "1.414213562"}, {"sqrt(-4 + 0i)", "0+2i"}}},
	{name: "exp", doc: "The exponential e^x; for complex z = a + bi, e^a (cos b + i sin b).",
		re: always(math.Exp), cx: cmplx.Exp,
		examples: []Example{{"exp(1)", "2.718281828"}, {"exp(pi * 1i)", "-1+1.224646799e-16i"}}},
	{name: "log", doc: "Natural logarithm: ln x for x > 0; for complex z the principal value ln|z| + i arg z with arg z in (-π, π]. log(0) is an error.",
		re: func(x float64) (float64, bool) { return math.Log(x), !(x < 0) }, cx: cmplx.Log,
		examples: []Example{{"log(e^2)", "2"}, {"log(-1 + 0i)", "0+3.141592654i"}}},
	{name: "log10", doc: "Base-10 logarithm log₁₀ x = ln x / ln 10; principal value for complex z.",
		re: func(x float64) (float64, bool) { return math.Log10(x), !(x < 0) }, cx: cmplx.Log10,
		examples: []Example{{"log10(1000)", "3"}}},
	{name: "sin", doc: "Sine of x in radians; for complex z, sin z = (e^{iz} − e^{−iz})/(2i).",
		re: always(math.Sin), cx: cmplx.Sin, examples: []Example{{"sin(pi / 6)", "0.5"}}},
	{name: "cos", doc: "Cosine of x in radians; for complex z, cos z = (e^{iz} + e^{−iz})/2.",
		re: always(math.Cos), cx: cmplx.Cos, examples: []Example{{"cos([0, pi])", "[1, -1]"}}},
	{name: "tan", doc: "Tangent sin x / cos x of x in radians.",
		re: always(math.Tan), cx: cmplx.Tan, examples: []Example{{"tan(pi / 4)", "1"}}},
	{name: "sinh", doc: "Hyperbolic sine (e^x − e^{−x})/2.",
		re: always(math.Sinh), cx: cmplx.Sinh, examples: []Example{{"sinh(0)", "0"}}},
	{name: "cosh", doc: "Hyperbolic cosine (e^x + e^{−x})/2.",
		re: always(math.Cosh), cx: cmplx.Cosh, examples: []Example{{"cosh(0)", "1"}}},
	{name: "tanh", doc: "Hyperbolic tangent sinh x / cosh x.",
		re: always(math.Tanh), cx: cmplx.Tanh, examples: []Example{{"tanh(inf)", "1"}}},
	{name: "asin", doc: "Inverse sine: for x in [-1, 1] the angle in [-π/2, π/2] whose sine is x; principal value for complex z.",
		re: func(x float64) (float64, bool) { return math.Asin(x), !(x < -1 || x > 1) }, cx: cmplx.Asin,
		examples: []Example{{"asin(1)", "1.570796327"}}},
	{name: "acos", doc: "Inverse cosine: for x in [-1, 1] the angle in [0, π] whose cosine is x; principal value for complex z.",
		re: func(x float64) (float64, bool) { return math.Acos(x), !(x < -1 || x > 1) }, cx: cmplx.Acos,
		examples: []Example{{"acos(-1)", "3.141592654"}}},
	{name: "atan", doc: "Inverse tangent: the angle in (-π/2, π/2) whose tangent is x; principal value for complex z.",
		re: always(math.Atan), cx: cmplx.Atan, examples: []Example{{"atan(1) * 4", "3.141592654"}}},
	{name: "abs", doc: "Absolute value |x|; for complex z the modulus √(a² + b²), computed without overflow.",
		re: always(math.Abs), cr: cmplx.Abs, onMatrix: true,
		examples: []Example{{"abs(3 - 4i)", "5"}, {"abs([-1, 2])", "[1, 2]"}}},
	{name: "re", doc: "Real part: a for z = a + bi; x itself for real x.",
		re: always(func(x float64) float64 { return x }), cr: func(z complex128) float64 { return real(z) },
		onMatrix: true,
		examples: []Example{{"re(2 + 3i)", "2"}, {"re({1 + 2i, 3 | 0, 1i})", "{1, 3 |\n 0, 0}"}}},
	{name: "im", doc: "Imaginary part: b for z = a + bi; 0 for real x.",
		re: always(func(x float64) float64 { return 0 }), cr: func(z complex128) float64 { return imag(z) },
		onMatrix: true,
		examples: []Example{{"im(2 + 3i)", "3"}}},
	{name: "conj", doc: "Complex conjugate a − bi of z = a + bi; x itself for real x.",
		re: always(func(x float64) float64 { return x }), cx: cmplx.Conj,
		onMatrix: true,
		examples: []Example{{"conj(2 + 3i)", "2-3i"}, {"conj({1 + 2i, 3 | 0, 1i})", "{1-2i, 3+0i |\n 0+0i, 0-1i}"}}},
	{name: "arg", doc: "Argument (phase) of z in (-π, π]: atan2(b, a) for z = a + bi; 0 for x ≥ 0 and π for x < 0.",
		re: always(func(x float64) float64 {
			if math.Signbit(x) && !math.IsNaN(x) && x != 0 {
				return math.Pi
			}
			return 0
		}), cr: cmplx.Phase,
		examples: []Example{{"arg(1i)", "1.570796327"}, {"arg(-2)", "3.141592654"}}},
	{name: "floor", doc: "The largest integer ≤ x. Real numbers only.",
		re: always(math.Floor), examples: []Example{{"floor(-2.5)", "-3"}}},
	{name: "ceil", doc: "The smallest integer ≥ x. Real numbers only.",
		re: always(math.Ceil), examples: []Example{{"ceil(2.1)", "3"}}},
	{name: "round", doc: "The integer nearest to x, halves rounded away from zero (round(2.5) = 3, round(-2.5) = -3). Real numbers only.",
		re: always(math.Round), examples: []Example{{"round([2.5, -2.5, 0.4])", "[3, -3, 0]"}}},
}

var elementFamily = buildElements()

func buildElements() []*Builtin {
	var out []*Builtin
	for _, e := range elements {
		e := e
		out = append(out, &Builtin{
			Name:     e.name,
			Params:   []value.Param{req("x", e.paramDoc())},
			Doc:      e.doc + e.entryDoc(),
			Examples: e.examples,
			Impl:     func(c *eval.Call) (value.Value, error) { return e.apply(c.Args[0]) },
		})
	}
	out = append(out, &Builtin{
		Name:   "atan2",
		Params: []value.Param{req("y", "real number or vector"), req("x", "real number or vector")},
		Doc:    "The angle θ in (-π, π] of the point (x, y): x = r cos θ, y = r sin θ with r = √(x² + y²). Entry-wise on vectors of equal length or a vector and a number. Real numbers only.",
		Examples: []Example{
			{"atan2(1, -1)", "2.35619449"},
			{"atan2([1, -1], 0)", "[1.570796327, -1.570796327]"},
		},
		Impl: atan2Impl,
	})
	return out
}

func (e elem) paramDoc() string {
	if e.onMatrix {
		return "a number, complex number, vector, range or matrix"
	}
	return "a number, complex number, vector or range"
}

func (e elem) entryDoc() string {
	if e.onMatrix {
		return " Applies to each entry of a vector or matrix."
	}
	return " Applies to each entry of a vector."
}

func (e elem) scalarErr(x float64) error {
	if x == 0 {
		return value.ValueErrorf("%s(0) is not finite (a pole)", e.name)
	}
	return value.ValueErrorf("%s(%s) is not a real number; for the complex value write %s(%s + 0i)",
		e.name, value.FormatNum(x), e.name, value.FormatNum(x))
}

func (e elem) real(x float64) (float64, error) {
	y, ok := e.re(x)
	if !ok {
		return 0, e.scalarErr(x)
	}
	if e.name == "log" || e.name == "log10" {
		if x == 0 {
			return 0, e.scalarErr(0)
		}
	}
	return y, nil
}

func (e elem) complexIn(z complex128) (value.Value, error) {
	if z == 0 && (e.name == "log" || e.name == "log10") {
		return nil, value.ValueErrorf("%s(0) is not finite (a pole)", e.name)
	}
	if e.cr != nil {
		return value.Num(e.cr(z)), nil
	}
	if e.cx == nil {
		return nil, value.TypeErrorf("%s needs real numbers, not complex; apply it to re(z) or im(z)", e.name)
	}
	return value.Complex(e.cx(z)), nil
}

func (e elem) apply(v value.Value) (value.Value, error) {
	if r, ok := v.(*value.Range); ok {
		v = r.Vec()
	}
	switch t := v.(type) {
	case value.Num:
		y, err := e.real(float64(t))
		return value.Num(y), err
	case value.Complex:
		return e.complexIn(complex128(t))
	case *value.Vec:
		if !t.IsComplex() {
			out := make([]float64, len(t.R))
			for i, x := range t.R {
				y, err := e.real(x)
				if err != nil {
					msg := err.Error()
					if x != 0 {
						msg = value.FormatNum(x) + " at index " + value.FormatNum(float64(i)) +
							" is outside the real domain of " + e.name + "; for complex values write " + e.name + "(v + 0i)"
					} else {
						msg += " at index " + value.FormatNum(float64(i))
					}
					return nil, value.ValueErrorf("%s", msg)
				}
				out[i] = y
			}
			return value.RealVec(out), nil
		}
		if e.cr != nil {
			out := make([]float64, len(t.C))
			for i, z := range t.C {
				out[i] = e.cr(z)
			}
			return value.RealVec(out), nil
		}
		out := make([]complex128, len(t.C))
		for i, z := range t.C {
			y, err := e.complexIn(z)
			if err != nil {
				return nil, value.ValueErrorf("%s at index %d", err.Error(), i)
			}
			out[i] = complex128(y.(value.Complex))
		}
		return value.ComplexVec(out), nil
	case *value.Matrix, *value.CMatrix:
		if e.onMatrix {
			return e.applyMatrix(t)
		}
		return nil, value.TypeErrorf("%s acts on numbers and vectors, not on a matrix; for entries use map(%s, M[i]) on a row", e.name, e.name)
	}
	return nil, value.TypeErrorf("%s needs a number or a vector, not %s", e.name, value.TypeName(v))
}

func atan2Impl(c *eval.Call) (value.Value, error) {
	y, x := c.Args[0], c.Args[1]
	seq := func(v value.Value) (func(int) float64, int, error) {
		if r, ok := v.(*value.Range); ok {
			v = r.Vec()
		}
		switch t := v.(type) {
		case value.Num:
			return func(int) float64 { return float64(t) }, -1, nil
		case *value.Vec:
			if !t.IsComplex() {
				return func(i int) float64 { return t.R[i] }, len(t.R), nil
			}
		}
		return nil, 0, value.TypeErrorf("atan2 needs real numbers or real vectors, not %s", value.TypeName(v))
	}
	fy, ny, err := seq(y)
	if err != nil {
		return nil, err
	}
	fx, nx, err := seq(x)
	if err != nil {
		return nil, err
	}
	if ny < 0 && nx < 0 {
		return value.Num(math.Atan2(fy(0), fx(0))), nil
	}
	if ny >= 0 && nx >= 0 && ny != nx {
		return nil, value.ValueErrorf("atan2: length mismatch: vectors of length %d and %d", ny, nx)
	}
	n := max(ny, nx)
	out := make([]float64, n)
	for i := range out {
		out[i] = math.Atan2(fy(i), fx(i))
	}
	return value.RealVec(out), nil
}

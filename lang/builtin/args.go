package builtin

import (
	"math"

	"semiflow/lang/eval"
	"semiflow/lang/value"
)

// Argument conversions shared by the families. Each returns a "wrong type" error or
// "bad value" naming the builtin and the parameter.

func paramName(c *eval.Call, i int) string {
	f, _ := c.Interp.Builtins.Lookup(c.Name)
	if fn, ok := f.(Function); ok && i < len(fn.B.Params) {
		return fn.B.Params[i].Name
	}
	return "argument"
}

func argReal(c *eval.Call, i int) (float64, error) {
	v, err := c.Arg(i)
	if err != nil {
		return 0, err
	}
	n, ok := v.(value.Num)
	if !ok {
		return 0, value.TypeErrorf("%s: %s must be a real number, not %s", c.Name, paramName(c, i), value.TypeName(v))
	}
	return float64(n), nil
}

// argCount is a non-negative integer argument.
func argCount(c *eval.Call, i int) (int, error) {
	f, err := argReal(c, i)
	if err != nil {
		return 0, err
	}
	if f < 0 || f != math.Trunc(f) {
		return 0, value.ValueErrorf("%s: %s must be a whole number ≥ 0, not %s", c.Name, paramName(c, i), value.FormatNum(f))
	}
	if err := c.CheckSize(f, c.Name+": the result"); err != nil {
		return 0, err
	}
	return int(f), nil
}

// finiteReals returns the entries of v (as numbers reads them), refusing
// complex data ("NAME: what must be real" and realWhy) and a non-finite
// entry ("NAME: what[k] = x is not finite").
func finiteReals(c *eval.Call, what, realWhy string, v value.Value) ([]float64, error) {
	re, cx, err := numbers(c, what, v)
	if err != nil {
		return nil, err
	}
	if cx != nil {
		return nil, value.TypeErrorf("%s: %s must be real%s", c.Name, what, realWhy)
	}
	for k, x := range re {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return nil, value.ValueErrorf("%s: %s[%d] = %s is not finite", c.Name, what, k, value.FormatNum(x))
		}
	}
	return re, nil
}

// numbers returns the entries of a vector, range, list of numbers or a
// single number; re is set for real data and cx for complex data.
func numbers(c *eval.Call, name string, v value.Value) (re []float64, cx []complex128, err error) {
	switch t := v.(type) {
	case value.Num:
		return []float64{float64(t)}, nil, nil
	case value.Complex:
		return nil, []complex128{complex128(t)}, nil
	case *value.Vec:
		if t.IsComplex() {
			return nil, t.C, nil
		}
		return t.R, nil, nil
	case *value.Range:
		return t.Vec().R, nil, nil
	case value.List:
		cplx := false
		for _, e := range t {
			switch e.(type) {
			case value.Num:
			case value.Complex:
				cplx = true
			default:
				return nil, nil, value.TypeErrorf("%s: needs numbers, but the list holds a %s", c.Name, value.TypeName(e))
			}
		}
		if cplx {
			cx = make([]complex128, len(t))
			for i, e := range t {
				if n, ok := e.(value.Num); ok {
					cx[i] = complex(float64(n), 0)
				} else {
					cx[i] = complex128(e.(value.Complex))
				}
			}
			return nil, cx, nil
		}
		re = make([]float64, len(t))
		for i, e := range t {
			re[i] = float64(e.(value.Num))
		}
		return re, nil, nil
	}
	return nil, nil, value.TypeErrorf("%s: %s must be a vector or a number, not %s", c.Name, name, value.TypeName(v))
}

func toComplex(re []float64) []complex128 {
	out := make([]complex128, len(re))
	for i, x := range re {
		out[i] = complex(x, 0)
	}
	return out
}

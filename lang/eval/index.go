package eval

import (
	"math"

	"semiflow/lang/syntax"
	"semiflow/lang/value"
)

// Indexing is 0-based; a negative index counts from the end (-1 is the
// last entry). An index may be a range: v[1 .. 3] selects entries 1, 2, 3,
// and inside brackets the ends of a range written there may be negative
// too, so v[1 .. -1] drops the first entry. M[i, j] is an entry of a
// matrix, M[i] its row i, M[i, a .. b] and M[a .. b, j] parts of a row or
// column, M[a .. b, c .. d] a sub-matrix.
func (in *Interp) evalIndex(sc *scope, e *syntax.IndexExpr) (value.Value, error) {
	x, err := in.evalValue(sc, e.X)
	if err != nil {
		return nil, err
	}
	if v, ok, err := in.stringField(sc, e, x); ok {
		return v, err
	}
	switch len(e.Indices) {
	case 1:
		if m, ok := x.(value.Indexable2); ok {
			rows, cols := m.Dims()
			ri, scalar, err := in.indexSpec(sc, e.Indices[0], rows)
			if err != nil {
				return nil, err
			}
			all := make([]int, cols)
			for j := range all {
				all[j] = j
			}
			return m.Index2(ri, all, scalar, false), nil
		}
		s, ok := x.(value.Indexable)
		if !ok {
			return nil, in.errorf(sc, e.X, value.ClassType, "a %s cannot be indexed", value.TypeName(x))
		}
		idx, scalar, err := in.indexSpec(sc, e.Indices[0], s.Len())
		if err != nil {
			return nil, err
		}
		if scalar {
			return s.Index(idx[0]), nil
		}
		if err := in.tick(sc, e, len(idx)); err != nil {
			return nil, err
		}
		if sl, ok := s.(value.Sliceable); ok {
			return sl.Select(idx), nil
		}
		out := make(value.List, len(idx))
		for k, i := range idx {
			out[k] = s.Index(i)
		}
		return out, nil
	case 2:
		m, ok := x.(value.Indexable2)
		if !ok {
			return nil, in.errorf(sc, e, value.ClassType, "two indices need a matrix, not a %s", value.TypeName(x))
		}
		rows, cols := m.Dims()
		ri, sr, err := in.indexSpec(sc, e.Indices[0], rows)
		if err != nil {
			return nil, err
		}
		ci, scol, err := in.indexSpec(sc, e.Indices[1], cols)
		if err != nil {
			return nil, err
		}
		if err := in.tick(sc, e, len(ri)*len(ci)); err != nil {
			return nil, err
		}
		return m.Index2(ri, ci, sr, scol), nil
	}
	return nil, in.errorf(sc, e, value.ClassIndex, "at most two indices are allowed, got %d", len(e.Indices))
}

// indexSpec evaluates one index against a dimension of length n: either a
// single position (scalar) or a list of positions.
func (in *Interp) indexSpec(sc *scope, x syntax.Expr, n int) ([]int, bool, error) {
	if r, ok := x.(*syntax.RangeExpr); ok {
		lo, err := in.intOperand(sc, r.Lo, n, true)
		if err != nil {
			return nil, false, err
		}
		hi, err := in.intOperand(sc, r.Hi, n, true)
		if err != nil {
			return nil, false, err
		}
		step := 1
		if r.Step != nil {
			if step, err = in.intOperand(sc, r.Step, n, false); err != nil {
				return nil, false, err
			}
			if step == 0 {
				return nil, false, in.errorf(sc, r.Step, value.ClassValue, "range step must not be zero")
			}
		}
		var idx []int
		for k := lo; step > 0 && k <= hi || step < 0 && k >= hi; k += step {
			if k < 0 || k >= n {
				return nil, false, in.errorf(sc, r, value.ClassIndex, "index %d out of range for length %d", k, n)
			}
			idx = append(idx, k)
		}
		return idx, false, nil
	}
	v, err := in.evalValue(sc, x)
	if err != nil {
		return nil, false, err
	}
	switch t := v.(type) {
	case value.Num:
		i, err := in.toIndex(sc, x, float64(t), n)
		return []int{i}, true, err
	case *value.Range, *value.Vec:
		s := t.(value.Indexable)
		idx := make([]int, s.Len())
		for k := range idx {
			num, ok := s.Index(k).(value.Num)
			if !ok {
				return nil, false, in.errorf(sc, x, value.ClassIndex, "indices must be real integers, not complex")
			}
			if idx[k], err = in.toIndex(sc, x, float64(num), n); err != nil {
				return nil, false, err
			}
		}
		return idx, false, nil
	}
	return nil, false, in.errorf(sc, x, value.ClassType, "an index must be an integer or a range, not a %s", value.TypeName(v))
}

// intOperand evaluates an integer range end (negative ones counted from
// the end when fromEnd) or step.
func (in *Interp) intOperand(sc *scope, x syntax.Expr, n int, fromEnd bool) (int, error) {
	f, err := in.realOperand(sc, x, "an index")
	if err != nil {
		return 0, err
	}
	if f != math.Trunc(f) || math.Abs(f) > 1<<53 {
		return 0, in.errorf(sc, x, value.ClassIndex, "index %s is not an integer", value.FormatNum(f))
	}
	i := int(f)
	if fromEnd && i < 0 {
		i += n
	}
	return i, nil
}

func (in *Interp) toIndex(sc *scope, x syntax.Node, f float64, n int) (int, error) {
	if f != math.Trunc(f) || math.IsInf(f, 0) {
		return 0, in.errorf(sc, x, value.ClassIndex, "index %s is not an integer", value.FormatNum(f))
	}
	if f < -float64(n) || f >= float64(n) {
		return 0, in.errorf(sc, x, value.ClassIndex, "index %s out of range for length %d (valid: 0 .. %d, or -%d .. -1 from the end)",
			value.FormatNum(f), n, n-1, n)
	}
	i := int(f)
	if i < 0 {
		i += n
	}
	return i, nil
}

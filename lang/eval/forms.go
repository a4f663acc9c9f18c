package eval

import (
	"strconv"
	"strings"

	"semiflow/lang/syntax"
	"semiflow/lang/value"
)

// evalWhere evaluates x where (a = e1, b = e2): each definition in order,
// seeing the ones before it and the names around it, then x.
func (in *Interp) evalWhere(sc *scope, e *syntax.WhereExpr) (value.Value, error) {
	local := &scope{file: sc.file, outer: sc}
	for _, b := range e.Binds {
		v, err := in.evalValue(local, b.Value)
		if err != nil {
			return nil, err
		}
		if v == value.None {
			return nil, in.errorf(local, b.Value, value.ClassValue, "%s has no value to give %s", exprText(sc.file, b.Value), syntax.Shorten(b.Name.Name, syntax.QuoteWidth))
		}
		local.bind(b.Name.Name, v)
	}
	return in.eval(local, e.X)
}

// evalField evaluates x.name, a named part of a report, solution or table.
func (in *Interp) evalField(sc *scope, e *syntax.FieldExpr) (value.Value, error) {
	x, err := in.evalValue(sc, e.X)
	if err != nil {
		return nil, err
	}
	return in.field(sc, e.Name, x, e.Name.Name)
}

// field returns the part name of x, or an error at n listing the names x
// has.
func (in *Interp) field(sc *scope, n syntax.Node, x value.Value, name string) (value.Value, error) {
	f, ok := x.(value.HasFields)
	if !ok {
		return nil, in.errorf(sc, n, value.ClassType, "a %s has no named parts: .name reads a number of a report, a solution or a table", value.TypeName(x))
	}
	if v, ok := f.Field(name); ok {
		return v, nil
	}
	names := f.FieldNames()
	msg := "this " + x.Type() + " has no part named " + syntax.Shorten(name, syntax.QuoteWidth)
	if s := suggest(name, names); s != "" {
		msg += " (did you mean " + s + "?)"
	}
	return nil, in.errorf(sc, n, value.ClassName, "%s; its parts: %s", msg, listNames(names))
}

// listNames joins names for a message, at most 40 of them.
func listNames(names []string) string {
	if len(names) == 0 {
		return "none"
	}
	if len(names) > 40 {
		return strings.Join(names[:40], ", ") + ", …"
	}
	return strings.Join(names, ", ")
}

// stringField handles r["name"] for a value with named parts: the index is
// a string literal or a name bound to a string. It reports false for any
// other value or index, so that ordinary indexing goes on (and says what
// an index must be).
func (in *Interp) stringField(sc *scope, e *syntax.IndexExpr, x value.Value) (value.Value, bool, error) {
	if _, ok := x.(value.HasFields); !ok || len(e.Indices) != 1 {
		return nil, false, nil
	}
	var name string
	switch ix := e.Indices[0].(type) {
	case *syntax.StringLit:
		name = ix.Value
	case *syntax.Ident:
		v, ok := sc.local(ix.Name)
		if !ok {
			v, ok = in.Globals[ix.Name]
		}
		s, isStr := v.(value.Str)
		if !ok || !isStr {
			return nil, false, nil
		}
		name = string(s)
	default:
		return nil, false, nil
	}
	v, err := in.field(sc, e.Indices[0], x, name)
	return v, true, err
}

// evalWith evaluates x with [i] = v (or [i, j] = v): a copy of the
// vector, list or matrix x with the selected entries replaced by v, a
// single value for all of them or one value each (a vector, list or
// matrix of the selection's shape). x itself does not change.
func (in *Interp) evalWith(sc *scope, e *syntax.WithExpr) (value.Value, error) {
	x, err := in.evalValue(sc, e.X)
	if err != nil {
		return nil, err
	}
	if r, ok := x.(*value.Range); ok {
		x = r.Vec()
	}
	v, err := in.evalValue(sc, e.Value)
	if err != nil {
		return nil, err
	}
	switch t := x.(type) {
	case *value.Vec:
		if len(e.Indices) != 1 {
			return nil, in.errorf(sc, e, value.ClassIndex, "a vector takes one index in with [i] = value, got %d", len(e.Indices))
		}
		idx, _, err := in.indexSpec(sc, e.Indices[0], t.Len())
		if err != nil {
			return nil, err
		}
		if err := in.tick(sc, e, t.Len()); err != nil {
			return nil, err
		}
		return in.withVec(sc, e, t, idx, v)
	case value.List:
		if len(e.Indices) != 1 {
			return nil, in.errorf(sc, e, value.ClassIndex, "a list takes one index in with [i] = value, got %d", len(e.Indices))
		}
		idx, scalar, err := in.indexSpec(sc, e.Indices[0], len(t))
		if err != nil {
			return nil, err
		}
		if err := in.tick(sc, e, len(t)); err != nil {
			return nil, err
		}
		out := append(value.List(nil), t...)
		if scalar {
			out[idx[0]] = v
			return out, in.checkList(sc, e, out)
		}
		vals, ok := v.(value.Indexable)
		if _, isStr := v.(value.Str); !ok || isStr || vals.Len() != len(idx) {
			return nil, in.errorf(sc, e.Value, value.ClassValue, "%d list entries are selected, so the new value must be a list of %d entries, not %s", len(idx), len(idx), describeLen(v))
		}
		for k, i := range idx {
			out[i] = vals.Index(k)
		}
		return out, in.checkList(sc, e, out)
	case *value.Matrix:
		return in.withMatrix(sc, e, t, v)
	case *value.CMatrix:
		return in.withMatrix(sc, e, t, v)
	}
	return nil, in.errorf(sc, e.X, value.ClassType, "with [i] = value makes an updated copy of a vector, list or matrix, not of a %s", value.TypeName(x))
}

// checkList applies the list-literal limits to a list made by with.
func (in *Interp) checkList(sc *scope, e syntax.Node, l value.List) error {
	depth, size := value.ListShape(l, value.MaxListDepth)
	if depth > value.MaxListDepth {
		return in.errorf(sc, e, value.ClassValue, "lists nest at most %d deep", value.MaxListDepth)
	}
	return in.wrap(sc, e, in.checkSize(size, "the list, counting the entries of the lists it holds,"))
}

func describeLen(v value.Value) string {
	if s, ok := v.(value.Indexable); ok {
		if _, isStr := v.(value.Str); !isStr {
			return "a " + value.TypeName(v) + " of " + value.FormatNum(float64(s.Len()))
		}
	}
	return "a " + value.TypeName(v)
}

// withVec replaces entries idx of t by v.
func (in *Interp) withVec(sc *scope, e *syntax.WithExpr, t *value.Vec, idx []int, v value.Value) (value.Value, error) {
	var re []float64
	var cx []complex128
	switch s := v.(type) {
	case value.Num:
		re = []float64{float64(s)}
	case value.Complex:
		cx = []complex128{complex128(s)}
	case *value.Vec:
		re, cx = s.R, s.C
	case *value.Range:
		re = s.Vec().R
	default:
		return nil, in.errorf(sc, e.Value, value.ClassType, "a vector's entries are numbers: the new value must be a number or a vector, not a %s", value.TypeName(v))
	}
	n := max(len(re), len(cx))
	if n != 1 && n != len(idx) {
		return nil, in.errorf(sc, e.Value, value.ClassValue, "%s, so the new value must be one number or a vector of %d, not a vector of %d", selected(len(idx)), len(idx), n)
	}
	at := func(k int) int {
		if n == 1 {
			return 0
		}
		return k
	}
	if cx == nil && !t.IsComplex() {
		out := append([]float64(nil), t.R...)
		for k, i := range idx {
			out[i] = re[at(k)]
		}
		return value.RealVec(out), nil
	}
	out := append([]complex128(nil), t.Complex128()...)
	for k, i := range idx {
		if cx != nil {
			out[i] = cx[at(k)]
		} else {
			out[i] = complex(re[at(k)], 0)
		}
	}
	return value.ComplexVec(out), nil
}

// withMatrix replaces M[i, j], a row M[i], or a block M[a .. b, c .. d] by
// v. mv is a real or complex matrix; the copy is complex when either mv or
// v is.
func (in *Interp) withMatrix(sc *scope, e *syntax.WithExpr, mv value.Indexable2, v value.Value) (value.Value, error) {
	rows, cols := mv.Dims()
	if len(e.Indices) > 2 {
		return nil, in.errorf(sc, e, value.ClassIndex, "a matrix takes at most two indices in with [i, j] = value, got %d", len(e.Indices))
	}
	ri, _, err := in.indexSpec(sc, e.Indices[0], rows)
	if err != nil {
		return nil, err
	}
	ci := make([]int, cols)
	for j := range ci {
		ci[j] = j
	}
	if len(e.Indices) == 2 {
		if ci, _, err = in.indexSpec(sc, e.Indices[1], cols); err != nil {
			return nil, err
		}
	}
	if err := in.tick(sc, e, rows*cols); err != nil {
		return nil, err
	}
	var src func(a, b int) complex128
	cplx := false
	switch s := v.(type) {
	case value.Num:
		src = func(int, int) complex128 { return complex(float64(s), 0) }
	case value.Complex:
		src, cplx = func(int, int) complex128 { return complex128(s) }, true
	case *value.Matrix, *value.CMatrix:
		sm := s.(value.Indexable2)
		sr, scn := sm.Dims()
		if sr != len(ri) || scn != len(ci) {
			return nil, in.errorf(sc, e.Value, value.ClassValue, "the selection is %d×%d, so the new value must be a number or a %d×%d matrix, not %d×%d", len(ri), len(ci), len(ri), len(ci), sr, scn)
		}
		if c, ok := s.(*value.CMatrix); ok {
			src, cplx = func(a, b int) complex128 { return c.Data[a*c.Cols+b] }, true
		} else {
			r := s.(*value.Matrix)
			src = func(a, b int) complex128 { return complex(r.Data[a*r.Cols+b], 0) }
		}
	case *value.Vec, *value.Range:
		var x []complex128
		if r, ok := s.(*value.Range); ok {
			x = r.Vec().Complex128()
		} else {
			x, cplx = s.(*value.Vec).Complex128(), s.(*value.Vec).IsComplex()
		}
		switch {
		case len(ri) == 1 && len(x) == len(ci):
			src = func(_, b int) complex128 { return x[b] }
		case len(ci) == 1 && len(x) == len(ri):
			src = func(a, _ int) complex128 { return x[a] }
		default:
			return nil, in.errorf(sc, e.Value, value.ClassValue, "the selection is %d×%d, so a vector for it must be one of its rows or columns; got a vector of %d", len(ri), len(ci), len(x))
		}
	default:
		return nil, in.errorf(sc, e.Value, value.ClassType, "a matrix's entries are numbers: the new value must be a number, vector or matrix, not a %s", value.TypeName(v))
	}
	if m, ok := mv.(*value.Matrix); ok && !cplx {
		out := value.NewMatrix(rows, cols)
		copy(out.Data, m.Data)
		for a, i := range ri {
			for b, j := range ci {
				out.Data[i*cols+j] = real(src(a, b))
			}
		}
		return out, nil
	}
	var out *value.CMatrix
	switch m := mv.(type) {
	case *value.Matrix:
		out = value.Complexify(m)
	case *value.CMatrix:
		out = &value.CMatrix{Rows: rows, Cols: cols, Data: append([]complex128(nil), m.Data...)}
	}
	for a, i := range ri {
		for b, j := range ci {
			out.Data[i*cols+j] = src(a, b)
		}
	}
	return out, nil
}

// selected is "1 entry is selected" or "n entries are selected".
func selected(n int) string {
	if n == 1 {
		return "1 entry is selected"
	}
	return strconv.Itoa(n) + " entries are selected"
}

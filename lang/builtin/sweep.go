package builtin

import (
	"fmt"
	"math"

	"semiflow/lang/eval"
	"semiflow/lang/objects"
	"semiflow/lang/plot"
	"semiflow/lang/value"
)

// sweepFamily: a function of a parameter tabulated over many values.
var sweepFamily = []*Builtin{
	{
		Name: "sweep",
		Params: []value.Param{
			req("values", "the parameter values: a vector, range or list of real numbers"),
			req("f", "a function of one parameter returning a number, a vector or list of numbers, or a report (growth, spectrum, a solution, …)"),
			opt("names", value.None, "the column names: one per number f returns, or the parts of a report to keep (default: every numeric part)"),
		},
		Doc: "A table of f(p) for each p in values, with named columns: the first is p, named after f's parameter (R for R -> …), the others what f returns — " +
			"a number (column value), a vector or list of numbers (columns v0, v1, … or names), or a report whose numbers become columns named after its parts (r.peak becomes column peak). " +
			"Every call must return the same kind and count, and finite numbers (a report's parts that are not computed, nan, are left out). t.name is a column as a vector, t[i] row i; t.R[argmax(t.peak)] is the R of the largest peak, with no recursion. " +
			"The calls run in order, show progress, and stop at an interrupt; the table shows a figure of each real column against p.",
		Examples: []Example{
			{"sweep([1, 2, 3], k -> k^2).value", "[1, 4, 9]"},
			{"sweep(0 .. 1 by 0.5, a -> [a, 2*a], names=[\"same\", \"twice\"]).twice", "[0, 1, 2]"},
		},
		Impl: sweepImpl,
	},
	{
		Name:     "argmax",
		Params:   []value.Param{req("v", "a real vector, range or list of numbers")},
		Doc:      "The index k of the largest entry of v (the first one when several are equal), so v[argmax(v)] = max(v); with a table t from sweep, t.R[argmax(t.peak)] is the parameter of the largest peak. nan entries are refused.",
		Examples: []Example{{"argmax([3, 7, 7, 1])", "1"}, {"(0 .. 4)[argmax(sin(0 .. 4))]", "2"}},
		Impl:     func(c *eval.Call) (value.Value, error) { return argExtreme(c, 1) },
	},
	{
		Name:     "argmin",
		Params:   []value.Param{req("v", "a real vector, range or list of numbers")},
		Doc:      "The index k of the smallest entry of v (the first one when several are equal), so v[argmin(v)] = min(v). nan entries are refused.",
		Examples: []Example{{"argmin([3, 1, 7, 1])", "1"}},
		Impl:     func(c *eval.Call) (value.Value, error) { return argExtreme(c, -1) },
	},
}

// argExtreme returns the index of the first largest (sign 1) or smallest
// (sign −1) entry.
func argExtreme(c *eval.Call, sign float64) (value.Value, error) {
	v, err := c.Arg(0)
	if err != nil {
		return nil, err
	}
	re, cx, err := numbers(c, "v", v)
	if err != nil {
		return nil, err
	}
	if cx != nil {
		return nil, value.TypeErrorf("%s: v must be real; complex numbers have no order (use abs or re)", c.Name)
	}
	if len(re) == 0 {
		return nil, value.ValueErrorf("%s: v is empty", c.Name)
	}
	best := 0
	for k, x := range re {
		if math.IsNaN(x) {
			return nil, value.ValueErrorf("%s: v[%d] is nan", c.Name, k)
		}
		if sign*x > sign*re[best] {
			best = k
		}
	}
	return value.Num(float64(best)), nil
}

// sweepShape is how one result of f becomes a row: its column names and
// the cells.
type sweepShape struct {
	names  []string
	fields bool // read by name from a value with named parts
}

func sweepImpl(c *eval.Call) (value.Value, error) {
	v, err := c.Arg(0)
	if err != nil {
		return nil, err
	}
	// Every row holds the parameter and at least one more column: refuse
	// a table beyond the entry limit before anything is made.
	if s, ok := v.(value.Indexable); ok {
		if err := c.CheckSize(2*float64(s.Len()), "sweep: the table"); err != nil {
			return nil, err
		}
	}
	// The parameter values, read in place (a range of millions of values
	// is not copied first, so an interrupt is felt at once).
	var at func(k int) float64
	var np int
	if r, ok := v.(*value.Range); ok {
		at, np = r.At, r.Len()
	} else {
		re, err := finiteReals(c, "values", "", v)
		if err != nil {
			return nil, err
		}
		at, np = func(k int) float64 { return re[k] }, len(re)
	}
	if np == 0 {
		return nil, value.ValueErrorf("sweep: values is empty")
	}
	f, ok := c.Args[1].(value.Callable)
	if !ok {
		return nil, value.TypeErrorf("sweep: f must be a function, not %s", value.TypeName(c.Args[1]))
	}
	if requiredParams(f) > 1 || len(f.Params()) == 0 && !variadic(f) {
		return nil, value.TypeErrorf("sweep: f must take one argument (the parameter): %s", eval.SignatureText(f.Name(), f.Params()))
	}
	nv, err := c.Arg(2)
	if err != nil {
		return nil, err
	}
	var names []string
	if nv != value.None {
		l, ok := nv.(value.List)
		if !ok {
			if s, isStr := nv.(value.Str); isStr {
				l = value.List{s}
			} else {
				return nil, value.TypeErrorf("sweep: names must be a list of strings, not %s", value.TypeName(nv))
			}
		}
		for k, x := range l {
			s, ok := x.(value.Str)
			if !ok || s == "" {
				return nil, value.TypeErrorf("sweep: names[%d] must be a non-empty string, not %s", k, x)
			}
			names = append(names, string(s))
		}
	}
	pname := "x"
	if p := f.Params(); len(p) > 0 && !p[0].Variadic {
		pname = p[0].Name
	}
	progress := lazyProgress(c)
	var shape *sweepShape
	var rows [][]value.Value
	for i := 0; i < np; i++ {
		p := at(i)
		if err := c.Tick(1); err != nil {
			return nil, err
		}
		progress(i, np)
		r, err := c.Apply(f, value.Num(p))
		if err != nil {
			return nil, err
		}
		if shape == nil {
			if shape, err = sweepColumns(r, names); err != nil {
				return nil, err
			}
			for _, n := range shape.names {
				if n == pname {
					pname = "param"
				}
			}
			if err := c.CheckSize(float64(np)*float64(len(shape.names)+1), "sweep: the table"); err != nil {
				return nil, err
			}
		}
		cells, err := sweepRow(shape, r, pname+" = "+value.FormatNum(p))
		if err != nil {
			return nil, err
		}
		rows = append(rows, append([]value.Value{value.Num(p)}, cells...))
	}
	progress(np, np)
	cols := append([]string{pname}, shape.names...)
	title := fmt.Sprintf("sweep over %d values of %s", np, pname)
	if f.Name() != eval.AnonymousName {
		title = fmt.Sprintf("sweep of %s over %d values of %s", f.Name(), np, pname)
	}
	t := objects.NewTable(title, cols, rows)
	t.Figure = sweepFigure(pname, cols, rows)
	return t, nil
}

// sweepColumns decides the columns from f's first result.
func sweepColumns(r value.Value, names []string) (*sweepShape, error) {
	switch t := r.(type) {
	case value.Num, value.Complex:
		if len(names) > 1 {
			return nil, value.ValueErrorf("sweep: f returns one number but %d names were given", len(names))
		}
		if len(names) == 0 {
			names = []string{"value"}
		}
		return &sweepShape{names: names}, nil
	case *value.Vec, *value.Range, value.List:
		n := t.(value.Indexable).Len()
		for k := 0; k < n; k++ {
			if !value.IsNumeric(t.(value.Indexable).Index(k)) {
				return nil, value.TypeErrorf("sweep: f returned a list whose entry %d is a %s; the entries must be numbers", k, value.TypeName(t.(value.Indexable).Index(k)))
			}
		}
		if len(names) == 0 {
			for k := 0; k < n; k++ {
				names = append(names, fmt.Sprintf("v%d", k))
			}
		}
		if len(names) != n {
			return nil, value.ValueErrorf("sweep: f returns %d numbers but %d names were given", n, len(names))
		}
		return &sweepShape{names: names}, nil
	case value.HasFields:
		if len(names) == 0 {
			// Every numeric part with a finite value; a part that is not
			// computed (nan, as crossdiff without a cross-check) is left out.
			for _, n := range t.FieldNames() {
				if x, _ := t.Field(n); value.IsNumeric(x) && finite(x) {
					names = append(names, n)
				}
			}
			if len(names) == 0 {
				return nil, value.TypeErrorf("sweep: the %s f returned has no numeric parts; its parts: %v", r.Type(), t.FieldNames())
			}
		}
		return &sweepShape{names: names, fields: true}, nil
	}
	return nil, value.TypeErrorf("sweep: f returned a %s; it must return a number, a vector or list of numbers, or a report", value.TypeName(r))
}

// sweepRow reads the cells of one result, which must match shape.
func sweepRow(shape *sweepShape, r value.Value, at string) ([]value.Value, error) {
	cells := make([]value.Value, len(shape.names))
	if shape.fields {
		h, ok := r.(value.HasFields)
		if !ok {
			return nil, value.TypeErrorf("sweep: at %s f returned a %s, but at the first value a report", at, value.TypeName(r))
		}
		for k, n := range shape.names {
			x, ok := h.Field(n)
			if !ok {
				return nil, value.ValueErrorf("sweep: at %s the %s f returned has no part named %s; its parts: %v", at, r.Type(), n, h.FieldNames())
			}
			if !value.IsNumeric(x) {
				return nil, value.TypeErrorf("sweep: at %s part %s is a %s, not a number", at, n, value.TypeName(x))
			}
			if !finite(x) {
				return nil, value.ValueErrorf("sweep: at %s part %s is %s; a table holds finite numbers only", at, n, x)
			}
			cells[k] = x
		}
		return cells, nil
	}
	switch t := r.(type) {
	case value.Num, value.Complex:
		if len(cells) == 1 {
			if !finite(t) {
				return nil, value.ValueErrorf("sweep: at %s f returned %s; a table holds finite numbers only", at, t)
			}
			cells[0] = t
			return cells, nil
		}
	case *value.Vec, *value.Range, value.List:
		s := t.(value.Indexable)
		if s.Len() == len(cells) {
			for k := range cells {
				if cells[k] = s.Index(k); !value.IsNumeric(cells[k]) {
					return nil, value.TypeErrorf("sweep: at %s entry %d of f's result is a %s, not a number", at, k, value.TypeName(cells[k]))
				}
				if !finite(cells[k]) {
					return nil, value.ValueErrorf("sweep: at %s entry %d of f's result is %s; a table holds finite numbers only", at, k, cells[k])
				}
			}
			return cells, nil
		}
	}
	return nil, value.ValueErrorf("sweep: at %s f returned %s, but at the first value %d number(s); every call must return the same count", at, describe(r), len(cells))
}

func describe(v value.Value) string {
	if s, ok := v.(value.Indexable); ok {
		if _, isStr := v.(value.Str); !isStr {
			return fmt.Sprintf("a %s of %d", value.TypeName(v), s.Len())
		}
	}
	return "a " + value.TypeName(v)
}

// sweepFigure draws each real, finite column against the parameter (at
// most eight), or returns nil when there is nothing to draw.
func sweepFigure(pname string, cols []string, rows [][]value.Value) *plot.Figure {
	if len(rows) < 2 {
		return nil
	}
	f := &plot.Figure{Title: "sweep over " + pname}
	f.X.Label = pname
	x := make([]float64, len(rows))
	for i, r := range rows {
		x[i] = float64(r[0].(value.Num))
	}
	drawn := 0
	for j := 1; j < len(cols) && drawn < 8; j++ {
		y := make([]float64, len(rows))
		ok := true
		for i, r := range rows {
			n, real := r[j].(value.Num)
			if !real || math.IsNaN(float64(n)) || math.IsInf(float64(n), 0) {
				ok = false
				break
			}
			y[i] = float64(n)
		}
		if ok {
			f.AddLine(x, y, cols[j])
			drawn++
		}
	}
	if drawn == 0 {
		return nil
	}
	if drawn == 1 {
		f.Y.Label = cols[len(cols)-1]
		for j := 1; j < len(cols); j++ {
			if _, ok := rows[0][j].(value.Num); ok {
				f.Y.Label = cols[j]
				break
			}
		}
	}
	return f
}

// finite reports whether a number or complex number is finite.
func finite(x value.Value) bool {
	switch t := x.(type) {
	case value.Num:
		return !math.IsNaN(float64(t)) && !math.IsInf(float64(t), 0)
	case value.Complex:
		z := complex128(t)
		return !math.IsNaN(real(z)) && !math.IsInf(real(z), 0) && !math.IsNaN(imag(z)) && !math.IsInf(imag(z), 0)
	}
	return false
}

package builtin

import (
	"fmt"
	"strings"

	"semiflow/lang/display"
	"semiflow/lang/eval"
	"semiflow/lang/value"
)

// coreFamily: output, help, inspection of values, choice and mapping.
var coreFamily = []*Builtin{
	{
		Name:   "help",
		Params: []value.Param{opt("name", value.None, "a builtin or user function, or its name as a string")},
		Doc:    "Documentation. Without an argument it shows every builtin under the heading of its family (grids, operators, evolution, stability, …) with the first sentence of its documentation, as text and, in a notebook, as a table; help(equispaced) or help(\"equispaced\") writes one builtin's signature, documentation and examples to standard output; for a user function it writes its definition.",
		Examples: []Example{
			{"help(typeof)", ""},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			if c.Args[0] == value.None {
				t, _ := c.Interp.Builtins.(*Table)
				if t == nil {
					return nil, value.ValueErrorf("%s: no builtin table", c.Name)
				}
				return NewListing(t), nil
			}
			text, err := helpText(c, c.Args[0])
			if err != nil {
				return nil, err
			}
			c.Out().Stream("stdout", text)
			return value.None, nil
		},
	},
	{
		Name:   "page",
		Params: []value.Param{req("name", "a builtin or user function, or its name as a string")},
		Doc:    "Sends the help text of a name to the notebook's pager (a side panel) instead of the output; in a terminal it is printed.",
		Examples: []Example{
			{"page(\"norm\")", ""},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			text, err := helpText(c, c.Args[0])
			if err != nil {
				return nil, err
			}
			c.Out().Page(map[string]any{"text/plain": text})
			return value.None, nil
		},
	},
	{
		Name:   "print",
		Params: []value.Param{rest("values", "values to write; strings are written without quotes")},
		Doc:    "Writes its arguments to standard output separated by single spaces and followed by a newline. Strings are written as they are; other values in their display form.",
		Examples: []Example{
			{"print(\"n =\", 64)", ""},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			c.Out().Stream("stdout", joinPrint(c.Rest))
			return value.None, nil
		},
	},
	{
		Name:   "warn",
		Params: []value.Param{rest("values", "values to write; strings are written without quotes")},
		Doc:    "Like print, but writes to standard error, which a notebook shows highlighted.",
		Examples: []Example{
			{"warn(\"step size\", 0.5, \"may be unstable\")", ""},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			c.Out().Stream("stderr", joinPrint(c.Rest))
			return value.None, nil
		},
	},
	{
		Name: "show",
		Params: []value.Param{
			req("value", "the value to display"),
			opt("id", value.Str(""), "a display name: showing again with the same id replaces the earlier display"),
		},
		Doc: "Displays a value now, as a cell's result would be displayed, and continues. With id, a later show with the same id updates that display in place instead of adding a new one (for progress and animations).",
		Examples: []Example{
			{"show([1, 2, 3])", ""},
			{"show(0.5, id=\"progress\"); show(1, id=\"progress\")", ""},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			v, err := c.Arg(0)
			if err != nil {
				return nil, err
			}
			id, ok := c.Args[1].(value.Str)
			if !ok {
				return nil, value.TypeErrorf("show: id must be a string, not %s", value.TypeName(c.Args[1]))
			}
			b, md := display.Render(v)
			if b == nil {
				return value.None, nil
			}
			in := c.Interp
			update := false
			if id != "" {
				if in.DisplayIDs == nil {
					in.DisplayIDs = map[string]bool{}
				}
				update = in.DisplayIDs[string(id)]
				in.DisplayIDs[string(id)] = true
			}
			c.Out().Display(b, md, string(id), update)
			return value.None, nil
		},
	},
	{
		Name:     "clear",
		Params:   []value.Param{opt("wait", value.Bool(false), "true: clear only when the next output arrives (avoids flicker)")},
		Doc:      "Clears the output shown so far by the running cell.",
		Examples: []Example{{"clear(wait=true)", ""}},
		Impl: func(c *eval.Call) (value.Value, error) {
			w, ok := c.Args[0].(value.Bool)
			if !ok {
				return nil, value.TypeErrorf("clear: wait must be true or false, not %s", value.TypeName(c.Args[0]))
			}
			c.Out().Clear(bool(w))
			return value.None, nil
		},
	},
	{
		Name:   "typeof",
		Params: []value.Param{req("value", "any value")},
		Doc:    "Returns the name of the value's type as a string: number, complex, string, bool, vector, matrix, list, range, function or none.",
		Examples: []Example{
			{"typeof(2 + 3i)", "\"complex\""},
			{"typeof(0 .. 1 by 0.5)", "\"range\""},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			v, err := c.Arg(0)
			if err != nil {
				return nil, err
			}
			return value.Str(v.Type()), nil
		},
	},
	{
		Name:   "len",
		Params: []value.Param{req("x", "a vector, range, list, string or matrix")},
		Doc:    "Returns the number of entries of a vector, range or list, the number of characters (code points) of a string, or the number of rows of a matrix.",
		Examples: []Example{
			{"len([4, 5, 6])", "3"},
			{"len(0 .. 1 by 0.1)", "11"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			v, err := c.Arg(0)
			if err != nil {
				return nil, err
			}
			if s, ok := v.(value.Indexable); ok {
				return value.Num(s.Len()), nil
			}
			return nil, value.TypeErrorf("len: a %s has no length", value.TypeName(v))
		},
	},
	{
		Name:   "dims",
		Params: []value.Param{req("x", "a matrix or vector")},
		Doc:    "Returns the shape of a matrix as the vector [rows, columns], or of a vector as [length].",
		Examples: []Example{
			{"dims({1, 2, 3 | 4, 5, 6})", "[2, 3]"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			v, err := c.Arg(0)
			if err != nil {
				return nil, err
			}
			switch t := v.(type) {
			case value.Indexable2:
				r, k := t.Dims()
				return value.RealVec([]float64{float64(r), float64(k)}), nil
			case *value.Vec, *value.Range:
				return value.RealVec([]float64{float64(t.(value.Indexable).Len())}), nil
			}
			return nil, value.TypeErrorf("dims: a %s has no shape", value.TypeName(v))
		},
	},
	{
		Name: "when",
		Params: []value.Param{
			req("cond", "true or false"),
			{Name: "a", Lazy: true, Doc: "the result when cond is true (evaluated only then)"},
			{Name: "b", Lazy: true, Doc: "the result when cond is false (evaluated only then)"},
		},
		Doc: "Returns a if cond is true and b otherwise. Only the chosen argument is evaluated, so a recursive user function can stop: fact(n) = when(n <= 1, 1, n * fact(n - 1)).",
		Examples: []Example{
			{"when(2 > 1, \"yes\", \"no\")", "\"yes\""},
			{"fact(n) = when(n <= 1, 1, n * fact(n - 1)); fact(10)", "3628800"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			v, err := c.Arg(0)
			if err != nil {
				return nil, err
			}
			b, ok := v.(value.Bool)
			if !ok {
				return nil, value.TypeErrorf("when: cond must be true or false, not %s; write a comparison such as x > 0", value.TypeName(v))
			}
			if b {
				return c.Arg(1)
			}
			return c.Arg(2)
		},
	},
	{
		Name: "map",
		Params: []value.Param{
			req("f", "a function of one argument"),
			req("v", "a vector, range or list"),
		},
		Doc: "Applies f to each entry of v and returns the results: a vector when every result is a number, a list otherwise. map(f, v)[k] = f(v[k]).",
		Examples: []Example{
			{"sq(x) = x^2; map(sq, 1 .. 4)", "[1, 4, 9, 16]"},
			{"map(typeof, [1, \"a\"])", "[\"number\", \"string\"]"},
		},
		Impl: func(c *eval.Call) (value.Value, error) {
			f, v := c.Args[0], c.Args[1]
			if _, ok := f.(value.Callable); !ok {
				return nil, value.TypeErrorf("map: f must be a function, not %s", value.TypeName(f))
			}
			s, ok := v.(value.Indexable)
			if _, isMat := v.(*value.Matrix); !ok || isMat {
				return nil, value.TypeErrorf("map: v must be a vector, range or list, not %s", value.TypeName(v))
			}
			out := make(value.List, s.Len())
			for k := range out {
				r, err := c.Apply(f, s.Index(k))
				if err != nil {
					return nil, err
				}
				out[k] = r
			}
			return value.Collect(out), nil
		},
	},
}

func joinPrint(vals []value.Value) string {
	parts := make([]string, len(vals))
	for i, v := range vals {
		if s, ok := v.(value.Str); ok {
			parts[i] = string(s)
		} else {
			parts[i] = v.String()
		}
	}
	return strings.Join(parts, " ") + "\n"
}

// helpText is the help for v: the table listing (None), a builtin, a user
// function, or a name given as a string.
func helpText(c *eval.Call, v value.Value) (string, error) {
	t, _ := c.Interp.Builtins.(*Table)
	if t == nil {
		return "", value.ValueErrorf("%s: no builtin table", c.Name)
	}
	if s, ok := v.(value.Str); ok {
		if b := t.Get(string(s)); b != nil {
			return b.Help(), nil
		}
		if g, ok := c.Interp.Globals[string(s)]; ok {
			v = g
		} else {
			return "", value.Errorf(value.ClassName, "%s: no builtin or variable named %s", c.Name, string(s))
		}
	}
	switch x := v.(type) {
	case value.NoneType:
		return NewListing(t).String() + "\n", nil
	case Function:
		return x.B.Help(), nil
	case *eval.Closure:
		return x.String() + "\n\nuser function " + eval.SignatureText(x.Name(), x.Params()) + "\n", nil
	}
	return fmt.Sprintf("a %s: %s\n", value.TypeName(v), v.String()), nil
}

package builtin

import (
	"fmt"
	"math"

	"semiflow/lang/eval"
	"semiflow/lang/objects"
	"semiflow/lang/plot"
	"semiflow/lang/value"
)

// plotFamily: figures and tables of the reader's own numbers. Every figure
// is a picture (SVG, and PNG beside it), so picture, writesvg and writepng
// take it as they take the figure of a result.
var plotFamily = []*Builtin{
	{
		Name: "curves",
		Params: append([]value.Param{
			req("x", "the abscissae (a real vector, range or list); with y none, the data themselves: a real vector (drawn against its index 0, 1, …), a list of points [x, y], or a list of series [xs, ys] each with its own abscissae"),
			opt("y", value.None, "the ordinates: a vector of len(x) numbers, a function of x (called at each x), or a list of these, one series each"),
		}, seriesOptions("line")...),
		Doc: "A figure of one or several curves y against x, each series named in a legend that never covers the data (an empty inner corner, or beside the plot when none is empty). " +
			"Axis labels, units, ranges and logarithmic axes are options; on a logarithmic axis a value ≤ 0 is refused, naming the series and how many, unless dropnonpositive=true leaves them out and the figure says how many. " +
			"Data must be finite: nan or ±inf is refused with the series and index. Series take the six line colours in turn, then dashes. " +
			"The result is a picture: it shows as the figure (SVG with a PNG copy), and writesvg, writepng and picture take it.",
		Examples: []Example{
			{`t = 0 .. 4 by 0.5; typeof(curves(t, [exp(-t), t*exp(-t)], names=["e^-t", "t e^-t"], xlabel="t", title="Two decays"))`, `"picture"`},
			{`curves(0 .. 1 by 0.25, x -> x^2, title="A parabola")`, "picture: A parabola"},
			{`curves([[1, 10], [10, 1000], [100, 1e5]], log="both", xlabel="n", ylabel="work")`, "picture: Figure"},
		},
		Impl: curvesImpl,
	},
	{
		Name: "dots",
		Params: append([]value.Param{
			req("x", "as for curves: the abscissae, or with y none a real vector, a list of points [x, y] or a list of series [xs, ys]"),
			opt("y", value.None, "as for curves: a vector of len(x) numbers, a function of x, or a list of these"),
		}, seriesOptions("dots")...),
		Doc: "A figure of points (x, y), markers only: curves with style \"dots\", so the same data, options and refusals. " +
			"Series take the line colours and the markers circle, square, diamond and cross in turn.",
		Examples: []Example{
			{`dots([0.1, 0.2, 0.4, 0.8], [3, 2.2, 1.1, 0.4], xlabel="h", ylabel="error", title="Measured errors")`, "picture: Measured errors"},
		},
		Impl: curvesImpl,
	},
	{
		Name: "argand",
		Params: []value.Param{
			req("z", "the points: a complex (or real) vector or list, a list of such vectors (one series each), or a spectrum (its eigenvalues)"),
			opt("names", value.None, "the legend entries, one string per series; none: no legend for one series, series 1, 2, … for several"),
			opt("title", value.None, "the title above the figure"),
			opt("re", value.None, "the range [a, b] of Re z; none: fitted to the points"),
			opt("im", value.None, "the range [c, d] of Im z; none: fitted to the points"),
			opt("style", value.Str("dots"), `"dots", "line", "line+dots", "dashed", "dotted" or "dashdot", or a list with one per series`),
		},
		Doc: "Points in the complex plane (an Argand diagram): Re z across, Im z up, one unit as long on both axes, the imaginary axis dashed when it is in view. " +
			"For spectra, Ritz values or any complex data of one's own; nan or ±inf is refused with its index. The result is a picture.",
		Examples: []Example{
			{`argand([-1+2i, -1-2i, -0.5], names=["eigenvalues"], title="A spectrum")`, "picture: A spectrum"},
		},
		Impl: argandImpl,
	},
	{
		Name: "shade",
		Params: []value.Param{
			req("z", "a real matrix, or a grid function (a vector) on the 2-D grid g"),
			opt("g", value.None, "the tensor-product grid z lives on (equally spaced in each direction); none: z is a matrix"),
			opt("title", value.None, "the title above the figure"),
			opt("xlabel", value.None, `the label under the horizontal axis; none: "x" on a grid, "column j" for a matrix`),
			opt("ylabel", value.None, `the label beside the vertical axis; none: "y" on a grid, "row i" for a matrix`),
			opt("label", value.Str("value"), "the title of the colour bar"),
			opt("unit", value.None, `the unit of the values, written after the colour bar's title: "K" gives "value (K)"`),
			opt("log", value.Bool(false), "true for a logarithmic colour scale (every value must be positive)"),
			opt("span", value.None, "the range [lo, hi] of the colour scale (values outside take the end colours); none: the data's range"),
			opt("plane", value.None, "on a 3-D grid, the z of the plane shown (the plane of unknowns nearest it); none: the plane through the middle unknown along z"),
		},
		Doc: "A heat map: each value a cell coloured by Semiflow's sequential colour map (OKLab, monotone in lightness), with a colour bar. " +
			"A grid function u on g = tensorgrid(gx, gy) gives the cell of u_k at (x_i, y_j), k = i·ny + j, centred on its point; a matrix M gives cell (i, j) at column j across and row i up (row 0 at the bottom). " +
			"A grid function on a 3-D grid is shown on one plane z = z_k of its unknowns (plane=, or the middle one), which the title names. " +
			"Values must be finite and real (take abs, re or im of complex data); a logarithmic scale refuses values ≤ 0, naming how many. The result is a picture.",
		Examples: []Example{
			{`shade({1, 2, 3 | 4, 5, 6}, title="Entries", label="a_ij")`, "picture: Entries"},
			{`g = tensorgrid(interval(0, 1, 12), interval(0, 2, 22)); typeof(shade(tabulate((x, y) -> sin(pi*x)*y, g), g, unit="K"))`, `"picture"`},
		},
		Impl: shadeImpl,
	},
	{
		Name: "columns",
		Params: []value.Param{
			req("data", "the columns: a list of vectors, ranges or lists of equal length (numbers, complex numbers or strings), or a table (sweep, readcsv, columns) to show again"),
			opt("names", value.None, "the column names, one string each; none: v0, v1, … (a table keeps its own)"),
			opt("digits", value.None, "significant digits shown, 1 to 17; none: up to 10, as numbers show. The values themselves keep full precision"),
			opt("title", value.None, "the caption; none: \"table of N rows\""),
		},
		Doc: "A table with named columns from one's own data: t.name (or t[\"name\"]) is a column as a vector (a list for a column of strings), t[i] row i, t[i, j] one entry. " +
			"It shows as text and as an HTML table; beyond 20 rows the text shows the first and last rows and the HTML folds the table away, while t.name and the record keep every row. " +
			"digits rounds what is shown only. Columns must have equal lengths and finite numbers (nan or ±inf is refused with the column and row).",
		Examples: []Example{
			{`columns([[1, 2, 3], [0.5, 0.25, 0.125]], names=["n", "h"]).h`, "[0.5, 0.25, 0.125]"},
			{`columns([[1, 2], [pi, exp(1)]], names=["k", "c"], digits=3)`, "table of 2 rows\n  k    c\n  1 3.14\n  2 2.72"},
		},
		Impl: columnsImpl,
	},
}

// seriesOptions are the options curves and dots share, after x and y;
// style's default is def.
func seriesOptions(def string) []value.Param {
	return []value.Param{
		opt("names", value.None, "the legend entries, one string per series; none: no legend for one series, series 1, 2, … for several"),
		opt("title", value.None, "the title above the figure"),
		opt("xlabel", value.None, "the label under the horizontal axis"),
		opt("ylabel", value.None, "the label beside the vertical axis"),
		opt("xunit", value.None, `the unit of x, written after its label in parentheses: "s" gives "t (s)"`),
		opt("yunit", value.None, "the unit of y"),
		opt("xspan", value.None, "the horizontal range [a, b], a < b; none: fitted to the data"),
		opt("yspan", value.None, "the vertical range [a, b], a < b; none: fitted to the data within xspan"),
		opt("log", value.Str("none"), `logarithmic axes: "none", "x", "y" or "both"`),
		opt("style", value.Str(def), `"line", "dashed", "dotted", "dashdot", "dots" (markers only) or "line+dots", or a list with one per series`),
		opt("dropnonpositive", value.Bool(false), "true leaves out values ≤ 0 on a logarithmic axis (the figure says how many) instead of refusing them"),
	}
}

// maxSeries is the most series one figure takes: six colours, then four
// dashes or markers.
const maxSeries = 24

// maxFigurePoints is the most data points one figure takes, so that a
// figure stays a few MB at most and draws in a fraction of a second.
const maxFigurePoints = 200000

// argNamed returns the argument of the parameter called name, forced, and
// its index in c.Args; none and -1 when the builtin has no such parameter.
func argNamed(c *eval.Call, name string) (value.Value, int, error) {
	f, _ := c.Interp.Builtins.Lookup(c.Name)
	fn, ok := f.(Function)
	if !ok {
		return nil, -1, fmt.Errorf("%s: no builtin", c.Name)
	}
	k := 0
	for _, p := range fn.B.Params {
		if p.Variadic {
			continue
		}
		if p.Name == name {
			v, err := c.Arg(k)
			return v, k, err
		}
		k++
	}
	return value.None, -1, nil
}

// textOpt returns the string option name, or "" when it is none.
func textOpt(c *eval.Call, name string) (string, error) {
	v, _, err := argNamed(c, name)
	if err != nil || v == value.None {
		return "", err
	}
	s, ok := v.(value.Str)
	if !ok {
		return "", value.TypeErrorf("%s: %s must be a string, not %s", c.Name, name, value.TypeName(v))
	}
	return string(s), nil
}

// spanOpt returns the interval option name, ok false when it is none.
func spanOpt(c *eval.Call, name string) (lo, hi float64, ok bool, err error) {
	_, k, err := argNamed(c, name)
	if err != nil {
		return 0, 0, false, err
	}
	return stabIntervalArg(c, k)
}

// series is one set of points to draw.
type series struct{ x, y []float64 }

// finiteData refuses a non-finite entry of data, naming what and where.
func finiteData(c *eval.Call, what string, data []float64) error {
	for i, v := range data {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return value.ValueErrorf("%s: %s[%d] is %s; a figure takes finite numbers only (leave the point out)", c.Name, what, i, value.FormatNum(v))
		}
	}
	return nil
}

// realData returns v as real numbers, refusing complex and non-numeric data.
func realData(c *eval.Call, what string, v value.Value) ([]float64, error) {
	switch v.(type) {
	case *value.Vec, *value.Range, value.List, value.Num:
	default:
		return nil, value.TypeErrorf("%s: %s must be a real vector, range or list of numbers, not %s", c.Name, what, value.TypeName(v))
	}
	re, cx, err := numbers(c, what, v)
	if err != nil {
		return nil, err
	}
	if cx != nil {
		return nil, value.TypeErrorf("%s: %s is complex; draw re(…) and im(…) as two series, abs(…), or the points with argand", c.Name, what)
	}
	return re, finiteData(c, what, re)
}

// isScalar reports whether v is a number.
func isScalar(v value.Value) bool {
	switch v.(type) {
	case value.Num, value.Complex:
		return true
	}
	return false
}

// curveSeries reads the data of curves and dots.
func curveSeries(c *eval.Call) ([]series, error) {
	xv, err := c.Arg(0)
	if err != nil {
		return nil, err
	}
	yv, err := c.Arg(1)
	if err != nil {
		return nil, err
	}
	if yv == value.None {
		l, isList := xv.(value.List)
		if !isList || len(l) == 0 || isScalar(l[0]) {
			y, err := realData(c, "x", xv)
			if err != nil {
				return nil, err
			}
			x := make([]float64, len(y))
			for i := range x {
				x[i] = float64(i)
			}
			return []series{{x, y}}, nil
		}
		// A list of points [x, y], or of series [xs, ys].
		pair := func(k int) (value.Value, value.Value, error) {
			p, ok := l[k].(value.List)
			if v, isVec := l[k].(*value.Vec); isVec && !v.IsComplex() && len(v.R) == 2 {
				return value.Num(v.R[0]), value.Num(v.R[1]), nil
			}
			if !ok || len(p) != 2 {
				return nil, nil, value.TypeErrorf("%s: x[%d] must be a point [x, y] or a series [xs, ys], not %s", c.Name, k, describe(l[k]))
			}
			return p[0], p[1], nil
		}
		a0, _, err := pair(0)
		if err != nil {
			return nil, err
		}
		if isScalar(a0) { // points
			s := series{make([]float64, len(l)), make([]float64, len(l))}
			for k := range l {
				a, b, err := pair(k)
				if err != nil {
					return nil, err
				}
				na, okA := a.(value.Num)
				nb, okB := b.(value.Num)
				if !okA || !okB {
					return nil, value.TypeErrorf("%s: the point x[%d] must hold two real numbers, not %s and %s", c.Name, k, value.TypeName(a), value.TypeName(b))
				}
				s.x[k], s.y[k] = float64(na), float64(nb)
			}
			if err := finiteData(c, "the points' x", s.x); err != nil {
				return nil, err
			}
			return []series{s}, finiteData(c, "the points' y", s.y)
		}
		var out []series
		for k := range l {
			a, b, err := pair(k)
			if err != nil {
				return nil, err
			}
			xs, err := realData(c, fmt.Sprintf("x[%d][0]", k), a)
			if err != nil {
				return nil, err
			}
			ys, err := realData(c, fmt.Sprintf("x[%d][1]", k), b)
			if err != nil {
				return nil, err
			}
			if len(xs) != len(ys) {
				return nil, value.ValueErrorf("%s: series %d has %d abscissae and %d ordinates", c.Name, k+1, len(xs), len(ys))
			}
			out = append(out, series{xs, ys})
		}
		return out, nil
	}
	x, err := realData(c, "x", xv)
	if err != nil {
		return nil, err
	}
	var ys []value.Value
	if l, ok := yv.(value.List); ok && len(l) > 0 && !isScalar(l[0]) {
		ys = l
	} else {
		ys = []value.Value{yv}
	}
	out := make([]series, len(ys))
	for k, y := range ys {
		what := "y"
		if len(ys) > 1 {
			what = fmt.Sprintf("y[%d]", k)
		}
		var yy []float64
		if f, ok := y.(value.Callable); ok {
			yy = make([]float64, len(x))
			for i, xi := range x {
				if err := c.Tick(1); err != nil {
					return nil, err
				}
				r, err := c.Apply(f, value.Num(xi))
				if err != nil {
					return nil, err
				}
				n, ok := r.(value.Num)
				if !ok {
					return nil, value.TypeErrorf("%s: %s at x = %s gave a %s; the function must return a real number", c.Name, what, value.FormatNum(xi), value.TypeName(r))
				}
				if yy[i] = float64(n); math.IsNaN(yy[i]) || math.IsInf(yy[i], 0) {
					return nil, value.ValueErrorf("%s: %s at x = %s is %s; a figure takes finite numbers only", c.Name, what, value.FormatNum(xi), value.FormatNum(yy[i]))
				}
			}
		} else if yy, err = realData(c, what, y); err != nil {
			return nil, err
		}
		if len(yy) != len(x) {
			return nil, value.ValueErrorf("%s: %s has %d values but x has %d", c.Name, what, len(yy), len(x))
		}
		out[k] = series{x, yy}
	}
	return out, nil
}

// seriesNames reads the names option for count series.
func seriesNames(c *eval.Call, count int) ([]string, error) {
	v, _, err := argNamed(c, "names")
	if err != nil {
		return nil, err
	}
	if v == value.None {
		if count == 1 {
			return []string{""}, nil
		}
		out := make([]string, count)
		for k := range out {
			out[k] = fmt.Sprintf("series %d", k+1)
		}
		return out, nil
	}
	l, ok := v.(value.List)
	if s, isStr := v.(value.Str); isStr {
		l, ok = value.List{s}, true
	}
	if !ok {
		return nil, value.TypeErrorf("%s: names must be a list of strings, not %s", c.Name, value.TypeName(v))
	}
	if len(l) != count {
		return nil, value.ValueErrorf("%s: %d names for %d series", c.Name, len(l), count)
	}
	out := make([]string, count)
	for k, x := range l {
		s, ok := x.(value.Str)
		if !ok {
			return nil, value.TypeErrorf("%s: names[%d] must be a string, not %s", c.Name, k, value.TypeName(x))
		}
		out[k] = string(s)
	}
	return out, nil
}

// seriesStyles reads the style option for count series.
func seriesStyles(c *eval.Call, count int) ([]string, error) {
	v, _, err := argNamed(c, "style")
	if err != nil {
		return nil, err
	}
	var l value.List
	switch t := v.(type) {
	case value.Str:
		for range count {
			l = append(l, t)
		}
	case value.List:
		if len(t) != count {
			return nil, value.ValueErrorf("%s: %d styles for %d series", c.Name, len(t), count)
		}
		l = t
	default:
		return nil, value.TypeErrorf("%s: style must be a string or a list of strings, not %s", c.Name, value.TypeName(v))
	}
	out := make([]string, count)
	for k, x := range l {
		s, ok := x.(value.Str)
		switch {
		case !ok:
			return nil, value.TypeErrorf("%s: style[%d] must be a string, not %s", c.Name, k, value.TypeName(x))
		case s == "line" || s == "dashed" || s == "dotted" || s == "dashdot" || s == "dots" || s == "line+dots":
			out[k] = string(s)
		default:
			return nil, value.ValueErrorf(`%s: style %s is not one of "line", "dashed", "dotted", "dashdot", "dots", "line+dots"`, c.Name, value.Quote(string(s)))
		}
	}
	return out, nil
}

// addSeries draws the series into f with their names and styles: series k
// takes colour k of the six, dash k/6 when its style is "line", and marker
// k mod 4.
func addSeries(f *plot.Figure, ss []series, names, styles []string) {
	dashes := []plot.Dash{plot.Solid, plot.Dashed, plot.Dotted, plot.DashDot}
	markers := []plot.Marker{plot.Circle, plot.Square, plot.Diamond, plot.Cross}
	for k, s := range ss {
		col := plot.Palette[k%len(plot.Palette)].Hex()
		st := styles[k]
		if st != "dots" {
			l := f.AddLine(s.x, s.y, names[k])
			l.Color = col
			switch st {
			case "dashed":
				l.Dash = plot.Dashed
			case "dotted":
				l.Dash = plot.Dotted
			case "dashdot":
				l.Dash = plot.DashDot
			default:
				l.Dash = dashes[(k/len(plot.Palette))%len(dashes)]
			}
		}
		if st == "dots" || st == "line+dots" {
			label := names[k]
			if st == "line+dots" {
				label = "" // the line's entry names the series
			}
			p := f.AddPoints(s.x, s.y, label)
			p.Color, p.Marker = col, markers[k%len(markers)]
		}
	}
}

// countPoints refuses more than maxFigurePoints points in all or more than
// maxSeries series.
func countPoints(c *eval.Call, ss []series) error {
	if len(ss) > maxSeries {
		return value.ValueErrorf("%s: %d series; a figure takes at most %d (split them over several figures)", c.Name, len(ss), maxSeries)
	}
	n := 0
	for _, s := range ss {
		n += len(s.x)
		if len(s.x) == 0 {
			return value.ValueErrorf("%s: a series is empty; there is nothing to draw", c.Name)
		}
	}
	if n > maxFigurePoints {
		return value.ValueErrorf("%s: %d points; a figure takes at most %d (take every k-th point, e.g. x[0 .. -1 by 10])", c.Name, n, maxFigurePoints)
	}
	return nil
}

func curvesImpl(c *eval.Call) (value.Value, error) {
	ss, err := curveSeries(c)
	if err != nil {
		return nil, err
	}
	if err := countPoints(c, ss); err != nil {
		return nil, err
	}
	names, err := seriesNames(c, len(ss))
	if err != nil {
		return nil, err
	}
	styles, err := seriesStyles(c, len(ss))
	if err != nil {
		return nil, err
	}
	f := &plot.Figure{}
	if err := figureTexts(c, f); err != nil {
		return nil, err
	}
	lv, _, err := argNamed(c, "log")
	if err != nil {
		return nil, err
	}
	switch lv {
	case value.Str("none"):
	case value.Str("x"):
		f.X.Log = true
	case value.Str("y"):
		f.Y.Log = true
	case value.Str("both"):
		f.X.Log, f.Y.Log = true, true
	default:
		return nil, value.ValueErrorf(`%s: log must be "none", "x", "y" or "both", not %s`, c.Name, lv)
	}
	dv, _, err := argNamed(c, "dropnonpositive")
	if err != nil {
		return nil, err
	}
	drop, ok := dv.(value.Bool)
	if !ok {
		return nil, value.TypeErrorf("%s: dropnonpositive must be true or false, not %s", c.Name, value.TypeName(dv))
	}
	f.DropNonPositive = bool(drop)
	for k, ax := range []*plot.Axis{&f.X, &f.Y} {
		name := []string{"xspan", "yspan"}[k]
		lo, hi, ok, err := spanOpt(c, name)
		if err != nil {
			return nil, err
		}
		if ok && ax.Log && lo <= 0 {
			return nil, value.ValueErrorf("%s: %s must be positive on a logarithmic axis, not [%s, %s]", c.Name, name, value.FormatNum(lo), value.FormatNum(hi))
		}
		if ok {
			ax.Min, ax.Max = lo, hi
		}
		if !ax.Log || f.DropNonPositive {
			continue
		}
		for j, s := range ss {
			data := [][]float64{s.x, s.y}[k]
			bad, first := 0, -1
			for i, v := range data {
				if v <= 0 {
					bad++
					if first < 0 {
						first = i
					}
				}
			}
			if bad > 0 {
				which := ""
				if len(ss) > 1 {
					which = fmt.Sprintf(" of series %d", j+1)
					if names[j] != "" {
						which = fmt.Sprintf(" of series %d (%s)", j+1, names[j])
					}
				}
				axis := []string{"x", "y"}[k]
				return nil, value.ValueErrorf("%s: the %s axis is logarithmic, but %d %s value(s)%s are ≤ 0 (the first at index %d: %s); give dropnonpositive=true to leave them out",
					c.Name, axis, bad, axis, which, first, value.FormatNum(data[first]))
			}
		}
	}
	addSeries(f, ss, names, styles)
	return newPicture(c, f)
}

// figureTexts sets the title, axis labels and units that the builtin
// takes (each option only when it is a parameter of the builtin).
func figureTexts(c *eval.Call, f *plot.Figure) error {
	var err error
	if f.Title, err = textOpt(c, "title"); err != nil {
		return err
	}
	if f.X.Label, err = textOpt(c, "xlabel"); err != nil {
		return err
	}
	if f.Y.Label, err = textOpt(c, "ylabel"); err != nil {
		return err
	}
	u, err := textOpt(c, "xunit")
	if err != nil {
		return err
	}
	f.X.Label = withUnit(f.X.Label, u)
	if u, err = textOpt(c, "yunit"); err != nil {
		return err
	}
	f.Y.Label = withUnit(f.Y.Label, u)
	return nil
}

// newPicture draws f once, so that what cannot be drawn is said now, and
// returns it as a picture.
func newPicture(c *eval.Call, f *plot.Figure) (value.Value, error) {
	if _, err := f.SVG(); err != nil {
		return nil, value.ValueErrorf("%s: %v", c.Name, err)
	}
	return &objects.Picture{Fig: f}, nil
}

func argandImpl(c *eval.Call) (value.Value, error) {
	zv, err := c.Arg(0)
	if err != nil {
		return nil, err
	}
	if h, ok := zv.(value.HasFields); ok { // a spectrum: its eigenvalues
		if v, has := h.Field("values"); has {
			zv = v
		}
	}
	var parts []value.Value
	if l, ok := zv.(value.List); ok && len(l) > 0 && !isScalar(l[0]) {
		parts = l
	} else {
		parts = []value.Value{zv}
	}
	ss := make([]series, len(parts))
	for k, p := range parts {
		what := "z"
		if len(parts) > 1 {
			what = fmt.Sprintf("z[%d]", k)
		}
		switch p.(type) {
		case *value.Vec, *value.Range, value.List, value.Num, value.Complex:
		default:
			return nil, value.TypeErrorf("%s: %s must be a complex or real vector or list, not %s", c.Name, what, value.TypeName(p))
		}
		re, cx, err := numbers(c, what, p)
		if err != nil {
			return nil, err
		}
		if cx == nil {
			cx = toComplex(re)
		}
		s := series{make([]float64, len(cx)), make([]float64, len(cx))}
		for i, z := range cx {
			s.x[i], s.y[i] = real(z), imag(z)
			if math.IsNaN(s.x[i]) || math.IsInf(s.x[i], 0) || math.IsNaN(s.y[i]) || math.IsInf(s.y[i], 0) {
				return nil, value.ValueErrorf("%s: %s[%d] is %s; a figure takes finite numbers only", c.Name, what, i, value.FormatComplex(z))
			}
		}
		ss[k] = s
	}
	if err := countPoints(c, ss); err != nil {
		return nil, err
	}
	names, err := seriesNames(c, len(ss))
	if err != nil {
		return nil, err
	}
	styles, err := seriesStyles(c, len(ss))
	if err != nil {
		return nil, err
	}
	f := &plot.Figure{EqualAspect: true}
	f.X.Label, f.Y.Label = "Re z", "Im z"
	if f.Title, err = textOpt(c, "title"); err != nil {
		return nil, err
	}
	for k, ax := range []*plot.Axis{&f.X, &f.Y} {
		lo, hi, ok, err := spanOpt(c, []string{"re", "im"}[k])
		if err != nil {
			return nil, err
		}
		if ok {
			ax.Min, ax.Max = lo, hi
		}
	}
	// The imaginary axis, when the points or the range reach it.
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, s := range ss {
		for _, x := range s.x {
			lo, hi = math.Min(lo, x), math.Max(hi, x)
		}
	}
	if f.X.Min < f.X.Max {
		lo, hi = f.X.Min, f.X.Max
	}
	if lo <= 0 && hi >= 0 {
		v := f.AddVLine(0, "")
		v.Dash = plot.Dotted
	}
	addSeries(f, ss, names, styles)
	return newPicture(c, f)
}

func shadeImpl(c *eval.Call) (value.Value, error) {
	planeTitle := "" // the plane shown of a 3-D grid function
	zv, err := c.Arg(0)
	if err != nil {
		return nil, err
	}
	gv, err := c.Arg(1)
	if err != nil {
		return nil, err
	}
	f := &plot.Figure{}
	var z [][]float64
	var xs, ys []float64
	const maxCells = 250000
	if gv == value.None {
		m, ok := zv.(*value.Matrix)
		if !ok {
			if _, isC := zv.(*value.CMatrix); isC {
				return nil, value.TypeErrorf("%s: z is a complex matrix; shade abs(z), re(z) or im(z)", c.Name)
			}
			return nil, value.TypeErrorf("%s: z must be a real matrix, or a grid function with its grid g, not %s", c.Name, value.TypeName(zv))
		}
		if m.Rows*m.Cols > maxCells {
			return nil, value.ValueErrorf("%s: %d × %d cells; a heat map takes at most %d (shade a part, z[0 .. -1 by 2, 0 .. -1 by 2])", c.Name, m.Rows, m.Cols, maxCells)
		}
		if m.Rows == 0 || m.Cols == 0 {
			return nil, value.ValueErrorf("%s: z is empty", c.Name)
		}
		if err := finiteMatrix(c, m); err != nil {
			return nil, err
		}
		z = make([][]float64, m.Cols)
		for j := range z {
			z[j] = make([]float64, m.Rows)
			for i := range z[j] {
				z[j][i] = m.At(i, j)
			}
		}
		f.X.Label, f.Y.Label = "column j", "row i"
		f.AddHeatMap(z, -0.5, float64(m.Cols)-0.5, -0.5, float64(m.Rows)-0.5, "")
	} else {
		g, ok := gv.(*objects.Grid)
		if !ok {
			return nil, value.TypeErrorf("%s: g must be a grid, not %s", c.Name, value.TypeName(gv))
		}
		if g.Dim() == 3 {
			if zv, g, planeTitle, err = zPlane(c, zv, g); err != nil {
				return nil, err
			}
		}
		if g.Dim() != 2 {
			return nil, value.ValueErrorf("%s: g is a 1-D grid; draw a grid function on it with curves(coords(g), u)", c.Name)
		}
		u, err := realData(c, "z", zv)
		if err != nil {
			return nil, err
		}
		if len(u) != g.Size() {
			return nil, value.ValueErrorf("%s: z has %d values but the grid has %d unknowns", c.Name, len(u), g.Size())
		}
		if len(u) > maxCells {
			return nil, value.ValueErrorf("%s: %d cells; a heat map takes at most %d", c.Name, len(u), maxCells)
		}
		xs, ys = g.X.X1(), g.Y.X1()
		for k, p := range [][]float64{xs, ys} {
			if len(p) < 2 {
				return nil, value.ValueErrorf("%s: the grid has %d unknown(s) along %s; a heat map needs at least 2", c.Name, len(p), []string{"x", "y"}[k])
			}
			h := (p[len(p)-1] - p[0]) / float64(len(p)-1)
			for i := 1; i < len(p); i++ {
				if math.Abs(p[i]-p[i-1]-h) > 1e-6*math.Abs(h) {
					return nil, value.ValueErrorf("%s: the grid's points along %s are not equally spaced (a Chebyshev grid); draw them with dots instead", c.Name, []string{"x", "y"}[k])
				}
			}
		}
		z = make([][]float64, len(xs))
		for i := range z {
			z[i] = u[i*len(ys) : (i+1)*len(ys)]
		}
		f.X.Label, f.Y.Label = "x", "y"
		f.AddHeatMapGrid(z, xs, ys, "")
	}
	hm := f.Series[0].(*plot.HeatMap)
	if err := figureTexts(c, f); err != nil {
		return nil, err
	}
	if planeTitle != "" {
		if f.Title == "" {
			f.Title = planeTitle
		} else {
			f.Title += ": " + planeTitle
		}
	}
	if f.X.Label == "" { // figureTexts clears a label not given
		f.X.Label = map[bool]string{true: "column j", false: "x"}[gv == value.None]
	}
	if f.Y.Label == "" {
		f.Y.Label = map[bool]string{true: "row i", false: "y"}[gv == value.None]
	}
	label, err := textOpt(c, "label")
	if err != nil {
		return nil, err
	}
	unit, err := textOpt(c, "unit")
	if err != nil {
		return nil, err
	}
	hm.Label = withUnit(label, unit)
	lv, _, err := argNamed(c, "log")
	if err != nil {
		return nil, err
	}
	logScale, ok := lv.(value.Bool)
	if !ok {
		return nil, value.TypeErrorf("%s: log must be true or false, not %s", c.Name, value.TypeName(lv))
	}
	if hm.Log = bool(logScale); hm.Log {
		bad := 0
		for _, row := range z {
			for _, v := range row {
				if v <= 0 {
					bad++
				}
			}
		}
		if bad > 0 {
			return nil, value.ValueErrorf("%s: a logarithmic colour scale needs positive values, but %d value(s) are ≤ 0 (shade abs(z), or leave log false)", c.Name, bad)
		}
	}
	lo, hi, ok, err := spanOpt(c, "span")
	if err != nil {
		return nil, err
	}
	if ok {
		if hm.Log && lo <= 0 {
			return nil, value.ValueErrorf("%s: span must be positive on a logarithmic colour scale, not [%s, %s]", c.Name, value.FormatNum(lo), value.FormatNum(hi))
		}
		hm.Min, hm.Max = lo, hi
	}
	return newPicture(c, f)
}

// finiteMatrix refuses a non-finite entry of m with its position.
func finiteMatrix(c *eval.Call, m *value.Matrix) error {
	for k, v := range m.Data {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return value.ValueErrorf("%s: z[%d, %d] is %s; a figure takes finite numbers only", c.Name, k/m.Cols, k%m.Cols, value.FormatNum(v))
		}
	}
	return nil
}

func columnsImpl(c *eval.Call) (value.Value, error) {
	dv, err := c.Arg(0)
	if err != nil {
		return nil, err
	}
	var names []string
	var rows [][]value.Value
	title := ""
	if t, ok := dv.(*objects.Analysis); ok && t.Kind == "table" {
		names = append([]string(nil), t.Columns...)
		rows = t.Rows
		title = t.Title
	} else {
		l, ok := dv.(value.List)
		if !ok {
			return nil, value.TypeErrorf("%s: data must be a list of columns (vectors, ranges or lists) or a table, not %s", c.Name, value.TypeName(dv))
		}
		if len(l) == 0 {
			return nil, value.ValueErrorf("%s: data holds no columns", c.Name)
		}
		cols := make([][]value.Value, len(l))
		for j, col := range l {
			s, ok := col.(value.Indexable)
			_, isStr := col.(value.Str)
			if !ok || isStr {
				return nil, value.TypeErrorf("%s: column %d must be a vector, range or list, not %s", c.Name, j, value.TypeName(col))
			}
			if j > 0 && s.Len() != len(cols[0]) {
				return nil, value.ValueErrorf("%s: column %d has %d entries but column 0 has %d", c.Name, j, s.Len(), len(cols[0]))
			}
			if err := c.CheckSize(float64(s.Len())*float64(len(l)), c.Name+": the table"); err != nil {
				return nil, err
			}
			cols[j] = make([]value.Value, s.Len())
			for i := range cols[j] {
				x := s.Index(i)
				switch x.(type) {
				case value.Num, value.Complex:
					if !finite(x) {
						return nil, value.ValueErrorf("%s: column %d, row %d is %s; a table holds finite numbers only", c.Name, j, i, x)
					}
				case value.Str:
				default:
					return nil, value.TypeErrorf("%s: column %d, row %d is a %s; a table holds numbers and strings", c.Name, j, i, value.TypeName(x))
				}
				cols[j][i] = x
			}
		}
		if len(cols[0]) == 0 {
			return nil, value.ValueErrorf("%s: the columns are empty", c.Name)
		}
		rows = make([][]value.Value, len(cols[0]))
		for i := range rows {
			rows[i] = make([]value.Value, len(cols))
			for j := range cols {
				rows[i][j] = cols[j][i]
			}
		}
		for j := range cols {
			names = append(names, fmt.Sprintf("v%d", j))
		}
	}
	nv, _, err := argNamed(c, "names")
	if err != nil {
		return nil, err
	}
	if nv != value.None {
		l, ok := nv.(value.List)
		if !ok {
			return nil, value.TypeErrorf("%s: names must be a list of strings, not %s", c.Name, value.TypeName(nv))
		}
		if len(l) != len(names) {
			return nil, value.ValueErrorf("%s: %d names for %d columns", c.Name, len(l), len(names))
		}
		seen := map[string]bool{}
		for k, x := range l {
			s, ok := x.(value.Str)
			if !ok || s == "" {
				return nil, value.TypeErrorf("%s: names[%d] must be a non-empty string, not %s", c.Name, k, x)
			}
			if seen[string(s)] {
				return nil, value.ValueErrorf("%s: the name %s is given twice", c.Name, value.Quote(string(s)))
			}
			seen[string(s)] = true
			names[k] = string(s)
		}
	}
	digits := 0
	if v, k, err := argNamed(c, "digits"); err != nil {
		return nil, err
	} else if v != value.None {
		if digits, err = stabCountArg(c, k, 1, 17); err != nil {
			return nil, err
		}
	}
	if t, err := textOpt(c, "title"); err != nil {
		return nil, err
	} else if t != "" {
		title = t
	}
	if title == "" {
		title = fmt.Sprintf("table of %d rows", len(rows))
	}
	t := objects.NewTable(title, names, rows)
	t.Digits = digits
	return t, nil
}

// zPlane returns the values of the grid function zv of the 3-D grid g on
// one plane z = z_k of its unknowns (the plane option's nearest, or the
// middle one), the 2-D grid of that plane, and a title naming it.
func zPlane(c *eval.Call, zv value.Value, g *objects.Grid) (value.Value, *objects.Grid, string, error) {
	u, err := realData(c, "z", zv)
	if err != nil {
		return nil, nil, "", err
	}
	if len(u) != g.Size() {
		return nil, nil, "", value.ValueErrorf("%s: z has %d values but the grid has %d unknowns", c.Name, len(u), g.Size())
	}
	zs := g.Z.X1()
	nz, ny := len(zs), g.Y.Size()
	k := nz / 2
	pv, _, err := argNamed(c, "plane")
	if err != nil {
		return nil, nil, "", err
	}
	if pv != value.None {
		at, ok := pv.(value.Num)
		if !ok || math.IsNaN(float64(at)) || math.IsInf(float64(at), 0) {
			return nil, nil, "", value.ValueErrorf("%s: plane must be a finite number, the z of the plane shown", c.Name)
		}
		lo, hi := math.Min(zs[0], zs[nz-1]), math.Max(zs[0], zs[nz-1])
		if float64(at) < lo || float64(at) > hi {
			return nil, nil, "", value.ValueErrorf("%s: plane = %s lies outside the unknowns along z, [%s, %s]", c.Name, value.FormatNum(float64(at)), value.FormatNum(lo), value.FormatNum(hi))
		}
		for j := range zs {
			if math.Abs(zs[j]-float64(at)) < math.Abs(zs[k]-float64(at)) {
				k = j
			}
		}
	}
	out := make([]float64, g.X.Size()*ny)
	for ix := 0; ix < g.X.Size(); ix++ {
		for iy := 0; iy < ny; iy++ {
			out[ix*ny+iy] = u[(ix*ny+iy)*nz+k]
		}
	}
	title := fmt.Sprintf("plane z = %s (unknown %d of %d along z)", plot.FormatValue(zs[k]), k+1, nz)
	return value.RealVec(out), objects.NewTensor(g.X, g.Y), title, nil
}

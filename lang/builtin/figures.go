package builtin

import (
	"bufio"
	"encoding/base64"

	"semiflow/lang/display"
	"semiflow/lang/eval"
	"semiflow/lang/objects"
	"semiflow/lang/plot"
	"semiflow/lang/value"
)

// figureFamily: saving what a value draws, and drawing it with words and
// ranges of one's own.
var figureFamily = []*Builtin{
	{
		Name: "picture",
		Params: []value.Param{
			req("x", "a value that draws a figure: a solution, an analysis result or a picture"),
			opt("title", value.None, "the title above the figure; none keeps the figure's own"),
			opt("xlabel", value.None, "the label under the horizontal axis"),
			opt("ylabel", value.None, "the label beside the vertical axis"),
			opt("xspan", value.None, "the horizontal range [a, b], a < b (for a solution's components against t: the time range)"),
			opt("yspan", value.None, "the vertical range [a, b], a < b"),
			opt("xunit", value.None, `the unit of the horizontal axis, written after its label in parentheses: "s" gives "t (s)"`),
			opt("yunit", value.None, "the unit of the vertical axis"),
		},
		Doc: "The figure of x on its own, with the title, axis labels, ranges and units given; what is not given stays as x draws it. " +
			"It shows as the figure, with its title as plain text, and writesvg and writepng save it. On a logarithmic axis a span must be positive. " +
			"x itself is not changed.",
		Examples: []Example{
			{`typeof(picture(growth({-1, 5 | 0, -2}, bounds="none"), title="Growth of the shear flow model", xspan=[0, 4], xunit="s"))`, `"picture"`},
		},
		Impl: pictureImpl,
	},
	{
		Name: "writesvg",
		Params: []value.Param{
			req("x", "a value that draws a figure: a solution, spectrum, pseudospectrum, numerical range, growth curve, ..."),
			req("path", "the file name (overwritten)"),
		},
		Doc: "Writes the SVG figure that x shows in a notebook to a file, byte for byte the image/svg+xml part of its display, " +
			"so a figure in a report is the one in the record. A value without a figure (a number, a vector, an operator) is an error naming its type." + regularOnly,
		Examples: []Example{
			{`writesvg(spectrum({-1, 5 | 0, -2}), "/tmp/semiflow_writesvg_example.svg")`, ""},
		},
		Impl: func(c *eval.Call) (value.Value, error) { return writeFigure(c, "image/svg+xml") },
	},
	{
		Name: "writepng",
		Params: []value.Param{
			req("x", "a value that draws a figure: a solution, spectrum, pseudospectrum, numerical range, growth curve, ..."),
			req("path", "the file name (overwritten)"),
		},
		Doc: "Writes the figure of x as a PNG image, byte for byte the image/png part of its display: the same drawing as writesvg, " +
			"painted by Semiflow's own rasteriser at two pixels per point (a 640 × 420 figure is 1280 × 840 pixels) with an embedded font, " +
			"so it looks the same on every machine and in documents that take no SVG. A value without a figure is an error naming its type." + regularOnly,
		Examples: []Example{
			{`writepng(spectrum({-1, 5 | 0, -2}), "/tmp/semiflow_writepng_example.png")`, ""},
		},
		Impl: func(c *eval.Call) (value.Value, error) { return writeFigure(c, "image/png") },
	},
}

func pictureImpl(c *eval.Call) (value.Value, error) {
	f := objects.FigureOf(c.Args[0])
	if f == nil {
		return nil, value.TypeErrorf("%s: a %s has no figure; figures come from solutions and analysis results", c.Name, value.TypeName(c.Args[0]))
	}
	text := func(i int, set func(string)) error {
		if c.Args[i] == value.None {
			return nil
		}
		s, err := argString(c, i)
		if err == nil {
			set(s)
		}
		return err
	}
	if err := text(1, func(s string) { f.Title = s }); err != nil {
		return nil, err
	}
	if err := text(2, func(s string) { f.X.Label = s }); err != nil {
		return nil, err
	}
	if err := text(3, func(s string) { f.Y.Label = s }); err != nil {
		return nil, err
	}
	for k, ax := range []*plot.Axis{&f.X, &f.Y} {
		lo, hi, ok, err := stabIntervalArg(c, 4+k)
		if err != nil {
			return nil, err
		}
		if !ok {
			continue
		}
		if ax.Log && lo <= 0 {
			return nil, value.ValueErrorf("%s: %s must be positive on a logarithmic axis, not [%s, %s]", c.Name, paramName(c, 4+k), value.FormatNum(lo), value.FormatNum(hi))
		}
		ax.Min, ax.Max = lo, hi
	}
	if err := text(6, func(s string) { f.X.Label = withUnit(f.X.Label, s) }); err != nil {
		return nil, err
	}
	if err := text(7, func(s string) { f.Y.Label = withUnit(f.Y.Label, s) }); err != nil {
		return nil, err
	}
	p := &objects.Picture{Fig: f}
	if _, err := f.SVG(); err != nil { // say now, not at display, what cannot be drawn
		return nil, value.ValueErrorf("%s: %v", c.Name, err)
	}
	return p, nil
}

// withUnit writes the unit u after the axis label l: "t (s)".
func withUnit(l, u string) string {
	if u == "" {
		return l
	}
	if l == "" {
		return "(" + u + ")"
	}
	return l + " (" + u + ")"
}

// writeFigure writes the bundle entry mime ("image/svg+xml" as text,
// "image/png" as base64 in the bundle) of c.Args[0] to the file c.Args[1].
func writeFigure(c *eval.Call, mime string) (value.Value, error) {
	x := c.Args[0]
	path, err := argString(c, 1)
	if err != nil {
		return nil, err
	}
	entry, ok := display.Bundle(x)[mime]
	if !ok {
		return nil, value.TypeErrorf("%s: a %s has no figure; figures come from solutions and analysis results", c.Name, value.TypeName(x))
	}
	s, ok := entry.(string)
	if !ok {
		return nil, value.TypeErrorf("%s: the figure of a %s is not in %s form", c.Name, value.TypeName(x), mime)
	}
	data := []byte(s)
	if mime == "image/png" {
		if data, err = base64.StdEncoding.DecodeString(s); err != nil {
			return nil, value.TypeErrorf("%s: the figure of a %s is not a PNG image: %v", c.Name, value.TypeName(x), err)
		}
	}
	if err := writeFile(c, path, func(w *bufio.Writer) error {
		_, err := w.Write(data)
		return err
	}); err != nil {
		return nil, err
	}
	return value.None, nil
}

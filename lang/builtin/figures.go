package builtin

import (
	"bufio"
	"encoding/base64"

	"semiflow/lang/display"
	"semiflow/lang/eval"
	"semiflow/lang/value"
)

// figureFamily: saving what a value draws.
var figureFamily = []*Builtin{
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

package builtin

import (
	"bufio"

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
		Impl: writesvgImpl,
	},
}

func writesvgImpl(c *eval.Call) (value.Value, error) {
	x := c.Args[0]
	path, err := argString(c, 1)
	if err != nil {
		return nil, err
	}
	svg, ok := display.Bundle(x)["image/svg+xml"]
	if !ok {
		return nil, value.TypeErrorf("%s: a %s has no figure; figures come from solutions and analysis results", c.Name, value.TypeName(x))
	}
	var data []byte
	switch s := svg.(type) {
	case string:
		data = []byte(s)
	case []byte:
		data = s
	default:
		return nil, value.TypeErrorf("%s: the figure of a %s is not SVG text", c.Name, value.TypeName(x))
	}
	if err := writeFile(c, path, func(w *bufio.Writer) error {
		_, err := w.Write(data)
		return err
	}); err != nil {
		return nil, err
	}
	return value.None, nil
}

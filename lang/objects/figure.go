package objects

import (
	"bytes"
	"encoding/base64"
	"fmt"
	"html"
	"image/png"
	"strings"

	"semiflow/lang/plot"
)

// FoldRows is the number of table rows above which a result's HTML folds
// the table away (a <details> element, closed) so that the figure and the
// key numbers come first; the text/plain and application/json forms keep
// the table as before.
const FoldRows = 20

// addFigure draws f into the bundle out as "image/svg+xml" (the vector
// original, what writesvg saves) and "image/png" (base64, PixelDensity
// pixels per px, what writepng saves), and returns the HTML that shows the
// figure: the PNG as an <img> with the figure's caption as its text. An
// <img> with a data URI survives the sanitising of an untrusted notebook,
// where inline SVG is removed and its text spills into the page. A figure
// that cannot be drawn gives a sentence saying why.
func addFigure(f *plot.Figure, out map[string]any) string {
	svg, err := f.SVG()
	if err != nil {
		return `<p><i>figure not drawn:</i> ` + html.EscapeString(err.Error()) + `</p>`
	}
	out["image/svg+xml"] = string(svg)
	pic, err := f.PNG()
	if err != nil {
		return `<p><i>figure not drawn:</i> ` + html.EscapeString(err.Error()) + `</p>`
	}
	data := base64.StdEncoding.EncodeToString(pic)
	out["image/png"] = data
	w, h := plot.DefaultWidth, plot.DefaultHeight
	if c, err := png.DecodeConfig(bytes.NewReader(pic)); err == nil {
		w, h = c.Width/plot.PixelDensity, c.Height/plot.PixelDensity
	}
	return fmt.Sprintf(`<div class="semiflow-figure"><img src="data:image/png;base64,%s" width="%d" height="%d" style="max-width:100%%;height:auto" alt="%s"/></div>`,
		data, w, h, html.EscapeString(f.Caption()))
}

// fold wraps a table's HTML in a closed <details> element when it has more
// than FoldRows rows, with a summary line that names its size and columns.
func fold(table string, rows int, columns []string) string {
	if rows <= FoldRows {
		return table
	}
	cols := strings.Join(columns, ", ")
	if len([]rune(cols)) > 80 {
		cols = string([]rune(cols)[:79]) + "…"
	}
	return `<details class="semiflow-fold"><summary>` +
		html.EscapeString(fmt.Sprintf("table of %d rows (%s) — folded; click to unfold", rows, cols)) +
		`</summary>` + table + `</details>`
}

// Picture is a figure on its own: the figure of a result, with its title,
// axis labels, ranges or units set by the reader (the builtin picture). It
// shows as the figure (SVG, PNG and the PNG in HTML) with its caption as
// plain text, and writesvg and writepng save it.
type Picture struct {
	Fig *plot.Figure
}

func (p *Picture) Type() string { return "picture" }

// String is the caption and what the figure holds, in a line.
func (p *Picture) String() string { return "picture: " + p.Fig.Caption() }

// MIME returns the figure as SVG and PNG, and HTML that shows the PNG.
func (p *Picture) MIME() map[string]any {
	out := map[string]any{}
	out["text/html"] = addFigure(p.Fig, out)
	return out
}

// FigureOf returns a copy of the figure that v draws (a solution, an
// analysis result or a picture), to be changed without changing v's, or
// nil when v draws none.
func FigureOf(v any) *plot.Figure {
	var f *plot.Figure
	switch v := v.(type) {
	case *Solution:
		f = v.Figure()
	case *Analysis:
		f = v.Figure
	case *Picture:
		f = v.Fig
	}
	if f == nil {
		return nil
	}
	c := *f
	c.Series = append([]plot.Series(nil), f.Series...)
	return &c
}

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
	return fmt.Sprintf(`<div class="semiflow-figure"><img src="data:image/png;base64,%s" width="%d" height="%d" alt="%s"/></div>`,
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

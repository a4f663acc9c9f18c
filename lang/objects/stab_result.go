package objects

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"semiflow/lang/plot"
	"semiflow/lang/syntax"
	"semiflow/lang/value"
)

// Analysis is the result of a stability analysis (a spectrum, a numerical
// range, pseudospectra, a resolvent profile, a growth curve, a generator or
// Markov-chain report). It shows itself as a titled report: facts (label =
// value lines), a table, the method and accuracy, notes on assumptions, and
// an optional SVG figure.
//
// Its table is indexable like a matrix: r[i, j] is the entry in row i and
// column j (a number or a complex number), r[.., j] a whole column as a
// vector, r[i] row i. Dims gives (rows, columns).
type Analysis struct {
	Kind     string // the type name: "spectrum", "growth", ...
	Title    string
	Facts    []Fact
	Columns  []string
	Rows     [][]value.Value // each cell a value.Num or value.Complex
	Method   string
	Accuracy string
	Notes    []string
	Figure   *plot.Figure // nil for none
	// Named are the numbers a script reads as r.name (see Field).
	Named []Named
	// Data is the numerics result the report was made from.
	Data any
	// Digits, when positive, is the number of significant digits the
	// table's numbers show (text and HTML); the values keep full precision.
	Digits int
}

// Fact is one labelled line of a report.
type Fact struct{ Label, Value string }

// MaxRowsHTML is the number of table rows above which the HTML form shows
// the first MaxRowsHTML − 50 and the last 50 rows only.
const MaxRowsHTML = 500

// MaxRowsShown is the number of table rows above which the text/plain form
// shows the first and last rows only.
const MaxRowsShown = 20

func (r *Analysis) Type() string { return r.Kind }

// Dims returns the table's number of rows and columns.
func (r *Analysis) Dims() (int, int) { return len(r.Rows), len(r.Columns) }

// Len is the number of table rows.
func (r *Analysis) Len() int { return len(r.Rows) }

// Index returns row i of the table as a vector.
func (r *Analysis) Index(i int) value.Value {
	all := make([]int, len(r.Columns))
	for j := range all {
		all[j] = j
	}
	return r.Index2([]int{i}, all, true, false)
}

// Index2 returns a cell (two scalar indices), a vector (a row or a column)
// or, for two ranges, a list of row vectors.
func (r *Analysis) Index2(ri, ci []int, scalarRow, scalarCol bool) value.Value {
	if scalarRow && scalarCol {
		return r.Rows[ri[0]][ci[0]]
	}
	if scalarRow || scalarCol {
		var cells []value.Value
		for _, i := range ri {
			for _, j := range ci {
				cells = append(cells, r.Rows[i][j])
			}
		}
		return cellsVec(cells)
	}
	out := make(value.List, len(ri))
	for k, i := range ri {
		out[k] = r.Index2([]int{i}, ci, true, false)
	}
	return out
}

// cell is the text of table entry (i, j): a number with r.Digits
// significant digits when set, a string as it is (unquoted).
func (r *Analysis) cell(i, j int) string {
	switch x := r.Rows[i][j].(type) {
	case value.Str:
		return string(x)
	case value.Num:
		if r.Digits > 0 {
			return FormatDigits(float64(x), r.Digits)
		}
	case value.Complex:
		if r.Digits > 0 {
			re, im := real(complex128(x)), imag(complex128(x))
			sign := "+"
			if im < 0 || math.IsInf(im, -1) {
				sign, im = "-", -im
			}
			return FormatDigits(re, r.Digits) + sign + FormatDigits(im, r.Digits) + "i"
		}
	}
	return r.Rows[i][j].String()
}

// FormatDigits writes x with d significant digits in the display style of
// numbers (no padded exponent, no trailing zeros, nan, inf, −0 as 0).
func FormatDigits(x float64, d int) string {
	if math.IsNaN(x) || math.IsInf(x, 0) || x == 0 {
		return value.FormatNum(x)
	}
	s := strconv.FormatFloat(x, 'g', d, 64)
	if i := strings.IndexByte(s, 'e'); i >= 0 {
		mant, exp := s[:i], s[i+1:]
		sign := ""
		if exp[0] == '-' {
			sign = "-"
		}
		s = mant + "e" + sign + strings.TrimLeft(exp[1:], "0")
	}
	return s
}

// cellsVec packs numbers into a real vector, or a complex one if any cell
// is complex; cells holding a string give a list.
func cellsVec(cells []value.Value) value.Value {
	for _, c := range cells {
		if _, ok := c.(value.Str); ok {
			return value.List(append([]value.Value(nil), cells...))
		}
	}
	cplx := false
	for _, c := range cells {
		if _, ok := c.(value.Complex); ok {
			cplx = true
		}
	}
	if cplx {
		z := make([]complex128, len(cells))
		for i, c := range cells {
			switch t := c.(type) {
			case value.Num:
				z[i] = complex(float64(t), 0)
			case value.Complex:
				z[i] = complex128(t)
			default:
				z[i] = complex(math.NaN(), 0)
			}
		}
		return value.ComplexVec(z)
	}
	x := make([]float64, len(cells))
	for i, c := range cells {
		if n, ok := c.(value.Num); ok {
			x[i] = float64(n)
		} else {
			x[i] = math.NaN()
		}
	}
	return value.RealVec(x)
}

// shownRows lists the row indices of the text/plain table, -1 for "...".
func shownRows(n int) []int {
	var out []int
	if n <= MaxRowsShown {
		for i := 0; i < n; i++ {
			out = append(out, i)
		}
		return out
	}
	for i := 0; i < 10; i++ {
		out = append(out, i)
	}
	out = append(out, -1)
	for i := n - 5; i < n; i++ {
		out = append(out, i)
	}
	return out
}

// String is the plain-text report: title, facts, an aligned table (first
// and last rows only beyond MaxRowsShown), method, accuracy and notes.
func (r *Analysis) String() string {
	var sb strings.Builder
	sb.WriteString(r.Title)
	w := 0
	for _, f := range r.Facts {
		w = max(w, len([]rune(f.Label)))
	}
	for _, f := range r.Facts {
		fmt.Fprintf(&sb, "\n  %s%s  %s", f.Label, strings.Repeat(" ", w-len([]rune(f.Label))), f.Value)
	}
	if len(r.Columns) > 0 {
		idx := shownRows(len(r.Rows))
		cells := make([][]string, 0, len(idx)+1)
		cells = append(cells, r.Columns)
		for _, i := range idx {
			row := make([]string, len(r.Columns))
			for j := range row {
				if i < 0 {
					row[j] = "⋮"
				} else {
					row[j] = r.cell(i, j)
				}
			}
			cells = append(cells, row)
		}
		width := make([]int, len(r.Columns))
		for _, row := range cells {
			for j, s := range row {
				width[j] = max(width[j], len([]rune(s)))
			}
		}
		for _, row := range cells {
			sb.WriteString("\n ")
			for j, s := range row {
				sb.WriteString(" " + strings.Repeat(" ", width[j]-len([]rune(s))) + s)
			}
		}
		if len(idx) < len(r.Rows) {
			fmt.Fprintf(&sb, "\n  (%d rows)", len(r.Rows))
		}
	}
	if r.Method != "" {
		sb.WriteString("\n  method: " + r.Method)
	}
	if r.Accuracy != "" {
		sb.WriteString("\n  accuracy: " + r.Accuracy)
	}
	for _, n := range r.Notes {
		sb.WriteString("\n  note: " + n)
	}
	return sb.String()
}

// MIME adds an HTML report and, when the report has a figure, the figure
// as SVG and PNG. The HTML shows the title, the figure, the facts, then the
// table (folded away beyond FoldRows rows), method, accuracy and notes. A
// figure that cannot be drawn is replaced by a note in the HTML.
func (r *Analysis) MIME() map[string]any {
	out := map[string]any{}
	var sb strings.Builder
	e := MathHTML // formulas as TeX for the notebook's math renderer
	sb.WriteString(`<div class="semiflow-analysis"><p><b>` + e(r.Title) + `</b></p>`)
	if r.Figure != nil {
		sb.WriteString(addFigure(r.Figure, out))
	}
	if len(r.Facts) > 0 {
		sb.WriteString(`<table><tbody>`)
		for _, f := range r.Facts {
			sb.WriteString(`<tr><th style="text-align:left">` + e(f.Label) + `</th><td style="text-align:left">` + e(f.Value) + `</td></tr>`)
		}
		sb.WriteString(`</tbody></table>`)
	}
	if len(r.Columns) > 0 {
		var tb strings.Builder
		tb.WriteString(`<table><thead><tr>`)
		for _, c := range r.Columns {
			tb.WriteString(`<th>` + HeadingHTML(c) + `</th>`)
		}
		tb.WriteString(`</tr></thead><tbody>`)
		for i, row := range r.Rows {
			if n := len(r.Rows); n > MaxRowsHTML && i >= MaxRowsHTML-50 && i < n-50 {
				if i == MaxRowsHTML-50 {
					fmt.Fprintf(&tb, `<tr><td colspan="%d">⋮ rows %d to %d of %d not shown (index the result for them)</td></tr>`, len(r.Columns), i, n-51, n)
				}
				continue
			}
			tb.WriteString(`<tr>`)
			for j := range row {
				tb.WriteString(`<td style="text-align:right">` + e(r.cell(i, j)) + `</td>`)
			}
			tb.WriteString(`</tr>`)
		}
		tb.WriteString(`</tbody></table>`)
		sb.WriteString(fold(tb.String(), len(r.Rows), r.Columns))
	}
	if r.Method != "" {
		sb.WriteString(`<p><i>method:</i> ` + e(r.Method) + `</p>`)
	}
	if r.Accuracy != "" {
		sb.WriteString(`<p><i>accuracy:</i> ` + e(r.Accuracy) + `</p>`)
	}
	for _, n := range r.Notes {
		sb.WriteString(`<p><i>note:</i> ` + e(n) + `</p>`)
	}
	sb.WriteString(`</div>`)
	out["text/html"] = sb.String()
	return out
}

// Quantity is a computed number with what it is and how it was computed:
// α(A), ω(A), a resolvent norm, a Kreiss constant. It takes part in
// arithmetic as its number (q + 1, 2*q, -q); q[0] is the plain number, for
// comparisons and for builtins that need a number.
type Quantity struct {
	X        value.Value // value.Num or value.Complex
	Symbol   string      // e.g. "α(A)"
	What     string      // e.g. "spectral abscissa"
	Where    string      // optional: where a supremum was attained
	Method   string
	Accuracy string
}

func (q *Quantity) Type() string { return "quantity" }

// String is "symbol = value" followed by what it is, where, method and
// accuracy, each on its own line.
func (q *Quantity) String() string {
	s := q.Symbol + " = " + q.X.String()
	if q.What != "" {
		s += "  (" + q.What + ")"
	}
	if q.Where != "" {
		s += "\n  " + q.Where
	}
	if q.Method != "" {
		s += "\n  method: " + q.Method
	}
	if q.Accuracy != "" {
		s += "\n  accuracy: " + q.Accuracy
	}
	return s
}

// Len is 1: q[0] is the number.
func (q *Quantity) Len() int { return 1 }

// Index returns the number.
func (q *Quantity) Index(int) value.Value { return q.X }

// Binary applies op to the number.
func (q *Quantity) Binary(op syntax.Token, y value.Value, right bool) (value.Value, error) {
	if p, ok := y.(*Quantity); ok {
		y = p.X
	}
	if right {
		return value.Binary(op, y, q.X)
	}
	return value.Binary(op, q.X, y)
}

// Unary applies - or + to the number.
func (q *Quantity) Unary(op syntax.Token) (value.Value, error) { return value.Unary(op, q.X) }

// Record is the report's computation record for the display metadata and
// its application/json form: kind, title, method, accuracy, notes, the
// facts by label, and the table (at most MaxRowsHTML rows; complex entries
// as {"re", "im"}, nan and ±inf as null).
func (r *Analysis) Record() map[string]any {
	facts := map[string]any{}
	for _, f := range r.Facts {
		facts[f.Label] = f.Value
	}
	n := min(len(r.Rows), MaxRowsHTML)
	rows := make([][]any, n)
	for i := range n {
		row := make([]any, len(r.Rows[i]))
		for j, v := range r.Rows[i] {
			switch x := v.(type) {
			case value.Num:
				row[j] = finiteOrNil(float64(x))
			case value.Complex:
				row[j] = map[string]any{"re": finiteOrNil(real(complex128(x))), "im": finiteOrNil(imag(complex128(x)))}
			default:
				row[j] = v.String()
			}
		}
		rows[i] = row
	}
	return map[string]any{
		"kind":       r.Kind,
		"title":      r.Title,
		"method":     r.Method,
		"accuracy":   r.Accuracy,
		"notes":      append([]string(nil), r.Notes...),
		"facts":      facts,
		"columns":    append([]string(nil), r.Columns...),
		"rows":       rows,
		"rows_total": len(r.Rows),
	}
}

// MIME adds the quantity as Markdown (text/markdown), which a notebook
// shows with its formulas typeset: the symbol and value as one formula,
// what it is, where it was attained, the method and the accuracy, each on a
// line. text/plain keeps the Unicode form (String).
func (q *Quantity) MIME() map[string]any {
	var sb strings.Builder
	sb.WriteString(MathMarkdown(q.Symbol + " = " + q.X.String()))
	if q.What != "" {
		sb.WriteString(" (" + MathMarkdown(q.What) + ")")
	}
	for _, l := range []struct{ label, text string }{{"", q.Where}, {"method", q.Method}, {"accuracy", q.Accuracy}} {
		if l.text == "" {
			continue
		}
		sb.WriteString("  \n")
		if l.label != "" {
			sb.WriteString("*" + l.label + ":* ")
		}
		sb.WriteString(MathMarkdown(l.text))
	}
	return map[string]any{"text/markdown": sb.String()}
}

// Record is the quantity's computation record: its value (a complex value as
// {"re", "im"}, nan and ±inf as null), what it is, where it was attained,
// the method and the accuracy.
func (q *Quantity) Record() map[string]any {
	r := map[string]any{"symbol": q.Symbol, "what": q.What, "method": q.Method, "accuracy": q.Accuracy}
	switch x := q.X.(type) {
	case value.Num:
		r["value"] = finiteOrNil(float64(x))
	case value.Complex:
		r["value"] = map[string]any{"re": finiteOrNil(real(complex128(x))), "im": finiteOrNil(imag(complex128(x)))}
	}
	if q.Where != "" {
		r["where"] = q.Where
	}
	return r
}

package objects

import (
	"strings"
	"unicode/utf8"
)

// textTable is a small two-dimensional table rendered as aligned plain text and
// as HTML.
type textTable struct {
	caption string
	head    []string
	rows    [][]string
	left    bool // every column left-aligned (for label–value tables)
}

func (t *textTable) add(cells ...string) { t.rows = append(t.rows, cells) }

// text renders the table with columns padded to a common width, the first
// column left-aligned and the others right-aligned.
func (t *textTable) text() string {
	ncol := len(t.head)
	for _, r := range t.rows {
		if len(r) > ncol {
			ncol = len(r)
		}
	}
	width := make([]int, ncol)
	all := append([][]string{t.head}, t.rows...)
	for _, r := range all {
		for j, c := range r {
			if n := utf8.RuneCountInString(c); n > width[j] {
				width[j] = n
			}
		}
	}
	var sb strings.Builder
	if t.caption != "" {
		sb.WriteString(t.caption + "\n")
	}
	for i, r := range all {
		if i == 0 && len(r) == 0 {
			continue
		}
		var line strings.Builder
		line.WriteString("  ")
		for j, c := range r {
			pad := strings.Repeat(" ", width[j]-utf8.RuneCountInString(c))
			if j > 0 {
				line.WriteString("  ")
			}
			if j == 0 || t.left {
				line.WriteString(c + pad)
			} else {
				line.WriteString(pad + c)
			}
		}
		sb.WriteString(strings.TrimRight(line.String(), " ") + "\n")
	}
	return strings.TrimRight(sb.String(), "\n")
}

// html renders the table as an HTML table, formulas as TeX (MathHTML).
func (t *textTable) html() string {
	var sb strings.Builder
	sb.WriteString("<table>")
	if t.caption != "" {
		sb.WriteString("<caption>" + MathHTML(t.caption) + "</caption>")
	}
	if len(t.head) > 0 {
		sb.WriteString("<thead><tr>")
		for _, c := range t.head {
			sb.WriteString("<th>" + HeadingHTML(c) + "</th>")
		}
		sb.WriteString("</tr></thead>")
	}
	sb.WriteString("<tbody>")
	for _, r := range t.rows {
		sb.WriteString("<tr>")
		for j, c := range r {
			tag := "td"
			if j == 0 && len(t.head) == 0 {
				tag = "th"
			}
			sb.WriteString("<" + tag + ">" + MathHTML(c) + "</" + tag + ">")
		}
		sb.WriteString("</tr>")
	}
	sb.WriteString("</tbody></table>")
	return sb.String()
}

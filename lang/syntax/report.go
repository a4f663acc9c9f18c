package syntax

import (
	"fmt"
	"strings"
)

// Style colours the parts of an error report with ANSI SGR parameters
// ("1;31" is bold red); the zero Style writes plain text.
type Style struct {
	Badge   string // the class as a badge before the first line ("" for none)
	Where   string // the file:line:col of the report's first line
	Message string // the message after it
	Gutter  string // line numbers and the rule beside the excerpt
	Caret   string // the carets under the span, and the class after them
	Frame   string // a call site's "inside f, called at …" line
}

// Plain is the style of reports on a terminal and in golden files.
var Plain = Style{}

// Coloured is the style of reports in a notebook, whose error outputs
// render ANSI colours: the class as a badge in bold white on deep red
// (24-bit colour) before the place, so an error stands out from printed
// output; the place in cyan, the message bold, the carets and the class in
// bold red, the call sites in magenta, the gutter in blue.
var Coloured = Style{Badge: "1;38;2;255;255;255;48;2;176;32;48", Where: "36", Message: "1", Gutter: "34", Caret: "1;31", Frame: "35"}

func (s Style) paint(sgr, text string) string {
	if sgr == "" || text == "" {
		return text
	}
	return "\x1b[" + sgr + "m" + text + "\x1b[0m"
}

// Report is the lines that show one error of class at [pos, end):
//
//	cell:4:6: unknown name kapa; did you mean kappa?
//	  4 │ rate(kapa)
//	    │      ^^^^ unknown name
//
// the position and message, then the source line numbered in a gutter and
// the carets under the span, labelled with the class. A style with a Badge
// puts the class before the first line too.
func (f *File) Report(st Style, class string, pos, end Pos, msg string) []string {
	head := st.paint(st.Where, f.Position(pos).String()+":") + " " + st.paint(st.Message, ClipMessage(msg))
	if st.Badge != "" && class != "" {
		head = st.paint(st.Badge, " "+class+" ") + " " + head
	}
	return append([]string{head}, f.numbered(st, pos, end, class)...)
}

// CallSite is the lines that show the call of fn at [pos, end) through
// which an error was reached, with repeat further identical calls folded:
//
//	inside f, called at cell:2:1
//	  2 │ f(y) * 2
//	    │ ^^^^
func (f *File) CallSite(st Style, fn string, pos, end Pos, repeat int) []string {
	lines := []string{st.paint(st.Frame, fmt.Sprintf("inside %s, called at %s", Shorten(fn, QuoteWidth), f.Position(pos)))}
	lines = append(lines, f.numbered(st, pos, end, "")...)
	if repeat > 0 {
		lines = append(lines, st.paint(st.Frame, fmt.Sprintf("(the same call %d more times)", repeat)))
	}
	return lines
}

// numbered is Excerpt with the line number and a rule in a gutter, and
// label after the carets.
func (f *File) numbered(st Style, pos, end Pos, label string) []string {
	ex := f.Excerpt(pos, end)
	num := fmt.Sprint(f.Position(pos).Line)
	pad := strings.Repeat(" ", len(num))
	caret := strings.TrimRight(ex[1], " \t")
	lead := caret[:len(caret)-len(strings.TrimLeft(caret, " \t"))]
	marks := caret[len(lead):]
	if label != "" {
		marks += " " + label
	}
	return []string{
		st.paint(st.Gutter, "  "+num+" │") + " " + ex[0],
		st.paint(st.Gutter, "  "+pad+" │") + " " + lead + st.paint(st.Caret, marks),
	}
}

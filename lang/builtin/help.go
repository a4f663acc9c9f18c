package builtin

import (
	"fmt"
	"html"
	"strings"
	"unicode/utf8"

	"semiflow/lang/objects"
	"semiflow/lang/value"
)

// helpGroup is a heading of help() and the families under it.
type helpGroup struct {
	Title string
	Fams  [][]*Builtin
}

// helpGroups arranges the families for help(), in the order a reader meets
// them. A builtin of a family not listed here is shown under "Other"
// (TestHelpListsEveryBuiltin asks that none is). It is set in init: help's
// own entry is in coreFamily, so a variable initialiser would be a cycle.
var helpGroups []helpGroup

func init() {
	helpGroups = []helpGroup{
		{"Constants", [][]*Builtin{constFamily}},
		{"Numbers, entry by entry", [][]*Builtin{elementFamily}},
		{"Vectors and matrices", [][]*Builtin{vectorFamily}},
		{"Grids and grid functions", [][]*Builtin{gridFamily, stretchedFamily}},
		{"Operators", [][]*Builtin{operatorFamily, blockFamily}},
		{"Mass matrices and second-order systems", [][]*Builtin{structureFamily}},
		{"Evolution u(t) = e^{tA} u0", [][]*Builtin{propagateFamily, eventFamily}},
		{"Steady states and linearisation", [][]*Builtin{steadyFamily}},
		{"Stability: spectra, numerical range, resolvents, growth", [][]*Builtin{stabilityFamily}},
		{"Data, tables and files", [][]*Builtin{csvFamily, sweepFamily, figureFamily}},
		{"Figures and tables of your own data", [][]*Builtin{plotFamily}},
		{"Output, help and choice", [][]*Builtin{coreFamily}},
	}
}

// helpWidth is the width of a line of help()'s text listing.
const helpWidth = 100

// Listing is help()'s value: every builtin of a table under the heading of
// its family, with the first sentence of its documentation. Its text form
// is one line per builtin (cut at helpWidth with "…"); its HTML form a
// table with a row per family heading.
type Listing struct {
	Groups []ListingGroup
}

// ListingGroup is one heading of a Listing and its builtins.
type ListingGroup struct {
	Title    string
	Builtins []*Builtin
}

// NewListing groups the builtins of t by helpGroups, in table order within
// a group; builtins in no group come last under "Other".
func NewListing(t *Table) *Listing {
	placed := map[string]bool{}
	l := &Listing{}
	for _, g := range helpGroups {
		in := map[string]bool{}
		for _, f := range g.Fams {
			for _, b := range f {
				in[b.Name] = true
			}
		}
		lg := ListingGroup{Title: g.Title}
		for _, b := range t.All() {
			if in[b.Name] && !placed[b.Name] {
				lg.Builtins = append(lg.Builtins, b)
				placed[b.Name] = true
			}
		}
		if len(lg.Builtins) > 0 {
			l.Groups = append(l.Groups, lg)
		}
	}
	other := ListingGroup{Title: "Other"}
	for _, b := range t.All() {
		if !placed[b.Name] {
			other.Builtins = append(other.Builtins, b)
		}
	}
	if len(other.Builtins) > 0 {
		l.Groups = append(l.Groups, other)
	}
	return l
}

// Type is "help".
func (l *Listing) Type() string { return "help" }

// String lists the builtins by family:
//
//	Builtins by family; help(name) shows one in full.
//
//	Grids and grid functions
//	  interval   A 1-D grid on [a, b] …
func (l *Listing) String() string {
	var sb strings.Builder
	sb.WriteString("Builtins by family; help(name) shows one in full.\n")
	for _, g := range l.Groups {
		width := 0
		for _, b := range g.Builtins {
			width = max(width, utf8.RuneCountInString(b.Name))
		}
		sb.WriteString("\n" + g.Title + "\n")
		for _, b := range g.Builtins {
			line := fmt.Sprintf("  %-*s  %s", width, b.Name, b.Summary())
			sb.WriteString(cutLine(line, helpWidth) + "\n")
		}
	}
	return strings.TrimRight(sb.String(), "\n")
}

// cutLine shortens s to at most width code points, ending in "…" at a
// word boundary when it was cut.
func cutLine(s string, width int) string {
	if utf8.RuneCountInString(s) <= width {
		return s
	}
	r := []rune(s)[:width-1]
	cut := string(r)
	if i := strings.LastIndexByte(cut, ' '); i > width/2 {
		cut = cut[:i]
	}
	return strings.TrimRight(cut, " ,;:") + "…"
}

// MIME is an HTML table: a heading row per family, then a row per builtin
// with its call form and the first sentence of its documentation, its
// formulas as TeX for the notebook (objects.MathHTML).
func (l *Listing) MIME() map[string]any {
	var sb strings.Builder
	sb.WriteString(`<table class="semiflow-help"><caption>Builtins by family; help(name) shows one in full</caption><tbody>`)
	for _, g := range l.Groups {
		sb.WriteString(`<tr><th colspan="2" style="text-align:left">` + objects.MathHTML(g.Title) + `</th></tr>`)
		for _, b := range g.Builtins {
			sb.WriteString(`<tr><td style="text-align:left"><code>` + html.EscapeString(b.Signature()) + `</code></td><td style="text-align:left">` +
				objects.MathHTML(b.Summary()) + `</td></tr>`)
		}
	}
	sb.WriteString(`</tbody></table>`)
	return map[string]any{"text/html": sb.String()}
}

var _ value.Displayer = (*Listing)(nil)

// Package builtin is the table of predefined names of the Semiflow
// language. Each entry carries its signature, one paragraph of
// documentation stating the mathematics, examples that must run, and its
// implementation. The table is the single source for help, completion,
// inspection and the generated reference page (REFERENCE.md).
//
// To add a builtin, add an entry to a family slice (one file per family,
// e.g. vector.go) and, for a new family, list the slice in families below.
package builtin

import (
	"fmt"
	"sort"
	"strings"

	"semiflow/lang/eval"
	"semiflow/lang/value"
)

// families lists every family of builtins: the one place they are
// registered.
var families = [][]*Builtin{
	constFamily,
	coreFamily,
	elementFamily,
	vectorFamily,
	objectFamily,
	stabilityFamily,
	figureFamily,
	plotFamily,
	blockFamily,
	csvFamily,
	sweepFamily,
	steadyFamily,
	structureFamily,
	eventFamily,
}

// Example is code that must run in a fresh session, and the text/plain of
// the value it shows ("" when it shows nothing). Output written by print is
// not part of Result.
type Example struct {
	Code   string
	Result string
}

// Builtin is one predefined name: a function (Impl set) or a constant
// (Const set).
type Builtin struct {
	Name     string
	Params   []value.Param
	Doc      string
	Examples []Example
	Impl     func(c *eval.Call) (value.Value, error)
	Const    value.Value
}

// Function is the function value of a builtin; it implements eval.Native.
type Function struct{ B *Builtin }

// Type is "function".
func (f Function) Type() string { return "function" }

// String is "builtin" followed by the signature.
func (f Function) String() string { return "builtin " + f.B.Signature() }

// Name returns the builtin's name.
func (f Function) Name() string { return f.B.Name }

// Params returns the signature's parameters.
func (f Function) Params() []value.Param { return f.B.Params }

// CallNative runs the implementation; its error is classified by cause
// (classify).
func (f Function) CallNative(c *eval.Call) (value.Value, error) {
	v, err := f.B.Impl(c)
	return v, classify(f.B.Name, err)
}

// Signature formats the call form, name(a, b, n=50), or the name alone for
// a constant.
func (b *Builtin) Signature() string {
	if b.Const != nil {
		return b.Name
	}
	return eval.SignatureText(b.Name, b.Params)
}

// Header is the signature, or for a constant "name = value".
func (b *Builtin) Header() string {
	if b.Const != nil {
		return b.Name + " = " + b.Const.String()
	}
	return b.Signature()
}

// Summary is the first sentence of the documentation.
func (b *Builtin) Summary() string {
	d := b.Doc
	if i := strings.Index(d, ". "); i >= 0 {
		d = d[:i+1]
	}
	return d
}

// Help is the text shown by help(name): the signature, the documentation,
// the parameters and the examples with their results.
func (b *Builtin) Help() string {
	var sb strings.Builder
	sb.WriteString(b.Header())
	sb.WriteString("\n\n" + wrap(b.Doc, 76) + "\n")
	for i, p := range b.Params {
		if i == 0 {
			sb.WriteString("\n")
		}
		fmt.Fprintf(&sb, "  %-8s %s\n", p.Name, p.Doc)
	}
	if len(b.Examples) > 0 {
		sb.WriteString("\nExamples:\n")
		for _, ex := range b.Examples {
			sb.WriteString("  " + ex.Code + "\n")
			if ex.Result != "" {
				for _, l := range strings.Split(ex.Result, "\n") {
					sb.WriteString("  => " + l + "\n")
				}
			}
		}
	}
	return strings.TrimRight(sb.String(), "\n") + "\n"
}

func wrap(s string, width int) string {
	var lines []string
	line := ""
	for _, w := range strings.Fields(s) {
		if line != "" && len(line)+1+len(w) > width {
			lines = append(lines, line)
			line = w
			continue
		}
		if line != "" {
			line += " "
		}
		line += w
	}
	return strings.Join(append(lines, line), "\n")
}

// Table is a set of builtins by name. It implements eval.Builtins and
// eval.Renamer.
type Table struct {
	byName  map[string]*Builtin
	names   []string
	renamed map[string]string // former name → present name
}

// New returns the table of the given families. It panics if a name occurs
// twice or an entry has neither Impl nor Const.
func New(fams ...[]*Builtin) *Table {
	t := &Table{byName: map[string]*Builtin{}}
	for _, f := range fams {
		for _, b := range f {
			if _, dup := t.byName[b.Name]; dup {
				panic("builtin: duplicate name " + b.Name)
			}
			if (b.Impl == nil) == (b.Const == nil) {
				panic("builtin: " + b.Name + " needs exactly one of Impl and Const")
			}
			t.byName[b.Name] = b
			t.names = append(t.names, b.Name)
		}
	}
	sort.Strings(t.names)
	t.renamed = map[string]string{}
	for old, now := range Renamed {
		if b, ok := t.byName[now]; ok {
			if _, dup := t.byName[old]; dup {
				panic("builtin: former name " + old + " is a builtin")
			}
			t.byName[old] = b
			t.renamed[old] = now
		}
	}
	return t
}

// Renamed returns the present name of a builtin's former name.
func (t *Table) Renamed(name string) (string, bool) {
	now, ok := t.renamed[name]
	return now, ok
}

// Default returns a new table of all families.
func Default() *Table { return New(families...) }

// Lookup returns the value a name denotes: the constant, or the function.
func (t *Table) Lookup(name string) (value.Value, bool) {
	b, ok := t.byName[name]
	if !ok {
		return nil, false
	}
	if b.Const != nil {
		return b.Const, true
	}
	return Function{b}, true
}

// Get returns the entry for name (a present or a former one), or nil.
func (t *Table) Get(name string) *Builtin { return t.byName[name] }

// Names returns all names, sorted.
func (t *Table) Names() []string { return t.names }

// All returns all entries sorted by name.
func (t *Table) All() []*Builtin {
	out := make([]*Builtin, len(t.names))
	for i, n := range t.names {
		out[i] = t.byName[n]
	}
	return out
}

// Reference returns the reference page (markdown) generated from the table.
func (t *Table) Reference() string {
	var sb strings.Builder
	sb.WriteString("# Semiflow builtin reference\n\nGenerated from the builtin table (lang/builtin); do not edit by hand.\n")
	for _, b := range t.All() {
		fmt.Fprintf(&sb, "\n## `%s`\n\n%s\n", b.Signature(), b.Doc)
		for _, p := range b.Params {
			if p.Doc != "" {
				fmt.Fprintf(&sb, "\n- `%s`: %s", p.Name, p.Doc)
			}
		}
		if len(b.Examples) > 0 {
			sb.WriteString("\n\n```\n")
			for _, ex := range b.Examples {
				sb.WriteString(ex.Code + "\n")
				if ex.Result != "" {
					for _, l := range strings.Split(ex.Result, "\n") {
						sb.WriteString("=> " + l + "\n")
					}
				}
			}
			sb.WriteString("```\n")
		}
	}
	return sb.String()
}

// Parameter constructors for the tables.

func req(name, doc string) value.Param { return value.Param{Name: name, Doc: doc} }

func opt(name string, def value.Value, doc string) value.Param {
	return value.Param{Name: name, Default: def, Doc: doc}
}

func rest(name, doc string) value.Param { return value.Param{Name: name, Variadic: true, Doc: doc} }

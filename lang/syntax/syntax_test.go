package syntax

import (
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"unicode/utf8"
)

// update is accepted so that `go test ./lang/... -update` works in every
// package; this package has no generated files.
var _ = flag.Bool("update", false, "rewrite golden files (unused here)")

func scanAll(src string) ([]string, ErrorList) {
	f := NewFile("t", src)
	var errs ErrorList
	s := NewScanner(f, &errs)
	var out []string
	for {
		it := s.Next()
		if it.Tok == EOF {
			break
		}
		switch it.Tok {
		case IDENT, NUMBER, IMAG:
			out = append(out, it.Tok.String()+":"+it.Lit)
		case STRING:
			out = append(out, "string:"+fmt.Sprintf("%q", it.Lit))
		case NEWLINE:
			out = append(out, "NL")
		default:
			out = append(out, it.Tok.String())
		}
	}
	return out, errs
}

func TestScanner(t *testing.T) {
	tests := []struct {
		src  string
		want string
		err  string
	}{
		{"n = 64", "name:n = number:64", ""},
		{"1.5e-3 2E+4 7e 3", "number:1.5e-3 number:2E+4", "followed by"},
		{"3i 1e-3i 2.5i", "imaginary number:3i imaginary number:1e-3i imaginary number:2.5i", ""},
		{"0..1 by 0.25", "number:0 .. number:1 by number:0.25", ""},
		{"1.", "number:1.", "needs a digit after the point"},
		{"a.b x -> y ↦ z", "name:a . name:b name:x -> name:y -> name:z", ""},
		{"where with", "where with", ""},
		{`"a\n\t\"\\"`, `string:"a\n\t\"\\"`, ""},
		{"a # comment\nb", "name:a NL name:b", ""},
		{"(1,\n2)\n", "( number:1 , number:2 ) NL", ""},
		{"== != <= >= < > = ^ % | ;", "== != <= >= < > = ^ % | ;", ""},
		{"not a and b or c", "not name:a and name:b or name:c", ""},
		{"λ = 2", "name:λ = number:2", ""},
		{"x_1 _y", "name:x_1 name:_y", ""},
		{"\"open", `string:"open"`, "unterminated string"},
		{"\x00", "", "control character"},
		{"\xff", "", "invalid UTF-8"},
		{"2in", "", "followed by \"in\""},
		{"a.*b", "name:a * name:b", "hadamard"},
	}
	for _, tt := range tests {
		toks, errs := scanAll(tt.src)
		got := strings.Join(toks, " ")
		if tt.err == "" && got != tt.want {
			t.Errorf("scan %q = %q, want %q", tt.src, got, tt.want)
		}
		if tt.err != "" && tt.want != "" && !strings.HasPrefix(got, tt.want) {
			t.Errorf("scan %q = %q, want prefix %q", tt.src, got, tt.want)
		}
		switch {
		case tt.err == "" && len(errs) > 0:
			t.Errorf("scan %q: unexpected error %v", tt.src, errs)
		case tt.err != "" && (len(errs) == 0 || !strings.Contains(errs.Error(), tt.err)):
			t.Errorf("scan %q: error %v, want one containing %q", tt.src, errs, tt.err)
		}
	}
}

// tree renders an expression as a fully parenthesised string.
func tree(x Node) string {
	switch e := x.(type) {
	case *Ident:
		return e.Name
	case *NumberLit:
		return e.Raw
	case *StringLit:
		return fmt.Sprintf("%q", e.Value)
	case *ParenExpr:
		return tree(e.X)
	case *UnaryExpr:
		return "(" + e.Op.String() + " " + tree(e.X) + ")"
	case *BinaryExpr:
		return "(" + tree(e.X) + " " + e.Op.String() + " " + tree(e.Y) + ")"
	case *RangeExpr:
		s := "(" + tree(e.Lo) + " .. " + tree(e.Hi)
		if e.Step != nil {
			s += " by " + tree(e.Step)
		}
		return s + ")"
	case *VectorLit:
		parts := make([]string, len(e.Elems))
		for i, x := range e.Elems {
			parts[i] = tree(x)
		}
		return "[" + strings.Join(parts, ", ") + "]"
	case *MatrixLit:
		var rows []string
		for _, r := range e.Rows {
			parts := make([]string, len(r))
			for i, x := range r {
				parts[i] = tree(x)
			}
			rows = append(rows, strings.Join(parts, ", "))
		}
		return "{" + strings.Join(rows, " | ") + "}"
	case *CallExpr:
		parts := make([]string, len(e.Args))
		for i, a := range e.Args {
			parts[i] = tree(a.Value)
			if a.Name != nil {
				parts[i] = a.Name.Name + "=" + parts[i]
			}
		}
		return tree(e.Fun) + "(" + strings.Join(parts, ", ") + ")"
	case *IndexExpr:
		parts := make([]string, len(e.Indices))
		for i, x := range e.Indices {
			parts[i] = tree(x)
		}
		return tree(e.X) + "[" + strings.Join(parts, ", ") + "]"
	case *ExprStmt:
		return tree(e.X)
	case *AssignStmt:
		return "(set " + e.Name.Name + " " + tree(e.Value) + ")"
	case *FuncDef:
		var ps []string
		for _, p := range e.Params {
			s := p.Name.Name
			if p.Default != nil {
				s += "=" + tree(p.Default)
			}
			ps = append(ps, s)
		}
		return "(def " + e.Name.Name + "(" + strings.Join(ps, ", ") + ") " + tree(e.Body) + ")"
	case *FuncLit:
		var ps []string
		for _, p := range e.Params {
			ps = append(ps, p.Name.Name)
		}
		return "(fn(" + strings.Join(ps, ", ") + ") " + tree(e.Body) + ")"
	case *WhereExpr:
		var bs []string
		for _, b := range e.Binds {
			bs = append(bs, b.Name.Name+"="+tree(b.Value))
		}
		return "(" + tree(e.X) + " where " + strings.Join(bs, ", ") + ")"
	case *WithExpr:
		parts := make([]string, len(e.Indices))
		for i, x := range e.Indices {
			parts[i] = tree(x)
		}
		return "(" + tree(e.X) + " with [" + strings.Join(parts, ", ") + "] = " + tree(e.Value) + ")"
	case *FieldExpr:
		return tree(e.X) + "." + e.Name.Name
	case *BadExpr, *BadStmt:
		return "BAD"
	}
	return fmt.Sprintf("%T", x)
}

func TestParser(t *testing.T) {
	tests := []struct{ src, want string }{
		{"1 + 2 * 3", "(1 + (2 * 3))"},
		{"1 - 2 - 3", "((1 - 2) - 3)"},
		{"2^3^2", "(2 ^ (3 ^ 2))"},
		{"-a^2", "(- (a ^ 2))"},
		{"2^-1", "(2 ^ (- 1))"},
		{"-2 * 3", "((- 2) * 3)"},
		{"a % b / c", "((a % b) / c)"},
		{"not a and b or c", "(((not a) and b) or c)"},
		{"a or b and c", "(a or (b and c))"},
		{"not x < 1", "(not (x < 1))"},
		{"1 + 2 < 3 * 4", "((1 + 2) < (3 * 4))"},
		{"0 .. 1 by 0.25", "(0 .. 1 by 0.25)"},
		{"a + 1 .. b - 1", "((a + 1) .. (b - 1))"},
		{"x < 0 .. 2", "(x < (0 .. 2))"},
		{"f(x)[0]", "f(x)[0]"},
		{"M[0, 1]", "M[0, 1]"},
		{"v[1 .. -1]", "v[(1 .. (- 1))]"},
		{"g(3, k=3)", "g(3, k=3)"},
		{"[1, 2, 3]", "[1, 2, 3]"},
		{"[]", "[]"},
		{"[1,]", "[1]"},
		{"{1, 2 | 3, 4}", "{1, 2 | 3, 4}"},
		{"z = 2 + 3i", "(set z (2 + 3i))"},
		{"f(x) = exp(-x^2)", "(def f(x) exp((- (x ^ 2))))"},
		{"g(x, k=2) = x^k", "(def g(x, k=2) (x ^ k))"},
		{"(\n1 +\n2 )", "(1 + 2)"},
		{"a; b", "a ; b"},
		{"a\n\n b\n", "a ; b"},
		{"s = \"x\"", "(set s \"x\")"},
		{"x -> x + 1", "(fn(x) (x + 1))"},
		{"(x, t) ↦ x*t", "(fn(x, t) (x * t))"},
		{"() -> 1", "(fn() 1)"},
		{"(x) -> x", "(fn(x) x)"},
		{"x -> y -> x + y", "(fn(x) (fn(y) (x + y)))"},
		{"map(v, x -> x^2)", "map(v, (fn(x) (x ^ 2)))"},
		{"propagate(A, u, t, forcing=t -> sin(t), tol=1)", "propagate(A, u, t, forcing=(fn(t) sin(t)), tol=1)"},
		{"f(x) = a*x where (a = 2, b = a)", "(def f(x) ((a * x) where a=2, b=a))"},
		{"x -> a*x where (a = x)", "(fn(x) ((a * x) where a=x))"},
		{"v with [0] = 1 + 2", "(v with [0] = (1 + 2))"},
		{"v with [0] = 1 with [1] = 2", "((v with [0] = 1) with [1] = 2)"},
		{"M with [0, 1 .. 2] = 0", "(M with [0, (1 .. 2)] = 0)"},
		{"r.peak * 2", "(r.peak * 2)"},
		{"f(x).a.b[0]", "f(x).a.b[0]"},
	}
	for _, tt := range tests {
		s, err := Parse("t", tt.src)
		if err != nil {
			t.Errorf("Parse(%q): %v", tt.src, err)
			continue
		}
		var parts []string
		for _, st := range s.Stmts {
			parts = append(parts, tree(st))
		}
		if got := strings.Join(parts, " ; "); got != tt.want {
			t.Errorf("Parse(%q) = %s, want %s", tt.src, got, tt.want)
		}
	}
}

func TestParseErrors(t *testing.T) {
	tests := []struct {
		src   string
		count int
		first string // line:col of the first error
	}{
		{"1 +", 1, "1:4"},
		{"x = ((1)", 1, "1:9"},
		{"a ? b\nc ? d\n", 2, "1:3"},
		// Eleven bad lines: the list stops at MaxErrors.
		{strings.Repeat("1 +\n", 11), MaxErrors, "1:4"},
		{"f(1) = 2\n[1] = 3", 2, "1:3"},
		{strings.Repeat("(", 300) + "1", 1, "1:201"},
		{strings.Repeat("-", 300) + "1", 1, "1:202"},
		{strings.Repeat("2^", 300) + "1", 1, "1:403"},
		{"(a, b) + 1", 1, "1:1"},
		{"x + 1 -> x", 1, "1:1"},
		{"(x, 2) -> x", 1, "1:5"},
		{"(x, x) -> x", 1, "1:5"},
		{"a where b", 1, "1:9"},
		{"a where ()", 1, "1:9"},
		{"a where (b = 1, b = 2)", 1, "1:17"},
		{"v with 0 = 1", 1, "1:8"},
		{"v with [0] 1", 1, "1:12"},
		{"r.1", 1, "1:3"},
		{"x = 1.", 1, "1:5"},
		{strings.Repeat("x -> ", 300) + "1", 1, "1:1006"},
		// Chains of named parts, updates and local definitions deepen the
		// tree one level a link and stop at MaxDepth.
		{"r" + strings.Repeat(".a", 1200), 1, "1:2000"},
		{"v" + strings.Repeat(" with [0] = 1", 1200), 1, "1:12990"},
		{"x" + strings.Repeat(" where (a = 1)", 1200), 1, "1:13989"},
	}
	for _, tt := range tests {
		s, err := Parse("t", tt.src)
		if s == nil {
			t.Fatalf("Parse(%q) returned a nil script", tt.src)
		}
		list, ok := err.(ErrorList)
		if !ok {
			t.Errorf("Parse(%q) error = %v, want an ErrorList", tt.src, err)
			continue
		}
		if len(list) != tt.count {
			t.Errorf("Parse(%q): %d errors, want %d: %v", tt.src, len(list), tt.count, list)
		}
		p := list[0].File.Position(list[0].Pos)
		if got := fmt.Sprintf("%d:%d", p.Line, p.Column); got != tt.first {
			t.Errorf("Parse(%q): first error at %s, want %s (%v)", tt.src, got, tt.first, list[0])
		}
		for i := 1; i < len(list); i++ {
			if list[i].Pos <= list[i-1].Pos {
				t.Errorf("Parse(%q): errors not sorted and unique: %v", tt.src, list)
			}
		}
	}
}

func TestPositionAndExcerpt(t *testing.T) {
	f := NewFile("cell", "x = 1\nyé = zz + 2\n\tq")
	p := f.Position(Pos(strings.Index(f.Src, "zz")))
	if p.String() != "cell:2:6" {
		t.Errorf("position = %s, want cell:2:6 (columns count code points)", p)
	}
	start := Pos(strings.Index(f.Src, "zz"))
	got := f.Excerpt(start, start+2)
	want := []string{"yé = zz + 2", "     ^^"}
	if strings.Join(got, "|") != strings.Join(want, "|") {
		t.Errorf("excerpt = %q, want %q", got, want)
	}
	q := Pos(strings.Index(f.Src, "q"))
	if got := f.Excerpt(q, q+1); got[1] != "\t^" {
		t.Errorf("excerpt keeps tabs: %q", got)
	}
	if p := f.Position(Pos(len(f.Src) + 10)); p.Line != 3 {
		t.Errorf("clamped position = %v", p)
	}
}

// goldenInputs returns the input lines of the golden scripts, block by
// block, for the fuzz corpus.
func goldenInputs(tb testing.TB) []string {
	files, _ := filepath.Glob("../../testdata/lang/*.sf")
	var out []string
	for _, path := range files {
		raw, err := os.ReadFile(path)
		if err != nil {
			tb.Fatal(err)
		}
		var cur []string
		for _, l := range strings.Split(string(raw), "\n") {
			isOut := len(l) >= 2 && strings.Contains("=>-> !>~>!!", l[:2])
			if strings.TrimSpace(l) == "" || isOut {
				if len(cur) > 0 {
					out = append(out, strings.Join(cur, "\n"))
					cur = nil
				}
				continue
			}
			cur = append(cur, l)
		}
		if len(cur) > 0 {
			out = append(out, strings.Join(cur, "\n"))
		}
	}
	return out
}

// checkPositions asserts that every error lies inside the input and
// resolves to a valid line and column.
func checkPositions(t *testing.T, src string, errs ErrorList) {
	for _, e := range errs {
		if e.Pos < 0 || int(e.Pos) > len(src) || e.End < e.Pos || int(e.End) > len(src) {
			t.Fatalf("error %q spans [%d, %d) outside input of length %d", e.Msg, e.Pos, e.End, len(src))
		}
		p := e.File.Position(e.Pos)
		if p.Line < 1 || p.Line > e.File.LineCount() || p.Column < 1 ||
			p.Column > utf8.RuneCountInString(rawLine(e.File, p.Line))+1 {
			t.Fatalf("error %q at invalid position %v", e.Msg, p)
		}
	}
	if len(errs) > MaxErrors {
		t.Fatalf("%d errors, more than %d", len(errs), MaxErrors)
	}
}

func FuzzParse(f *testing.F) {
	for _, s := range goldenInputs(f) {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		s, errs := ParseFile(NewFile("fuzz", src))
		if s == nil {
			t.Fatal("nil script")
		}
		checkPositions(t, src, errs)
		for _, e := range errs {
			// The excerpt is a window of at most ExcerptWidth code points
			// (plus the two "…" marks) with the caret inside or just after it.
			lines := e.File.Excerpt(e.Pos, e.End)
			shown := utf8.RuneCountInString(lines[0])
			lead := utf8.RuneCountInString(strings.TrimRight(lines[1], "^"))
			if len(lines) != 2 || shown > ExcerptWidth+2 || lead > shown || !strings.HasSuffix(lines[1], "^") {
				t.Fatalf("excerpt %q for error %q", lines, e.Msg)
			}
		}
		for _, st := range s.Stmts {
			if st.Pos() > st.End() && len(errs) == 0 {
				t.Fatalf("statement with inverted span in a valid parse")
			}
		}
	})
}

// rawLine is line n of f including a trailing carriage return.
func rawLine(f *File, n int) string {
	start, end := f.lines[n-1], len(f.Src)
	if n < len(f.lines) {
		end = f.lines[n] - 1
	}
	return f.Src[start:end]
}

// TestLongChain: a chain of operators nests nothing, yet its syntax tree is
// as deep as it is long; a 2.5 MB chain once overflowed the evaluator's
// stack and ended the process. Beyond MaxDepth levels it is a syntax error
// at the operator that crosses the limit, found without building the rest.
func TestLongChain(t *testing.T) {
	chain := func(op string, n int) string { // n terms: n−1 operators
		return strings.Repeat("1"+op, n-1) + "1"
	}
	for _, op := range []string{"+", "*", " and ", " or "} {
		t.Run(strings.TrimSpace(op), func(t *testing.T) {
			// MaxDepth−1 operators: a tree MaxDepth deep, accepted.
			if _, err := Parse("t", chain(op, MaxDepth)); err != nil {
				t.Errorf("a chain %d levels deep: %v", MaxDepth, err)
			}
			src := chain(op, 1_250_000)
			_, err := Parse("t", src)
			list, ok := err.(ErrorList)
			if !ok || len(list) != 1 {
				t.Fatalf("a chain of 1.25e6 terms: error %v, want one syntax error", err)
			}
			// The MaxDepth-th operator is the first one too many.
			want := Pos((MaxDepth-1)*len("1"+op) + 1 + strings.Index(op, strings.TrimSpace(op)))
			if list[0].Pos != want || !strings.Contains(list[0].Msg, "too long or nested too deeply") {
				t.Errorf("error at %d %q, want offset %d and 'too long or nested too deeply'", list[0].Pos, list[0].Msg, want)
			}
		})
	}
	// Brackets, calls and chains add up: (chain) + … nests the chain's
	// depth inside the outer one.
	half := chain("+", MaxDepth/2)
	if _, err := Parse("t", "("+half+")+"+half); err == nil {
		t.Errorf("two chains of %d levels, one inside the other: accepted, want the depth error", MaxDepth/2)
	}
	if _, err := Parse("t", "f("+half+")+g["+half+"]"); err != nil {
		t.Errorf("chains side by side are not deeper together: %v", err)
	}
	// A flat list is not deep however long it is.
	if _, err := Parse("t", "["+strings.Repeat("1, ", 500_000)+"1]"); err != nil {
		t.Errorf("a vector of 5e5 entries: %v", err)
	}
}

// TestLongLineExcerpt: an error in a 10 MB line shows a window of
// ExcerptWidth code points with "…" marks; the caret stays under the
// offending character and the message keeps the true column.
func TestLongLineExcerpt(t *testing.T) {
	pad := `"` + strings.Repeat("é, ", 5_000_000/3) + `"`
	for _, tc := range []struct{ name, before, after string }{
		{"middle", "[" + pad + ", ", ", " + pad + "]"},
		{"start", "[", ", " + pad + "]"},
		{"end", "[" + pad + ", ", "]"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			src := tc.before + "zz?" + tc.after
			f := NewFile("cell", src)
			at := Pos(len(tc.before) + 2)
			lines := f.Excerpt(at, at+1)
			if n := utf8.RuneCountInString(lines[0]); n > ExcerptWidth+2 {
				t.Fatalf("excerpt line of %d code points, want at most %d", n, ExcerptWidth+2)
			}
			caret := utf8.RuneCountInString(strings.TrimRight(lines[1], "^"))
			if got := []rune(lines[0])[caret]; got != '?' {
				t.Errorf("caret under %q, want under '?':\n%s\n%s", got, lines[0], lines[1])
			}
			if (tc.name != "start") != strings.HasPrefix(lines[0], "…") || (tc.name != "end") != strings.HasSuffix(lines[0], "…") {
				t.Errorf("'…' marks wrong for a window at the %s: %q", tc.name, lines[0])
			}
			if p := f.Position(at); p.Column != utf8.RuneCountInString(tc.before)+3 {
				t.Errorf("column %d, want %d", p.Column, utf8.RuneCountInString(tc.before)+3)
			}
			_, err := Parse("cell", src)
			var out int
			for _, l := range err.(ErrorList).Traceback() {
				out += len(l)
			}
			if out > 2000 {
				t.Errorf("traceback of a 10 MB line is %d bytes, want a few hundred", out)
			}
		})
	}
	// A span longer than the window is underlined up to the window's end.
	long := NewFile("cell", strings.Repeat("a", 1000))
	if got := long.Excerpt(10, 900); utf8.RuneCountInString(got[1]) != ExcerptWidth {
		t.Errorf("span clipped to the window: caret line of %d, want %d", utf8.RuneCountInString(got[1]), ExcerptWidth)
	}
}

func TestShorten(t *testing.T) {
	if got := Shorten("heat", 10); got != "heat" {
		t.Errorf("Shorten(heat) = %q", got)
	}
	got := Shorten(strings.Repeat("ab", 50), 10)
	if got != "ababa…babab (100 characters)" {
		t.Errorf("Shorten = %q", got)
	}
	if got := ClipMessage(strings.Repeat("x", 3*MessageWidth)); utf8.RuneCountInString(got) > MessageWidth+60 || !strings.Contains(got, "message cut") {
		t.Errorf("ClipMessage kept %d code points", utf8.RuneCountInString(got))
	}
}

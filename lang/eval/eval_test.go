package eval

import (
	"context"
	"flag"
	"fmt"
	"strings"
	"testing"

	"semiflow/lang/syntax"
	"semiflow/lang/value"
)

var _ = flag.Bool("update", false, "unused here; accepted for go test ./lang/... -update")

func TestSuggest(t *testing.T) {
	names := []string{"sqrt", "equispaced", "sum", "norm", "heat_flux", "pi", "e"}
	tests := []struct{ name, want string }{
		{"sprt", "sqrt"}, {"nrom", "norm"}, {"pii", "pi"}, {"sun", "sum"},
		{"heatflux", "heat_flux"}, {"zzzzqqq", ""}, {"x", ""}, {"Norm", "norm"},
	}
	for _, tt := range tests {
		if got := suggest(tt.name, names); got != tt.want {
			t.Errorf("suggest(%q) = %q, want %q", tt.name, got, tt.want)
		}
	}
	if d := editDistance("kitten", "sitting"); d != 3 {
		t.Errorf("editDistance = %d, want 3 (the classic example)", d)
	}
}

type events struct{ ids []string }

func (e *events) Stream(string, string) {}
func (e *events) Display(data, md map[string]any, id string, update bool) {
	e.ids = append(e.ids, fmt.Sprintf("%s %v %s", id, update, data["text/plain"]))
}
func (e *events) Clear(bool)          {}
func (e *events) Page(map[string]any) {}

func TestProgress(t *testing.T) {
	out := &events{}
	in := New(nil, nil, out)
	c := &Call{Interp: in, Name: "work"}
	p := c.Progress()
	p(0, 4)
	p(1, 4) // within 200 ms of the first: skipped
	p(4, 4) // completion is always shown
	want := []string{"progress-work-1 false work: 0/4 (0%)", "progress-work-1 true work: 4/4 (100%)"}
	if strings.Join(out.ids, "|") != strings.Join(want, "|") {
		t.Errorf("progress displays = %q, want %q", out.ids, want)
	}
}

// run parses src and executes its statements, returning the first error.
func run(t *testing.T, in *Interp, src string) error {
	t.Helper()
	file := syntax.NewFile("cell", src)
	script, errs := syntax.ParseFile(file)
	if len(errs) > 0 {
		return errs
	}
	for _, st := range script.Stmts {
		if _, err := in.Exec(context.Background(), file, st); err != nil {
			return err
		}
	}
	return nil
}

// TestNestingAcrossCalls: each expression is at most syntax.MaxDepth deep,
// but a recursive function whose recursive call sits at the bottom of a
// deep expression multiplies that depth by the number of calls. The
// evaluator stops at MaxNesting expressions under evaluation with an error
// instead of letting the goroutine's stack overflow (a fatal error).
func TestNestingAcrossCalls(t *testing.T) {
	in := New(nil, nil, &events{})
	body := "f(x)" + strings.Repeat("+1", syntax.MaxDepth-10)
	err := run(t, in, "f(x) = "+body+"\nf(1)")
	e, ok := err.(*Error)
	if !ok || e.Name != value.ClassDepth || !strings.Contains(e.Msg, "under evaluation") {
		t.Fatalf("deep body called recursively: %v, want the nesting “too deep”", err)
	}
	// The interpreter is usable afterwards.
	if err := run(t, in, "y = 1 + 2"); err != nil || in.Globals["y"].String() != "3" {
		t.Errorf("after the error: %v, y = %v", err, in.Globals["y"])
	}
}

// TestLongNameMessages: a 10 MB name or line gives an error of bounded
// size, quickly (the nearest-name search skips names that cannot be close).
func TestLongNameMessages(t *testing.T) {
	in := New(map[string]value.Value{"heat": value.Num(1)}, nil, &events{})
	long := strings.Repeat("q", 10<<20)
	for name, src := range map[string]string{
		"name":        long,
		"name in row": "[" + strings.Repeat("1234567890, ", 400_000) + "heta, " + strings.Repeat("1234567890, ", 400_000) + "1]",
		"call":        long + "(1)",
		"assign":      "x = " + long,
	} {
		err := run(t, in, src)
		e, ok := err.(*Error)
		if !ok || e.Name != value.ClassName {
			t.Fatalf("%s: %v, want an “unknown name” error", name, err)
		}
		out := 0
		for _, l := range e.Traceback() {
			out += len(l)
		}
		if out > 1000 {
			t.Errorf("%s: traceback of %d bytes for a 10 MB input, want a few hundred", name, out)
		}
		if name == "name in row" && !strings.Contains(e.Msg, "did you mean heat?") {
			t.Errorf("%s: %q, want the suggestion heat", name, e.Msg)
		}
	}
}

// TestNestedListLimits: a list built by x = [x] a million times once made
// its display quadratic (each level copies the text of all the levels
// inside), and [x, x] nested fifty times has 2⁵⁰ entries to display or
// export. Literals stop at MaxListDepth levels and at MaxElements entries
// counted as a tree, measured without walking the shared copies.
func TestNestedListLimits(t *testing.T) {
	in := New(nil, nil, &events{})
	src := "x = \"a\"\n" + strings.Repeat("x = [x, 1i]\n", value.MaxListDepth+5)
	err := run(t, in, src)
	if e, ok := err.(*Error); !ok || e.Name != value.ClassValue || !strings.Contains(e.Msg, "lists nest at most 64 deep") {
		t.Errorf("nesting: %v, want 'lists nest at most 64 deep'", err)
	} else if p := e.File.Position(e.Pos); p.Line != value.MaxListDepth+2 {
		t.Errorf("nesting error at line %d, want %d (the first list 65 deep)", p.Line, value.MaxListDepth+2)
	}
	in = New(nil, nil, &events{})
	err = run(t, in, "y = \"a\"\n"+strings.Repeat("y = [y, y]\n", 50))
	if e, ok := err.(*Error); !ok || !strings.Contains(e.Msg, "counting the entries of the lists it holds") {
		t.Errorf("doubling: %v, want the entry limit", err)
	} else if p := e.File.Position(e.Pos); p.Line != 25 {
		// [y, y] nested k times holds 2^(k+1) − 2 entries as a tree: first
		// above 2^24 at k = 24, line 25.
		t.Errorf("doubling error at line %d, want 25", p.Line)
	}
	if got := fmt.Sprint(in.Globals["y"]); len(got) > 2*value.MaxListText {
		t.Errorf("the last accepted list displays as %d bytes", len(got))
	}
}

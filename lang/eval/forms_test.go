package eval

import (
	"context"
	"strconv"
	"strings"
	"testing"

	"semiflow/lang/syntax"
	"semiflow/lang/value"
)

// last runs src and returns the shown value of its last statement.
func last(t *testing.T, in *Interp, src string) (value.Value, error) {
	t.Helper()
	file := syntax.NewFile("cell", src)
	script, errs := syntax.ParseFile(file)
	if len(errs) > 0 {
		return nil, errs
	}
	var v value.Value
	for _, st := range script.Stmts {
		var err error
		if v, err = in.Exec(context.Background(), file, st); err != nil {
			return nil, err
		}
	}
	return v, nil
}

// TestForms checks anonymous functions, where ( ) and with [ ] against
// values worked out by hand (common practice, no source).
func TestForms(t *testing.T) {
	tests := []struct{ src, want string }{
		{"f = x -> x^2 + 1\nf(3)", "10"},
		{"((x, y) -> x - y)(5, 2)", "3"},
		{"(() -> 7)()", "7"},
		{"g = (x) ↦ 2*x\ng(4)", "8"},
		// Closures keep the parameters of the function they were made in.
		{"adder(a) = x -> x + a\nadd3 = adder(3)\nadd3(4)", "7"},
		{"curry = x -> y -> 10*x + y\ncurry(1)(2)", "12"},
		{"h(x) = a*x + b where (a = 2, b = a + x)\nh(3)", "11"},
		{"c = 5\nk(x) = c + d where (d = x)\nk(1)", "6"},
		{"y = 1\n(y + z where (y = 10, z = y)) + y", "21"},
		{"m(x) = (t -> t*s)(2) where (s = x + 1)\nm(2)", "6"},
		{"v = [1, 2, 3]\nv with [0] = 9", "[9, 2, 3]"},
		{"v = [1, 2, 3]\nw = v with [-1] = 0\nv", "[1, 2, 3]"},
		{"[1, 2, 3, 4] with [1 .. 2] = 0", "[1, 0, 0, 4]"},
		{"[1, 2, 3, 4] with [0 .. 3 by 2] = [7, 8]", "[7, 2, 8, 4]"},
		{"[1, 2] with [1] = 2i", "[1+0i, 0+2i]"},
		{"[1, 2] with [0] = 5 with [1] = 6", "[5, 6]"},
		{"0 .. 3 with [0] = 9", "[9, 1, 2, 3]"},
		{"[1, \"a\"] with [1] = [2, 3]", "[1, [2, 3]]"},
		{"{1, 2 | 3, 4} with [0, 1] = 9", "{1, 9 | 3, 4}"},
		{"{1, 2 | 3, 4} with [1] = [5, 6]", "{1, 2 | 5, 6}"},
		{"{1, 2 | 3, 4} with [0 .. 1, 0] = [7, 8]", "{7, 2 | 8, 4}"},
		{"{1, 2 | 3, 4} with [0 .. 1, 0 .. 1] = {5, 6 | 7, 8}", "{5, 6 | 7, 8}"},
	}
	for _, tt := range tests {
		in := New(nil, nil, &events{})
		v, err := last(t, in, tt.src)
		if err != nil {
			t.Errorf("%q: %v", tt.src, err)
			continue
		}
		if got := strings.Join(strings.Fields(v.String()), " "); got != tt.want {
			t.Errorf("%q = %s, want %s", tt.src, got, tt.want)
		}
	}
}

// TestFormErrors: each bad use names what is wrong and where.
func TestFormErrors(t *testing.T) {
	tests := []struct{ src, class, where, msg string }{
		{"f = x -> x\nf(1, 2)", value.ClassType, "2:6", "takes 1 argument"},
		{"(x -> q)(1)", value.ClassName, "1:7", "unknown name q"},
		{"a where (a = 1, b = c)", value.ClassName, "1:21", "unknown name c"},
		{"[1, 2] with [2] = 0", value.ClassIndex, "1:14", "out of range"},
		{"[1, 2, 3] with [0 .. 1] = [1, 2, 3]", value.ClassValue, "1:27", "must be one number or a vector of 2"},
		{"[1, 2] with [0] = \"s\"", value.ClassType, "1:19", "must be a number or a vector"},
		{"[1, 2] with [0] = [3, 4]", value.ClassValue, "1:19", "1 entry is selected, so the new value must be one number or a vector of 1, not a vector of 2"},
		{"{1, 2 | 3, 4} with [0, 0] = \"s\"", value.ClassType, "1:29", "a matrix's entries are numbers"},
		{"{1, 2 | 3, 4} with [0 .. 1, 0 .. 1] = {1, 2}", value.ClassValue, "1:39", "must be a number or a 2×2 matrix"},
		{"3 with [0] = 1", value.ClassType, "1:1", "vector, list or matrix"},
		{"x = 3\nx.peak", value.ClassType, "2:3", "has no named parts"},
		{"x = [1]\nx[\"peak\"]", value.ClassType, "2:3", "an index must be an integer or a range"},
		{"h = x -> h(x)\nh(1)", value.ClassDepth, "1:10", "nested more than"},
	}
	for _, tt := range tests {
		in := New(nil, testBuiltins{}, &events{})
		in.Limits.MaxDepth = 50
		_, err := last(t, in, tt.src)
		e, ok := err.(*Error)
		if !ok {
			t.Errorf("%q: %v, want a %s", tt.src, err, tt.class)
			continue
		}
		p := e.File.Position(e.Pos)
		if e.Name != tt.class || !strings.Contains(e.Msg, tt.msg) || p.String() != "cell:"+tt.where {
			t.Errorf("%q: %s %s: %s, want %s at %s containing %q", tt.src, e.Name, p, e.Msg, tt.class, tt.where, tt.msg)
		}
	}
}

// TestClosureInterrupt: a recursive anonymous function stops at the
// cancelled context.
func TestClosureInterrupt(t *testing.T) {
	in := New(nil, nil, &events{})
	in.Limits.MaxSteps = 5000
	file := syntax.NewFile("cell", "loop = x -> loop(x + 1) + 0\nloop(0)")
	script, _ := syntax.ParseFile(file)
	in.Exec(context.Background(), file, script.Stmts[0])
	in.Limits.MaxDepth = 1 << 30
	_, err := in.Exec(context.Background(), file, script.Stmts[1])
	if e, ok := err.(*Error); !ok || (e.Name != value.ClassWork && e.Name != value.ClassDepth) {
		t.Errorf("unbounded recursion: %v, want the work or nesting limit", err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	in.Limits.MaxSteps = 0
	_, err = in.Exec(ctx, file, script.Stmts[1])
	if e, ok := err.(*Error); !ok || e.Name != value.ClassInterrupted && e.Name != value.ClassDepth {
		t.Errorf("cancelled: %v, want interrupted", err)
	}
}

// testBuiltins is an empty builtin table.
type testBuiltins struct{}

func (testBuiltins) Lookup(string) (value.Value, bool) { return nil, false }
func (testBuiltins) Names() []string                   { return nil }

// TestManyLocalDefinitions: a where ( ) with 20000 definitions, each using
// the first (names are looked up in a map past a few), and a definition
// shadowing an outer name.
func TestManyLocalDefinitions(t *testing.T) {
	var sb strings.Builder
	sb.WriteString("a0 + a19999 where (a0 = 1")
	for i := 1; i < 20000; i++ {
		sb.WriteString(", a" + strconv.Itoa(i) + " = a0 + " + strconv.Itoa(i))
	}
	sb.WriteString(")")
	in := New(nil, nil, &events{})
	v, err := last(t, in, sb.String())
	if err != nil || v.String() != "20001" {
		t.Fatalf("= %v, %v; want 20001 (1 + (1 + 19999))", v, err)
	}
	v, err = last(t, in, "f(x) = (x + y where (x = 2*x, y = x)) where (a1 = 0, a2 = 0, a3 = 0, a4 = 0, a5 = 0, a6 = 0, a7 = 0, a8 = 0, a9 = 0, a10 = 0, a11 = 0, a12 = 0, a13 = 0, a14 = 0, a15 = 0, a16 = 0, a17 = 0, x = 100)\nf(1)")
	if err != nil || v.String() != "400" {
		t.Errorf("shadowing: %v, %v; want 400 (x = 100 inside, then 200 + 200)", v, err)
	}
}

package run

import (
	"context"
	"errors"
	"fmt"
	"reflect"
	"regexp"
	"strings"
	"testing"
	"time"

	"semiflow/lang/builtin"
	"semiflow/lang/eval"
	"semiflow/lang/syntax"
	"semiflow/lang/value"
)

type tracer interface {
	ErrorName() string
	Traceback() []string
}

func mustExec(t *testing.T, s *Session, src string) map[string]any {
	t.Helper()
	data, _, err := s.Execute(context.Background(), src, nil)
	if err != nil {
		t.Fatalf("Execute(%q): %v", src, err)
	}
	return data
}

func TestExecuteResultAndDisplays(t *testing.T) {
	s := NewSession()
	rec := &recorder{}
	data, md, err := s.Execute(context.Background(), "1\nx = 2\nx + 1", rec)
	if err != nil {
		t.Fatal(err)
	}
	if data["text/plain"] != "3" || md == nil {
		t.Errorf("result = %v, %v; want text/plain 3 and metadata", data, md)
	}
	if !reflect.DeepEqual(rec.lines, []string{"=> 1"}) {
		t.Errorf("displays = %q, want only the first statement's value", rec.lines)
	}
	// An assignment last: no result.
	if data := mustExec(t, s, "y = 5"); data != nil {
		t.Errorf("assignment result = %v, want nil", data)
	}
	if got := s.Names(); !reflect.DeepEqual(got, []string{"x", "y"}) {
		t.Errorf("Names = %v", got)
	}
}

func TestFailingStatementChangesNothing(t *testing.T) {
	s := NewSession()
	_, _, err := s.Execute(context.Background(), "a = 1\nb = 2\nb = 1/0\nc = 3", nil)
	if err == nil {
		t.Fatal("want division by zero")
	}
	if v, _ := s.Lookup("b"); v.String() != "2" {
		t.Errorf("b = %v after its failing reassignment, want 2", v)
	}
	if _, ok := s.Lookup("c"); ok {
		t.Error("c was assigned although an earlier statement failed")
	}
	if _, ok := s.Lookup("a"); !ok {
		t.Error("a, assigned before the error, was lost")
	}
	// A syntax error anywhere stops the whole cell before it runs.
	if _, _, err := s.Execute(context.Background(), "d = 1\n1 +", nil); err == nil {
		t.Fatal("want a syntax error")
	}
	if _, ok := s.Lookup("d"); ok {
		t.Error("d assigned in a cell with a syntax error")
	}
}

func TestTraceback(t *testing.T) {
	s := NewSession()
	_, _, err := s.Execute(context.Background(), "foo = 1\ny = fo + 1", nil)
	var tr tracer
	if !errors.As(err, &tr) || tr.ErrorName() != value.ClassName {
		t.Fatalf("err = %v, want an “unknown name” error", err)
	}
	want := []string{
		"cell:2:5: unknown name fo; did you mean foo?",
		"  2 │ y = fo + 1",
		"    │     ^^ unknown name",
	}
	if got := tr.Traceback(); !reflect.DeepEqual(got, want) {
		t.Errorf("traceback = %q, want %q", got, want)
	}

	mustExec(t, s, "inv(x) = 1 / x")
	_, _, err = s.Execute(context.Background(), "z = 2\ninv(0)", nil)
	errors.As(err, &tr)
	want = []string{
		"cell:1:10: division by zero",
		"  1 │ inv(x) = 1 / x",
		"    │          ^^^^^ bad value",
		"inside inv, called at cell:2:1",
		"  2 │ inv(0)",
		"    │ ^^^^^^",
	}
	if got := tr.Traceback(); !reflect.DeepEqual(got, want) {
		t.Errorf("traceback = %q, want %q", got, want)
	}
	// The notebook's form: the same text with ANSI colours.
	var styled interface{ Lines(syntax.Style) []string }
	if !errors.As(err, &styled) {
		t.Fatalf("%T has no styled report", err)
	}
	col := styled.Lines(syntax.Coloured)
	if len(col) != len(want) || col[2] != "\x1b[34m    │\x1b[0m          \x1b[1;31m^^^^^ bad value\x1b[0m" {
		t.Errorf("coloured traceback = %q", col)
	}
	for i, l := range col {
		w := want[i]
		if i == 0 {
			w = " bad value  " + w // the class's badge
		}
		if plain := ansiSGR.ReplaceAllString(l, ""); plain != w {
			t.Errorf("coloured line %d without colours = %q, want %q", i, plain, w)
		}
	}

	_, _, err = s.Execute(context.Background(), "a ? b\nc & d", nil)
	if !errors.As(err, &tr) || tr.ErrorName() != value.ClassSyntax {
		t.Fatalf("err = %v, want bad syntax", err)
	}
	if got := tr.Traceback(); len(got) != 6 || got[2] != "    │   ^ bad syntax" || !strings.HasPrefix(got[3], "cell:2:3:") {
		t.Errorf("syntax traceback = %q", got)
	}
}

// ansiSGR matches an ANSI colour sequence.
var ansiSGR = regexp.MustCompile("\x1b\\[[0-9;]*m")

func TestInterrupt(t *testing.T) {
	for _, src := range []string{
		// Unbounded recursion that never nests deeply: each call makes two
		// shallow ones, so only the interrupt can stop it.
		"f(n) = when(n > 20, 0, f(n + 1) + f(n + 1))\nf(0)",
		"g(x) = g(x)\nmap(g, 1 .. 10)",
		"h(x) = sum(zeros(1e6)) + x\nmap(h, 1 .. 1e6)",
	} {
		s := NewSession()
		ctx, cancel := context.WithCancel(context.Background())
		done := make(chan error, 1)
		go func() {
			_, _, err := s.Execute(ctx, src, nil)
			done <- err
		}()
		time.Sleep(50 * time.Millisecond)
		start := time.Now()
		cancel()
		select {
		case err := <-done:
			var tr tracer
			if strings.HasPrefix(src, "g(x)") {
				// Deep recursion may end first with a "too deep" error.
				if !errors.As(err, &tr) {
					t.Errorf("%q: err = %v", src, err)
				}
				continue
			}
			if !errors.As(err, &tr) || tr.ErrorName() != value.ClassInterrupted {
				t.Errorf("%q: err = %v, want Interrupted", src, err)
			}
			if d := time.Since(start); d > 500*time.Millisecond {
				t.Errorf("%q: stopped %v after the interrupt", src, d)
			}
		case <-time.After(5 * time.Second):
			t.Fatalf("%q: not stopped 5 s after the interrupt", src)
		}
	}
}

func TestRecursionLimit(t *testing.T) {
	s := NewSession()
	_, _, err := s.Execute(context.Background(), "f(x) = f(x)\nf(1)", nil)
	var e *eval.Error
	if !errors.As(err, &e) || e.Name != value.ClassDepth {
		t.Fatalf("err = %v, want “too deep”", err)
	}
	if len(e.Traceback()) > 20 {
		t.Errorf("traceback of %d lines; repeated frames should be folded", len(e.Traceback()))
	}
}

func TestWorkLimit(t *testing.T) {
	s := NewSession()
	s.SetLimits(eval.Limits{MaxDepth: 100, MaxElements: 1000, MaxSteps: 10000})
	_, _, err := s.Execute(context.Background(), "f(n) = when(n > 30, 0, f(n + 1) + f(n + 1))\nf(0)", nil)
	var e *eval.Error
	if !errors.As(err, &e) || e.Name != value.ClassWork {
		t.Fatalf("err = %v, want “over work limit”", err)
	}
	_, _, err = s.Execute(context.Background(), "zeros(5000)", nil)
	if !errors.As(err, &e) || !strings.Contains(e.Msg, "limit of 1000") {
		t.Fatalf("err = %v, want the size limit", err)
	}
}

func TestComplete(t *testing.T) {
	s := NewSession()
	mustExec(t, s, "spread = 1\nheat(x, kappa=2) = kappa * x")
	tests := []struct {
		src        string
		cursor     int
		want       []string
		start, end int
	}{
		{"spr", 3, []string{"spread"}, 0, 3},
		{"x = sq", 6, []string{"sqrt"}, 4, 6},
		{"equispaced(0, 1, n", 18, []string{"n=", "nan", "norm", "not"}, 17, 18},
		{"heat(1, ka", 10, []string{"kappa="}, 8, 10},
		{"norm([1, 2], ", 13, nil, 13, 13}, // checked below: contains p=
		{"λ = 1; co", 9, []string{"conj", "cos", "cosh"}, 7, 9},
		{"12", 2, nil, 2, 2},
	}
	for _, tt := range tests {
		got, start, end := s.Complete(tt.src, tt.cursor)
		if tt.want == nil && tt.src != "12" {
			found := false
			for _, g := range got {
				found = found || g == "p="
			}
			if !found || got[0] != "x=" {
				t.Errorf("Complete(%q) = %v, want parameters x=, p= first", tt.src, got)
			}
			continue
		}
		// Other families add builtins, so check that the wanted matches
		// come in order (parameters first) and that every match fits.
		ok := start == tt.start && end == tt.end && len(got) >= len(tt.want)
		prefix := string([]rune(tt.src)[tt.start:tt.cursor])
		k := 0
		for _, g := range got {
			ok = ok && strings.HasPrefix(g, prefix)
			if k < len(tt.want) && g == tt.want[k] {
				k++
			}
		}
		params := len(tt.want) > 0 && strings.HasSuffix(tt.want[0], "=")
		if params && (len(got) == 0 || got[0] != tt.want[0]) || k != len(tt.want) {
			ok = false
		}
		if !ok {
			t.Errorf("Complete(%q, %d) = %v [%d, %d), want %v first, in order, [%d, %d)", tt.src, tt.cursor, got, start, end, tt.want, tt.start, tt.end)
		}
	}
}

func TestInspect(t *testing.T) {
	s := NewSession()
	mustExec(t, s, "v = [1, 2]\nf(x) = x + 1")
	tests := []struct {
		src    string
		cursor int
		want   string
	}{
		{"equispaced(0, 1)", 2, "equispaced(a, b, n=50)"},
		{"equispaced(", 5, "equispaced(a, b, n=50)"},
		{"v", 1, "v: vector\n[1, 2]"},
		{"y = f(2)", 5, "f(x): user function\nf(x) = x + 1"},
		{"pi", 0, "pi = 3.141592654"},
	}
	for _, tt := range tests {
		data, found := s.Inspect(tt.src, tt.cursor, 0)
		if !found || !strings.HasPrefix(fmt.Sprint(data["text/plain"]), tt.want) {
			t.Errorf("Inspect(%q, %d) = %v, %v; want prefix %q", tt.src, tt.cursor, data, found, tt.want)
		}
	}
	if data, _ := s.Inspect("norm", 4, 1); !strings.Contains(fmt.Sprint(data["text/plain"]), "Examples:") {
		t.Errorf("detail 1 should include examples: %v", data)
	}
	if _, found := s.Inspect("nothing_here", 3, 0); found {
		t.Error("unknown name found")
	}
	if _, found := s.Inspect("1 + 2", 5, 0); found {
		t.Error("number found")
	}
}

func TestIsComplete(t *testing.T) {
	s := NewSession()
	tests := []struct{ src, status string }{
		{"1 + 2", "complete"},
		{"", "complete"},
		{"f(1,", "incomplete"},
		{"M = {1, 2 |", "incomplete"},
		{"[1, [2", "incomplete"},
		{"print(\"abc", "incomplete"},
		{"\"abc", "incomplete"},
		{"(1 + 2))", "invalid"},
		{"1 +", "invalid"},
		{"a ? b", "invalid"},
		{"x = (1 +\n 2)", "complete"},
	}
	for _, tt := range tests {
		status, indent := s.IsComplete(tt.src)
		if status != tt.status {
			t.Errorf("IsComplete(%q) = %q, want %q", tt.src, status, tt.status)
		}
		if (status == "incomplete") != (indent == "  ") {
			t.Errorf("IsComplete(%q) indent = %q", tt.src, indent)
		}
	}
}

// FuzzEval runs fuzzed cells under tight limits: evaluation must not panic,
// must end (the work budget bounds it, the deadline is only a safety net),
// and every error must carry a valid position inside the input.
func FuzzEval(f *testing.F) {
	files, _ := goldenSeeds()
	for _, s := range files {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		s := NewSession()
		s.SetLimits(eval.Limits{MaxDepth: 60, MaxElements: 10000, MaxSteps: 200000})
		ctx, cancel := context.WithTimeout(context.Background(), 20*time.Second)
		defer cancel()
		_, _, err := s.Execute(ctx, src, &recorder{})
		var ee *eval.Error
		var el syntax.ErrorList
		switch {
		case err == nil:
		case errors.As(err, &el):
			for _, e := range el {
				if e.Pos < 0 || int(e.End) > len(src) || e.End < e.Pos {
					t.Fatalf("syntax error %q at [%d, %d) outside the input (%d bytes)", e.Msg, e.Pos, e.End, len(src))
				}
			}
		case errors.As(err, &ee):
			if ee.Name == value.ClassInternal {
				t.Fatalf("panic during evaluation: %v", ee)
			}
			if ee.Name == value.ClassInterrupted {
				t.Fatalf("evaluation ran into the deadline: the work budget did not bound it")
			}
			if ee.File == nil || ee.Pos < 0 || int(ee.End) > len(src) || ee.End < ee.Pos {
				t.Fatalf("runtime error %q at [%d, %d) outside the input", ee.Msg, ee.Pos, ee.End)
			}
			p := ee.File.Position(ee.Pos)
			if p.Line < 1 || p.Column < 1 {
				t.Fatalf("invalid position %v", p)
			}
			_ = ee.Traceback()
		default:
			t.Fatalf("error of type %T: %v", err, err)
		}
	})
}

func goldenSeeds() ([]string, error) {
	var out []string
	for _, path := range goldenFilesNoT() {
		raw, err := readFile(path)
		if err != nil {
			return nil, err
		}
		for _, b := range parseGolden(raw) {
			out = append(out, strings.Join(b.input, "\n"))
		}
	}
	return out, nil
}

// TestTour runs the bundled example script.
func TestTour(t *testing.T) {
	src, err := readFile("../../notebooks/tour.sf")
	if err != nil {
		t.Fatal(err)
	}
	rec := &recorder{}
	s := NewSession()
	data, _, err := s.ExecuteNamed(context.Background(), "tour.sf", src, rec)
	if err != nil {
		t.Fatalf("tour fails: %v", err)
	}
	if data != nil || len(rec.lines) < 15 {
		t.Errorf("tour output: %d lines, result %v", len(rec.lines), data)
	}
	// The cooling time solves exp(-kappa pi^2 t) = 0.01 (closed form above).
	v, _ := s.Lookup("t_cool")
	if v.String() != "0.9332025882" {
		t.Errorf("t_cool = %v", v)
	}
}

// TestCompleteDuringExecution checks that completion answers while a cell
// runs (the kernel may ask between messages of a long execution).
func TestCompleteDuringExecution(t *testing.T) {
	s := NewSession()
	mustExec(t, s, "alpha = 1")
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan struct{})
	go func() {
		s.Execute(ctx, "f(n) = when(n > 40, 0, f(n + 1) + f(n + 1))\nf(0)", nil)
		close(done)
	}()
	time.Sleep(20 * time.Millisecond)
	got := make(chan []string, 1)
	go func() { m, _, _ := s.Complete("alp", 3); got <- m }()
	select {
	case m := <-got:
		if len(m) != 1 || m[0] != "alpha" {
			t.Errorf("Complete = %v", m)
		}
	case <-time.After(2 * time.Second):
		t.Error("Complete blocked by a running cell")
	}
	cancel()
	<-done
}

func TestPanicBecomesInternalError(t *testing.T) {
	boom := &builtin.Builtin{Name: "boom", Doc: "Panics.", Impl: func(*eval.Call) (value.Value, error) { panic("shape") }}
	in := eval.New(nil, builtin.New([]*builtin.Builtin{boom}), discard{})
	script, err := syntax.Parse("cell", "boom()")
	if err != nil {
		t.Fatal(err)
	}
	_, err = execGuarded(context.Background(), in, script.File, script.Stmts[0])
	var e *eval.Error
	if !errors.As(err, &e) || e.Name != value.ClassInternal || !strings.Contains(e.Msg, "shape") {
		t.Errorf("err = %v, want an “internal fault” error", err)
	}
}

// panicky is a value whose display panics, standing for a display bug.
type panicky struct{}

func (panicky) Type() string   { return "panicky" }
func (panicky) String() string { panic("display bug") }

// TestDisplayPanicIsAnError checks that a panic while displaying a value
// becomes an "internal fault" error at the statement, and the session keeps its
// variables.
func TestDisplayPanicIsAnError(t *testing.T) {
	f := syntax.NewFile("cell", "x")
	script, errs := syntax.ParseFile(f)
	if len(errs) > 0 {
		t.Fatal(errs)
	}
	_, _, err := displayGuarded(panicky{}, f, script.Stmts[0])
	if err == nil || !strings.Contains(err.Error(), "internal error while displaying a panicky") {
		t.Fatalf("got %v", err)
	}
}

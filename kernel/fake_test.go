package kernel

import (
	"context"
	"fmt"
	"strconv"
	"strings"
	"sync"
	"time"
)

// fakeEval is a tiny evaluator for protocol tests. Cells:
//
//	sleep MS        wait (cancellable), then value "slept"
//	stubborn MS     wait ignoring cancellation
//	print TEXT / warn TEXT / show TEXT / page TEXT / clear
//	lines N         N lines "line 1" … "line N" on stdout, one call each, then value "done"
//	shows N         N displays "d1" … "dN", each after a line on stdout, then value "done"
//	update ID TEXT  a display with id ID, then an update of it
//	set NAME VALUE / get NAME
//	fail            an evaluation error
//	panic           a panic
//	anything else   its own text as the value ("" has no value)
type fakeEval struct {
	mu   sync.Mutex
	vars map[string]string
}

type fakeErr struct{ msg string }

func (e fakeErr) Error() string       { return e.msg }
func (e fakeErr) ErrorName() string   { return "FakeError" }
func (e fakeErr) Traceback() []string { return []string{"line 1", "FakeError: " + e.msg} }

func newFake() *fakeEval { return &fakeEval{vars: map[string]string{}} }

func (f *fakeEval) Execute(ctx context.Context, code string, out Output) (map[string]any, map[string]any, error) {
	cmd, arg, _ := strings.Cut(strings.TrimSpace(code), " ")
	plain := func(s string) map[string]any { return map[string]any{"text/plain": s} }
	switch cmd {
	case "sleep", "stubborn":
		ms, _ := strconv.Atoi(arg)
		t := time.NewTimer(time.Duration(ms) * time.Millisecond)
		defer t.Stop()
		if cmd == "stubborn" {
			<-t.C
			return plain("slept"), nil, nil
		}
		select {
		case <-t.C:
			return plain("slept"), nil, nil
		case <-ctx.Done():
			return nil, nil, ctx.Err()
		}
	case "lines":
		n, _ := strconv.Atoi(arg)
		for i := 1; i <= n; i++ {
			out.Stream("stdout", "line "+strconv.Itoa(i)+"\n")
		}
		return plain("done"), nil, nil
	case "shows":
		n, _ := strconv.Atoi(arg)
		for i := 1; i <= n; i++ {
			out.Stream("stdout", "before "+strconv.Itoa(i)+"\n")
			out.Display(plain("d"+strconv.Itoa(i)), nil, "", false)
		}
		return plain("done"), nil, nil
	case "print":
		out.Stream("stdout", arg+"\n")
		return nil, nil, nil
	case "warn":
		out.Stream("stderr", arg+"\n")
		return nil, nil, nil
	case "show":
		out.Display(map[string]any{"text/plain": arg, "text/html": "<b>" + arg + "</b>"}, nil, "", false)
		return nil, nil, nil
	case "update":
		id, text, _ := strings.Cut(arg, " ")
		out.Display(plain("first"), nil, id, false)
		out.Display(plain(text), nil, id, true)
		return nil, nil, nil
	case "page":
		out.Page(plain(arg))
		return nil, nil, nil
	case "clear":
		out.Stream("stdout", "x\n")
		out.Clear(false)
		return nil, nil, nil
	case "set":
		name, v, _ := strings.Cut(arg, " ")
		f.mu.Lock()
		f.vars[name] = v
		f.mu.Unlock()
		return nil, nil, nil
	case "get":
		f.mu.Lock()
		v, ok := f.vars[arg]
		f.mu.Unlock()
		if !ok {
			return nil, nil, fakeErr{"unknown name " + arg}
		}
		return plain(v), nil, nil
	case "fail":
		return nil, nil, fakeErr{"it failed"}
	case "panic":
		panic("boom")
	case "":
		return nil, nil, nil
	}
	return plain(code), map[string]any{"text/plain": map[string]any{}}, nil
}

var fakeNames = []string{"page", "panic", "print", "show"}

func (f *fakeEval) Complete(code string, cursor int) ([]string, int, int) {
	r := []rune(code)[:cursor]
	start := cursor
	for start > 0 && r[start-1] >= 'a' && r[start-1] <= 'z' {
		start--
	}
	prefix := string(r[start:])
	if prefix == "crash" {
		panic("completion crash")
	}
	var m []string
	for _, n := range fakeNames {
		if strings.HasPrefix(n, prefix) {
			m = append(m, n)
		}
	}
	return m, start, cursor
}

func (f *fakeEval) Inspect(code string, cursor, detail int) (map[string]any, bool) {
	for _, n := range fakeNames {
		if strings.Contains(code, n) {
			return map[string]any{"text/plain": fmt.Sprintf("%s: a builtin (detail %d)", n, detail)}, true
		}
	}
	return nil, false
}

func (f *fakeEval) IsComplete(code string) (string, string) {
	switch {
	case strings.Count(code, "(") > strings.Count(code, ")"):
		return "incomplete", "  "
	case strings.Contains(code, "!"):
		return "invalid", ""
	}
	return "complete", ""
}

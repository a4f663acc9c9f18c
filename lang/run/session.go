// Package run is the public entry point of the Semiflow language: a
// Session holds the variables of one notebook or script and executes cells
// against them. It is used by the command line, the tests and the kernel.
package run

import (
	"context"
	"errors"
	"fmt"
	"sort"
	"sync"

	"semiflow/lang/builtin"
	"semiflow/lang/display"
	"semiflow/lang/eval"
	"semiflow/lang/syntax"
	"semiflow/lang/value"
)

// Output receives what a cell emits while it runs.
type Output interface {
	Stream(name, text string) // "stdout" | "stderr"
	Display(data, metadata map[string]any, displayID string, update bool)
	Clear(wait bool)
	Page(data map[string]any)
}

// StatementMarker is an Output that wants to know which statement the
// output that follows belongs to: Statement is called before each top-level
// statement of a cell runs, with its first line (1-based) and its source
// text.
type StatementMarker interface {
	Statement(line int, text string)
}

// Session is the state of one interactive session: its variables and user
// functions. Its methods may be called from several goroutines: executions
// are serialised, and Complete, Inspect, Names and Lookup answer from a
// view of the variables updated after each statement, so they do not wait
// for a running cell.
type Session struct {
	mu      sync.Mutex // held by Execute
	globals map[string]value.Value

	viewMu sync.RWMutex
	view   map[string]value.Value

	table  *builtin.Table
	limits eval.Limits
	ids    map[string]bool
}

// NewSession returns a session with no variables and the default builtins
// and limits.
func NewSession() *Session {
	return &Session{globals: map[string]value.Value{}, view: map[string]value.Value{},
		table: builtin.Default(), limits: eval.DefaultLimits, ids: map[string]bool{}}
}

// SetLimits replaces the evaluation limits (depth, size, work budget).
func (s *Session) SetLimits(l eval.Limits) {
	s.mu.Lock()
	s.limits = l
	s.mu.Unlock()
}

// Builtins returns the session's builtin table.
func (s *Session) Builtins() *builtin.Table { return s.table }

// Execute parses and evaluates a cell, named "cell" in error positions.
// Each top-level expression statement's value is displayed; the last
// statement's value (if it is an expression, not an assignment) is returned
// as the cell result bundle instead of being displayed (nil data if none).
// Earlier expression statements' values are sent with out.Display. On
// error, state from statements that completed before the error is kept; a
// failing statement changes nothing. A syntax error anywhere in the cell
// stops it before anything runs. Returned errors implement
// ErrorName() string and Traceback() []string.
func (s *Session) Execute(ctx context.Context, src string, out Output) (data, metadata map[string]any, err error) {
	return s.ExecuteNamed(ctx, "cell", src, out)
}

// ExecuteNamed is Execute with the given file name in error positions.
func (s *Session) ExecuteNamed(ctx context.Context, name, src string, out Output) (data, metadata map[string]any, err error) {
	script, errs := syntax.ParseFile(syntax.NewFile(name, src))
	if len(errs) > 0 {
		return nil, nil, errs
	}
	s.mu.Lock()
	defer s.mu.Unlock()
	if out == nil {
		out = discard{}
	}
	in := eval.New(s.globals, s.table, out)
	in.Limits = s.limits
	in.DisplayIDs = s.ids
	shadowed := map[string]bool{} // builtins this cell has warned about
	for i, st := range script.Stmts {
		if ctx.Err() != nil {
			e := &eval.Error{Name: value.ClassInterrupted, Msg: "interrupted", File: script.File, Pos: st.Pos(), End: st.End()}
			return nil, nil, e
		}
		if m, ok := out.(StatementMarker); ok {
			p, e := script.File.Position(st.Pos()), script.File.Position(st.End())
			m.Statement(p.Line, script.File.Src[p.Offset:e.Offset])
		}
		v, err := execGuarded(ctx, in, script.File, st)
		if err != nil {
			return nil, nil, interrupted(ctx, err, script.File, st)
		}
		s.publish(st)
		s.warnShadow(script.File, st, shadowed, out)
		s.warn(st, v, out)
		b, md, err := displayGuarded(v, script.File, st)
		if err != nil {
			return nil, nil, err
		}
		if b == nil {
			continue
		}
		if i == len(script.Stmts)-1 {
			return b, md, nil
		}
		out.Display(b, md, "", false)
	}
	return nil, nil, nil
}

// interrupted returns err, or an Interrupted error at st when ctx was
// cancelled: a computation stopped by the interrupt may fail in its own
// words (a numerical routine that lost its input, an error that only says
// "context canceled"), and the user should see that the cell was
// interrupted. An "internal fault" error is kept, being a bug to report.
func interrupted(ctx context.Context, err error, f *syntax.File, st syntax.Stmt) error {
	if ctx.Err() == nil {
		return err
	}
	var e *eval.Error
	if errors.As(err, &e) && (e.Name == value.ClassInterrupted || e.Name == value.ClassInternal) {
		return err
	}
	return &eval.Error{Name: value.ClassInterrupted, Msg: "interrupted", File: f, Pos: st.Pos(), End: st.End()}
}

// publish copies the variable a completed statement assigned into the view.
func (s *Session) publish(st syntax.Stmt) {
	var name string
	switch x := st.(type) {
	case *syntax.AssignStmt:
		name = x.Name.Name
	case *syntax.FuncDef:
		name = x.Name.Name
	default:
		return
	}
	s.viewMu.Lock()
	s.view[name] = s.globals[name]
	s.viewMu.Unlock()
}

// warn emits on standard error the warnings of the value a statement
// produced or assigned (value.Warner), one line "warning: …" each.
func (s *Session) warn(st syntax.Stmt, v value.Value, out Output) {
	if a, ok := st.(*syntax.AssignStmt); ok {
		v = s.globals[a.Name.Name]
	}
	w, ok := v.(value.Warner)
	if !ok {
		return
	}
	for _, m := range w.Warnings() {
		out.Stream("stderr", "warning: "+m+"\n")
	}
}

// warnShadow warns on standard error, once per name in a cell, when a
// statement assigned or defined a name that a builtin has: the session's
// value hides the builtin from then on (times = 0 .. 1 by 0.1 hides
// times(sol)).
func (s *Session) warnShadow(f *syntax.File, st syntax.Stmt, done map[string]bool, out Output) {
	var id *syntax.Ident
	switch x := st.(type) {
	case *syntax.AssignStmt:
		id = x.Name
	case *syntax.FuncDef:
		id = x.Name
	default:
		return
	}
	b := s.table.Get(id.Name)
	if b == nil || done[id.Name] {
		return
	}
	done[id.Name] = true
	p := f.Position(id.Pos())
	out.Stream("stderr", fmt.Sprintf("warning: %d:%d: %s now names your value and hides the builtin %s for the rest of the session; another name keeps both\n",
		p.Line, p.Column, id.Name, b.Signature()))
}

// Names returns the names of the session's variables and user functions,
// sorted.
func (s *Session) Names() []string {
	s.viewMu.RLock()
	defer s.viewMu.RUnlock()
	names := make([]string, 0, len(s.view))
	for k := range s.view {
		names = append(names, k)
	}
	sort.Strings(names)
	return names
}

// Lookup returns the value of a session variable.
func (s *Session) Lookup(name string) (value.Value, bool) {
	s.viewMu.RLock()
	defer s.viewMu.RUnlock()
	v, ok := s.view[name]
	return v, ok
}

type discard struct{}

func (discard) Stream(string, string)                                {}
func (discard) Display(map[string]any, map[string]any, string, bool) {}
func (discard) Clear(bool)                                           {}
func (discard) Page(map[string]any)                                  {}

// displayGuarded renders v's MIME bundle and metadata, turning a panic in a
// value's display into an "internal fault" error at the statement (the statement's
// effect on the session is kept; only its display failed).
func displayGuarded(v value.Value, f *syntax.File, st syntax.Stmt) (b, md map[string]any, err error) {
	defer func() {
		if r := recover(); r != nil {
			b, md = nil, nil
			err = &eval.Error{Name: value.ClassInternal, Msg: fmt.Sprintf("internal error while displaying a %s: %v (please report this input)", v.Type(), r),
				File: f, Pos: st.Pos(), End: st.End()}
		}
	}()
	b, md = display.Render(v)
	if b == nil {
		return nil, nil, nil
	}
	return b, md, nil
}

// execGuarded runs one statement and turns a panic (a bug, or misuse
// inside a builtin) into an "internal fault" error at the statement, so a
// session survives it. Tests treat "internal fault" as a failure.
func execGuarded(ctx context.Context, in *eval.Interp, f *syntax.File, st syntax.Stmt) (v value.Value, err error) {
	defer func() {
		if r := recover(); r != nil {
			v = nil
			err = &eval.Error{Name: value.ClassInternal, Msg: fmt.Sprintf("internal error: %v (please report this input)", r),
				File: f, Pos: st.Pos(), End: st.End()}
		}
	}()
	return in.Exec(ctx, f, st)
}

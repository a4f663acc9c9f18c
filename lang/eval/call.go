package eval

import (
	"context"
	"fmt"
	"strings"
	"time"

	"semiflow/lang/syntax"
	"semiflow/lang/value"
)

// Native is a function implemented in Go (a builtin). The evaluator binds
// the call's arguments to Params — positional first, then named, then the
// defaults — before calling CallNative.
type Native interface {
	value.Callable
	CallNative(c *Call) (value.Value, error)
}

// Call is one call of a Native: the bound arguments and access to the
// interpreter (output, limits, calling function values).
type Call struct {
	Interp *Interp
	Ctx    context.Context
	Name   string
	// Args holds one value per non-variadic parameter, in order, defaults
	// filled in. A Lazy parameter's value is a value.Thunk until forced.
	Args []value.Value
	// Rest holds the arguments collected by a variadic parameter.
	Rest []value.Value

	sc       *scope
	site     syntax.Node
	progress []*progressDisplay
}

// progressDisplay is one progress display a call has shown.
type progressDisplay struct {
	id          string
	shown       bool
	done, total int
}

// Out is where the call writes output.
func (c *Call) Out() Output { return c.Interp.Out }

// Arg returns argument i forced (see value.Thunk).
func (c *Call) Arg(i int) (value.Value, error) { return value.Force(c.Args[i]) }

// Tick charges n units of work to the evaluation's budget and reports
// cancellation; loops over many elements call it.
func (c *Call) Tick(n int) error { return c.Interp.tick(c.sc, c.site, n) }

// CheckSize returns an error if a result of n entries exceeds the limit.
func (c *Call) CheckSize(n float64, what string) error { return c.Interp.checkSize(n, what) }

// Apply calls the function value f with positional arguments args.
func (c *Call) Apply(f value.Value, args ...value.Value) (value.Value, error) {
	v, err := c.Interp.callValue(c.sc, c.site, f, args, nil)
	if err != nil {
		return nil, err
	}
	return value.Force(v)
}

// Closure is a user function: a one-line definition f(x, k=2) = body or
// an anonymous function x -> body. Its body is evaluated with the
// parameters bound, the local names of the function or where ( ) it was
// written in (an anonymous function keeps them), and the session variables
// as they are at the time of the call. Defaults are evaluated at
// definition.
type Closure struct {
	File   *syntax.File
	name   string
	text   string // the source text of the definition
	body   syntax.Expr
	params []value.Param
	names  []string
	outer  *scope // nil for a definition at the top level
}

func (f *Closure) Type() string          { return "function" }
func (f *Closure) String() string        { return f.text }
func (f *Closure) Name() string          { return f.name }
func (f *Closure) Params() []value.Param { return f.params }

// AnonymousName is the name an anonymous function has in messages and
// call stacks.
const AnonymousName = "anonymous function"

// funcLit makes the function value of an anonymous function written in sc.
func (in *Interp) funcLit(sc *scope, e *syntax.FuncLit) *Closure {
	c := &Closure{File: sc.file, name: AnonymousName, text: exprText(sc.file, e), body: e.Body}
	if sc.outer != nil || len(sc.names) > 0 {
		c.outer = sc
	}
	for _, p := range e.Params {
		c.params = append(c.params, value.Param{Name: p.Name.Name})
		c.names = append(c.names, p.Name.Name)
	}
	return c
}

// SignatureText formats a signature as name(a, b, n=50, values...).
func SignatureText(name string, params []value.Param) string {
	parts := make([]string, len(params))
	for i, p := range params {
		switch {
		case p.Variadic:
			parts[i] = p.Name + "..."
		case p.Default != nil:
			parts[i] = p.Name + "=" + p.Default.String()
		default:
			parts[i] = p.Name
		}
	}
	if name == AnonymousName {
		return "(" + strings.Join(parts, ", ") + ") -> …"
	}
	return name + "(" + strings.Join(parts, ", ") + ")"
}

type namedArg struct {
	name *syntax.Ident
	val  value.Value
	node syntax.Node
}

// thunk is an unevaluated argument for a Lazy parameter.
type thunk struct {
	in   *Interp
	sc   *scope
	x    syntax.Expr
	done bool
	v    value.Value
	err  error
}

func (t *thunk) Type() string   { return "unevaluated" }
func (t *thunk) String() string { return "<unevaluated>" }
func (t *thunk) Force() (value.Value, error) {
	if !t.done {
		t.v, t.err = t.in.evalValue(t.sc, t.x)
		t.done = true
	}
	return t.v, t.err
}

func (in *Interp) evalCall(sc *scope, e *syntax.CallExpr) (value.Value, error) {
	var f value.Value
	var err error
	if id, ok := e.Fun.(*syntax.Ident); ok {
		f, err = in.lookup(sc, id, "function")
	} else {
		f, err = in.evalValue(sc, e.Fun)
	}
	if err != nil {
		return nil, err
	}
	fn, ok := f.(value.Callable)
	if !ok {
		return nil, in.errorf(sc, e.Fun, value.ClassType, "%s is a %s, not a function", exprText(sc.file, e.Fun), value.TypeName(f))
	}
	params := fn.Params()
	var pos []value.Value
	var posNodes []syntax.Node
	var named []namedArg
	for _, a := range e.Args {
		lazy := false
		if a.Name != nil {
			for _, p := range params {
				if p.Name == a.Name.Name && p.Lazy {
					lazy = true
				}
			}
		} else if i := len(pos); i < len(params) && params[i].Lazy && !params[i].Variadic {
			lazy = true
		}
		var v value.Value
		if lazy {
			v = &thunk{in: in, sc: sc, x: a.Value}
		} else if v, err = in.evalValue(sc, a.Value); err != nil {
			return nil, err
		}
		if a.Name != nil {
			named = append(named, namedArg{name: a.Name, val: v, node: a})
		} else {
			pos = append(pos, v)
			posNodes = append(posNodes, a.Value)
		}
	}
	return in.callArgs(sc, e, fn, pos, posNodes, named)
}

// callValue calls f on behalf of a builtin (map, ...) at site.
func (in *Interp) callValue(sc *scope, site syntax.Node, f value.Value, args []value.Value, named []namedArg) (value.Value, error) {
	fn, ok := f.(value.Callable)
	if !ok {
		return nil, in.errorf(sc, site, value.ClassType, "a %s is not a function", value.TypeName(f))
	}
	return in.callArgs(sc, site, fn, args, nil, named)
}

// bind matches positional and named arguments to params.
func (in *Interp) bind(sc *scope, site syntax.Node, name string, params []value.Param, pos []value.Value, posNodes []syntax.Node, named []namedArg) (args, rest []value.Value, err error) {
	fixed := len(params)
	variadic := fixed > 0 && params[fixed-1].Variadic
	if variadic {
		fixed--
	}
	args = make([]value.Value, fixed)
	if len(pos) > fixed && !variadic {
		at := site
		if len(posNodes) > fixed {
			at = posNodes[fixed]
		}
		return nil, nil, in.errorf(sc, at, value.ClassType, "%s takes %s, got %d: %s", name, countArgs(fixed), len(pos), SignatureText(name, params))
	}
	for i, v := range pos {
		if i < fixed {
			args[i] = v
		} else {
			rest = append(rest, v)
		}
	}
	for _, a := range named {
		k := -1
		for i := 0; i < fixed; i++ {
			if params[i].Name == a.name.Name {
				k = i
			}
		}
		if k < 0 {
			names := make([]string, fixed)
			for i := range names {
				names[i] = params[i].Name
			}
			msg := fmt.Sprintf("%s has no parameter named %s", name, syntax.Shorten(a.name.Name, syntax.QuoteWidth))
			if s := suggest(a.name.Name, names); s != "" {
				msg += fmt.Sprintf("; did you mean %s?", s)
			}
			return nil, nil, &Error{Name: value.ClassType, Msg: msg + "; signature: " + SignatureText(name, params), File: sc.file, Pos: a.name.Pos(), End: a.name.End()}
		}
		if args[k] != nil {
			return nil, nil, &Error{Name: value.ClassType, Msg: fmt.Sprintf("argument %s of %s is given twice", a.name.Name, name), File: sc.file, Pos: a.name.Pos(), End: a.name.End()}
		}
		args[k] = a.val
	}
	for i := range args {
		if args[i] == nil {
			if params[i].Default == nil {
				return nil, nil, in.errorf(sc, site, value.ClassType, "%s is missing argument %s: %s", name, params[i].Name, SignatureText(name, params))
			}
			args[i] = params[i].Default
		}
	}
	return args, rest, nil
}

func countArgs(n int) string {
	if n == 1 {
		return "1 argument"
	}
	return fmt.Sprintf("%d arguments", n)
}

func (in *Interp) callArgs(sc *scope, site syntax.Node, fn value.Callable, pos []value.Value, posNodes []syntax.Node, named []namedArg) (value.Value, error) {
	name := fn.Name()
	args, rest, err := in.bind(sc, site, name, fn.Params(), pos, posNodes, named)
	if err != nil {
		return nil, err
	}
	if err := in.tick(sc, site, 1); err != nil {
		return nil, err
	}
	switch f := fn.(type) {
	case *Closure:
		if in.depth >= in.Limits.MaxDepth {
			return nil, in.errorf(sc, site, value.ClassDepth, "calls nested more than %d deep (in %s); a recursive function needs when(...) to stop", in.Limits.MaxDepth, name)
		}
		for i := range args {
			v, err := value.Force(args[i])
			if err != nil {
				return nil, err
			}
			args[i] = v
		}
		in.depth++
		v, err := in.evalValue(&scope{file: f.File, names: f.names, locals: args, outer: f.outer}, f.body)
		in.depth--
		if err != nil {
			if e, ok := err.(*Error); ok && e.Name != value.ClassInterrupted && e.Name != value.ClassWork {
				fr := Frame{Func: name, File: sc.file, Pos: site.Pos(), End: site.End()}
				if n := len(e.Stack); n > 0 && e.Stack[n-1].File == fr.File && e.Stack[n-1].Pos == fr.Pos && e.Stack[n-1].Func == fr.Func {
					e.Stack[n-1].Repeat++
				} else if n < 20 {
					e.Stack = append(e.Stack, fr)
				}
			}
			return nil, err
		}
		return v, nil
	case Native:
		c := &Call{Interp: in, Ctx: in.ctx, Name: name, Args: args, Rest: rest, sc: sc, site: site}
		v, err := f.CallNative(c)
		c.finishProgress(err)
		if err != nil {
			return nil, in.wrap(sc, site, err)
		}
		if v == nil {
			v = value.None
		}
		return v, in.chargeResult(sc, site, v)
	}
	return nil, in.errorf(sc, site, value.ClassType, "%s cannot be called", name)
}

// Progress returns a callback for long computations, func(done, total
// int), that shows "name: done/total (p%)" in one display updated in place,
// at most every 200 ms and once at completion. Long builtins pass it to
// numerics routines that accept a progress callback. When the call returns,
// a display that was shown is replaced: by an empty bundle when the call
// succeeded (its result follows as the cell's output), or by a line saying
// where the work stopped when it was interrupted or failed.
func (c *Call) Progress() func(done, total int) {
	in := c.Interp
	in.progressSeq++
	p := &progressDisplay{id: fmt.Sprintf("progress-%s-%d", c.Name, in.progressSeq)}
	c.progress = append(c.progress, p)
	var last time.Time
	return func(done, total int) {
		p.done, p.total = done, total
		now := time.Now()
		if done < total && now.Sub(last) < 200*time.Millisecond {
			return
		}
		last = now
		in.Out.Display(map[string]any{"text/plain": progressText(c.Name, done, total)}, map[string]any{}, p.id, p.shown)
		p.shown = true
	}
}

func progressText(name string, done, total int) string {
	pct := 100.0
	if total > 0 {
		pct = 100 * float64(done) / float64(total)
	}
	return fmt.Sprintf("%s: %d/%d (%.0f%%)", name, done, total, pct)
}

// finishProgress replaces the call's shown progress displays once it has
// returned with err (see Progress).
func (c *Call) finishProgress(err error) {
	for _, p := range c.progress {
		if !p.shown {
			continue
		}
		text := ""
		switch {
		case err == nil:
		case c.Ctx != nil && c.Ctx.Err() != nil:
			text = progressText(c.Name, p.done, p.total) + " — interrupted"
		default:
			text = progressText(c.Name, p.done, p.total) + " — stopped by an error"
		}
		c.Interp.Out.Display(map[string]any{"text/plain": text}, map[string]any{}, p.id, true)
	}
	c.progress = nil
}

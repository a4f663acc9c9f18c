// Package eval evaluates parsed Semiflow statements against an environment
// of session variables and a table of builtins.
//
// Evaluation is bounded: user-function calls nest at most Limits.MaxDepth
// deep, vectors and matrices hold at most Limits.MaxElements entries, an
// optional work budget (Limits.MaxSteps) stops runaway computations, and the
// context passed to Exec is checked regularly (every node, element loop and
// call), so cancelling it stops evaluation within a fraction of a second.
package eval

import (
	"context"
	"fmt"
	"math"
	"sort"

	"semiflow/lang/syntax"
	"semiflow/lang/value"
)

// Output receives what a statement emits while it runs (print, show, ...).
type Output interface {
	Stream(name, text string)
	Display(data, metadata map[string]any, displayID string, update bool)
	Clear(wait bool)
	Page(data map[string]any)
}

// Builtins is the table of predefined names.
type Builtins interface {
	Lookup(name string) (value.Value, bool)
	Names() []string
}

// Renamer is implemented by Builtins that still answer to former names:
// Renamed returns the present name of a former one. An Interp warns on
// standard error, once per name, where a former name is used.
type Renamer interface {
	Renamed(name string) (now string, ok bool)
}

// Limits bound the work of one evaluation.
type Limits struct {
	MaxDepth    int   // nesting of user-function calls
	MaxElements int   // entries of one vector or matrix
	MaxSteps    int64 // work units (nodes, elements, calls); 0 means no limit
}

// DefaultLimits are the limits of a session.
var DefaultLimits = Limits{MaxDepth: 500, MaxElements: 1 << 24}

// MaxNesting bounds how many expressions may be under evaluation at once,
// counted across user-function calls: the parser bounds one expression's
// depth (syntax.MaxDepth) and Limits.MaxDepth bounds the calls, and this
// bounds their product, so that no input can exhaust the goroutine's stack
// (a fatal error that no recover catches). It costs about 1 kB of stack per
// level.
const MaxNesting = 20000

// Interp evaluates statements. Globals holds the session variables; it is
// changed only by statements that complete without error.
type Interp struct {
	Globals  map[string]value.Value
	Builtins Builtins
	Out      Output
	Limits   Limits
	// DisplayIDs records the display ids shown so far, so that showing
	// one again updates it.
	DisplayIDs map[string]bool

	// State of the current Exec.
	ctx       context.Context
	steps     int64
	nextCheck int64
	depth     int // user-function calls under way
	nest      int // expressions under evaluation (see MaxNesting)

	progressSeq int
	renamed     map[string]bool // former builtin names already warned about
}

// New returns an interpreter over globals (created if nil).
func New(globals map[string]value.Value, builtins Builtins, out Output) *Interp {
	if globals == nil {
		globals = map[string]value.Value{}
	}
	return &Interp{Globals: globals, Builtins: builtins, Out: out, Limits: DefaultLimits}
}

// Steps is the work done so far (see Limits.MaxSteps).
func (in *Interp) Steps() int64 { return in.steps }

// scope is where an expression is evaluated: its file (for positions) and,
// inside a user function or a where ( ), the local names; outer is the
// scope an anonymous function or a where ( ) was written in.
type scope struct {
	file   *syntax.File
	names  []string // parameter and local names, in order
	locals []value.Value
	outer  *scope
	index  map[string]int // name → its last position, once there are many names
}

// indexAbove is the number of names from which a scope looks names up in
// a map rather than by a scan (a where ( ) with thousands of definitions
// would otherwise cost a scan per name used).
const indexAbove = 16

// bind adds a local name (a where ( ) definition).
func (sc *scope) bind(name string, v value.Value) {
	sc.names = append(sc.names, name)
	sc.locals = append(sc.locals, v)
	if sc.index == nil && len(sc.names) > indexAbove {
		sc.index = make(map[string]int, 2*len(sc.names))
		for i, n := range sc.names {
			sc.index[n] = i
		}
	} else if sc.index != nil {
		sc.index[name] = len(sc.names) - 1
	}
}

// MaxScopes bounds the chain of scopes a name is looked up in (nested
// anonymous functions and where ( ) inside one another). The parser's
// depth bound keeps a chain far below it; the bound keeps lookups cheap
// whatever the input.
const MaxScopes = syntax.MaxDepth

func (sc *scope) local(name string) (value.Value, bool) {
	for s, k := sc, 0; s != nil && k <= MaxScopes; s, k = s.outer, k+1 {
		if s.index != nil {
			if i, ok := s.index[name]; ok {
				return s.locals[i], true
			}
			continue
		}
		for i := len(s.names) - 1; i >= 0; i-- {
			if s.names[i] == name {
				return s.locals[i], true
			}
		}
	}
	return nil, false
}

// Exec runs one statement of file. For an expression statement it returns
// the value; for assignments and definitions it returns nil. The statement
// either completes (and its assignment takes effect) or returns an *Error
// and changes nothing.
func (in *Interp) Exec(ctx context.Context, file *syntax.File, st syntax.Stmt) (v value.Value, err error) {
	in.ctx = ctx
	in.depth, in.nest = 0, 0
	sc := &scope{file: file}
	if err := in.tick(sc, st, 1); err != nil {
		return nil, err
	}
	switch s := st.(type) {
	case *syntax.ExprStmt:
		v, err := in.eval(sc, s.X)
		if err != nil {
			return nil, err
		}
		return value.Force(v)
	case *syntax.AssignStmt:
		v, err := in.eval(sc, s.Value)
		if err != nil {
			return nil, err
		}
		if v == value.None {
			return nil, in.errorf(sc, s.Value, value.ClassValue, "%s has no value to assign", exprText(file, s.Value))
		}
		in.Globals[s.Name.Name] = v
		return nil, nil
	case *syntax.FuncDef:
		c := &Closure{name: s.Name.Name, text: s.Text, body: s.Body, File: file}
		for _, p := range s.Params {
			prm := value.Param{Name: p.Name.Name}
			if p.Default != nil {
				d, err := in.eval(sc, p.Default)
				if err != nil {
					return nil, err
				}
				prm.Default = d
			}
			c.params = append(c.params, prm)
			c.names = append(c.names, prm.Name)
		}
		in.Globals[s.Name.Name] = c
		return nil, nil
	}
	return nil, &Error{Name: value.ClassSyntax, Msg: "statement did not parse", File: file, Pos: st.Pos(), End: st.End()}
}

func exprText(f *syntax.File, n syntax.Node) string {
	a, b := int(n.Pos()), int(n.End())
	if a < 0 || b > len(f.Src) || a > b {
		return "expression"
	}
	return syntax.Shorten(f.Src[a:b], syntax.QuoteWidth)
}

// errorf returns an *Error of class name at node n.
func (in *Interp) errorf(sc *scope, n syntax.Node, name, format string, args ...any) *Error {
	return &Error{Name: name, Msg: fmt.Sprintf(format, args...), File: sc.file, Pos: n.Pos(), End: n.End()}
}

// wrap gives err the position of n unless it already has one.
func (in *Interp) wrap(sc *scope, n syntax.Node, err error) error {
	switch e := err.(type) {
	case nil:
		return nil
	case *Error:
		return e
	case *value.Error:
		return &Error{Name: e.Name, Msg: e.Msg, File: sc.file, Pos: n.Pos(), End: n.End()}
	}
	return &Error{Name: value.ClassOther, Msg: err.Error(), File: sc.file, Pos: n.Pos(), End: n.End()}
}

// tick charges n units of work and checks the budget and the context.
func (in *Interp) tick(sc *scope, at syntax.Node, n int) error {
	in.steps += int64(n)
	if in.Limits.MaxSteps > 0 && in.steps > in.Limits.MaxSteps {
		return in.errorf(sc, at, value.ClassWork, "evaluation exceeded the work limit of %d steps", in.Limits.MaxSteps)
	}
	if in.steps >= in.nextCheck {
		in.nextCheck = in.steps + 1024
		if in.ctx != nil && in.ctx.Err() != nil {
			return in.errorf(sc, at, value.ClassInterrupted, "interrupted")
		}
	}
	return nil
}

// checkSize refuses a vector or matrix of n entries above the limit.
func (in *Interp) checkSize(n float64, what string) error {
	if n > float64(in.Limits.MaxElements) || math.IsNaN(n) {
		return value.ValueErrorf("%s would have %s entries, more than the limit of %d", what, value.FormatNum(n), in.Limits.MaxElements)
	}
	return nil
}

func (in *Interp) eval(sc *scope, x syntax.Expr) (value.Value, error) {
	if err := in.tick(sc, x, 1); err != nil {
		return nil, err
	}
	if in.nest >= MaxNesting {
		return nil, in.errorf(sc, x, value.ClassDepth, "more than %d expressions under evaluation at once (deep expressions inside nested calls); split the expression with intermediate names or call less deeply", MaxNesting)
	}
	in.nest++
	v, err := in.evalNode(sc, x)
	in.nest--
	return v, err
}

// evalNode evaluates one node; eval counts the nesting around it.
func (in *Interp) evalNode(sc *scope, x syntax.Expr) (value.Value, error) {
	switch e := x.(type) {
	case *syntax.NumberLit:
		if e.Imag {
			return value.Complex(complex(0, e.Value)), nil
		}
		return value.Num(e.Value), nil
	case *syntax.StringLit:
		return value.Str(e.Value), nil
	case *syntax.Ident:
		return in.lookup(sc, e, "name")
	case *syntax.ParenExpr:
		return in.eval(sc, e.X)
	case *syntax.VectorLit:
		return in.evalVector(sc, e)
	case *syntax.MatrixLit:
		return in.evalMatrix(sc, e)
	case *syntax.UnaryExpr:
		return in.evalUnary(sc, e)
	case *syntax.BinaryExpr:
		return in.evalBinary(sc, e)
	case *syntax.RangeExpr:
		return in.evalRange(sc, e)
	case *syntax.CallExpr:
		return in.evalCall(sc, e)
	case *syntax.IndexExpr:
		return in.evalIndex(sc, e)
	case *syntax.FuncLit:
		return in.funcLit(sc, e), nil
	case *syntax.WhereExpr:
		return in.evalWhere(sc, e)
	case *syntax.WithExpr:
		return in.evalWith(sc, e)
	case *syntax.FieldExpr:
		return in.evalField(sc, e)
	}
	return nil, in.errorf(sc, x, value.ClassSyntax, "expression did not parse")
}

// evalValue evaluates x and forces a lazy result.
func (in *Interp) evalValue(sc *scope, x syntax.Expr) (value.Value, error) {
	v, err := in.eval(sc, x)
	if err != nil {
		return nil, err
	}
	v, err = value.Force(v)
	return v, in.wrap(sc, x, err)
}

func (in *Interp) lookup(sc *scope, id *syntax.Ident, what string) (value.Value, error) {
	if v, ok := sc.local(id.Name); ok {
		return v, nil
	}
	if v, ok := in.Globals[id.Name]; ok {
		return v, nil
	}
	if in.Builtins != nil {
		if v, ok := in.Builtins.Lookup(id.Name); ok {
			in.warnRenamed(sc, id)
			return v, nil
		}
	}
	msg := fmt.Sprintf("unknown %s %s", what, syntax.Shorten(id.Name, syntax.QuoteWidth))
	if s := suggest(id.Name, in.knownNames(sc)); s != "" {
		msg += fmt.Sprintf("; did you mean %s?", s)
	}
	return nil, &Error{Name: value.ClassName, Msg: msg, File: sc.file, Pos: id.Pos(), End: id.End()}
}

// warnRenamed warns, once per name in this Interp's life (one cell), when
// id is a builtin's former name.
func (in *Interp) warnRenamed(sc *scope, id *syntax.Ident) {
	r, ok := in.Builtins.(Renamer)
	if !ok || in.renamed[id.Name] || in.Out == nil {
		return
	}
	now, ok := r.Renamed(id.Name)
	if !ok {
		return
	}
	if in.renamed == nil {
		in.renamed = map[string]bool{}
	}
	in.renamed[id.Name] = true
	p := sc.file.Position(id.Pos())
	in.Out.Stream("stderr", fmt.Sprintf("warning: %d:%d: %s is now called %s; the old name goes in the next release\n", p.Line, p.Column, id.Name, now))
}

func (in *Interp) knownNames(sc *scope) []string {
	var names []string
	for s, k := sc, 0; s != nil && k <= MaxScopes; s, k = s.outer, k+1 {
		names = append(names, s.names...)
	}
	for k := range in.Globals {
		names = append(names, k)
	}
	if in.Builtins != nil {
		names = append(names, in.Builtins.Names()...)
	}
	sort.Strings(names)
	return names
}

func (in *Interp) evalVector(sc *scope, e *syntax.VectorLit) (value.Value, error) {
	elems := make(value.List, len(e.Elems))
	for i, x := range e.Elems {
		v, err := in.evalValue(sc, x)
		if err != nil {
			return nil, err
		}
		elems[i] = v
	}
	r := value.Collect(elems)
	if l, ok := r.(value.List); ok {
		depth, size := value.ListShape(l, value.MaxListDepth)
		if depth > value.MaxListDepth {
			return nil, in.errorf(sc, e, value.ClassValue, "lists nest at most %d deep", value.MaxListDepth)
		}
		if err := in.checkSize(size, "the list, counting the entries of the lists it holds,"); err != nil {
			return nil, in.wrap(sc, e, err)
		}
	}
	return r, nil
}

func (in *Interp) evalMatrix(sc *scope, e *syntax.MatrixLit) (value.Value, error) {
	rows := len(e.Rows)
	cols := len(e.Rows[0])
	m := value.NewMatrix(rows, cols)
	var cm *value.CMatrix // set at the first complex entry
	for i, r := range e.Rows {
		if len(r) != cols {
			return nil, in.errorf(sc, e, value.ClassValue, "matrix row %d has %d entries but row 1 has %d", i+1, len(r), cols)
		}
		for j, x := range r {
			v, err := in.evalValue(sc, x)
			if err != nil {
				return nil, err
			}
			switch n := v.(type) {
			case value.Num:
				if cm != nil {
					cm.Data[i*cols+j] = complex(float64(n), 0)
				} else {
					m.Data[i*cols+j] = float64(n)
				}
			case value.Complex:
				if cm == nil {
					cm = value.Complexify(m)
				}
				cm.Data[i*cols+j] = complex128(n)
			default:
				return nil, in.errorf(sc, x, value.ClassType, "matrix entries must be numbers (real or complex); entry (%d, %d) is of type %s", i, j, value.TypeName(v))
			}
		}
	}
	if cm != nil {
		return cm, nil
	}
	return m, nil
}

func (in *Interp) evalUnary(sc *scope, e *syntax.UnaryExpr) (value.Value, error) {
	v, err := in.evalValue(sc, e.X)
	if err != nil {
		return nil, err
	}
	if e.Op == syntax.NOT {
		b, ok := v.(value.Bool)
		if !ok {
			return nil, in.errorf(sc, e.X, value.ClassType, "not needs true or false, got %s", value.TypeName(v))
		}
		return !b, nil
	}
	r, err := value.Unary(e.Op, v)
	if err != nil {
		return nil, in.wrap(sc, e, err)
	}
	return r, in.chargeResult(sc, e, r)
}

// chargeResult charges the work of building r (one unit per entry).
func (in *Interp) chargeResult(sc *scope, at syntax.Node, r value.Value) error {
	switch t := r.(type) {
	case *value.Vec:
		return in.tick(sc, at, t.Len())
	case *value.Matrix:
		return in.tick(sc, at, len(t.Data))
	case *value.CMatrix:
		return in.tick(sc, at, 4*len(t.Data))
	case value.Str:
		if len(t) > in.Limits.MaxElements {
			return in.errorf(sc, at, value.ClassValue, "string of %d bytes, more than the limit of %d", len(t), in.Limits.MaxElements)
		}
		return in.tick(sc, at, len(t)/16)
	case value.List:
		return in.tick(sc, at, len(t))
	}
	return nil
}

func (in *Interp) evalBinary(sc *scope, e *syntax.BinaryExpr) (value.Value, error) {
	x, err := in.evalValue(sc, e.X)
	if err != nil {
		return nil, err
	}
	if e.Op == syntax.AND || e.Op == syntax.OR {
		b, ok := x.(value.Bool)
		if !ok {
			return nil, in.errorf(sc, e.X, value.ClassType, "%s needs true or false on its left, got %s", e.Op, value.TypeName(x))
		}
		if bool(b) == (e.Op == syntax.OR) {
			return b, nil
		}
		y, err := in.evalValue(sc, e.Y)
		if err != nil {
			return nil, err
		}
		c, ok := y.(value.Bool)
		if !ok {
			return nil, in.errorf(sc, e.Y, value.ClassType, "%s needs true or false on its right, got %s", e.Op, value.TypeName(y))
		}
		return c, nil
	}
	y, err := in.evalValue(sc, e.Y)
	if err != nil {
		return nil, err
	}
	switch a := x.(type) {
	case *value.Matrix, *value.CMatrix:
		if err := in.chargeMatrix(sc, e, e.Op, a.(value.Indexable2), y); err != nil {
			return nil, err
		}
	}
	r, err := value.Binary(e.Op, x, y)
	if err != nil {
		return nil, in.wrap(sc, e, err)
	}
	return r, in.chargeResult(sc, e, r)
}

// chargeMatrix checks the size and charges the work of a matrix product or
// power before it is computed.
func (in *Interp) chargeMatrix(sc *scope, e syntax.Node, op syntax.Token, a value.Indexable2, y value.Value) error {
	var work float64
	ar, ac := a.Dims()
	_, cplx := a.(*value.CMatrix)
	if _, ok := y.(*value.CMatrix); ok {
		cplx = true
	}
	switch b := y.(type) {
	case *value.Matrix, *value.CMatrix:
		br, bc := b.(value.Indexable2).Dims()
		if op == syntax.MUL && ac == br {
			if err := in.checkSize(float64(ar)*float64(bc), "the matrix product"); err != nil {
				return in.wrap(sc, e, err)
			}
			work = float64(ar) * float64(ac) * float64(bc)
		}
	case value.Num, value.Complex:
		k, _ := b.(value.Num)
		if z, ok := b.(value.Complex); ok {
			k = value.Num(real(z))
		}
		if op == syntax.POW && float64(k) >= 1 && ar == ac {
			n := float64(ar)
			work = n * n * n * 2 * math.Ceil(math.Log2(float64(k)+1))
		}
	}
	if cplx {
		work *= 4 // a complex multiply-add is four real ones
	}
	if work > 0 {
		if work > 1e15 {
			work = 1e15
		}
		return in.tick(sc, e, int(work/16))
	}
	return nil
}

func (in *Interp) realOperand(sc *scope, x syntax.Expr, what string) (float64, error) {
	v, err := in.evalValue(sc, x)
	if err != nil {
		return 0, err
	}
	n, ok := v.(value.Num)
	if !ok {
		return 0, in.errorf(sc, x, value.ClassType, "%s must be a real number, not %s", what, value.TypeName(v))
	}
	return float64(n), nil
}

func (in *Interp) evalRange(sc *scope, e *syntax.RangeExpr) (value.Value, error) {
	lo, err := in.realOperand(sc, e.Lo, "the start of a range")
	if err != nil {
		return nil, err
	}
	hi, err := in.realOperand(sc, e.Hi, "the end of a range")
	if err != nil {
		return nil, err
	}
	step := 1.0
	if e.Step != nil {
		if step, err = in.realOperand(sc, e.Step, "the step of a range"); err != nil {
			return nil, err
		}
	}
	return in.makeRange(sc, e, lo, hi, step)
}

func (in *Interp) makeRange(sc *scope, e syntax.Node, lo, hi, step float64) (value.Value, error) {
	for _, x := range []float64{lo, hi, step} {
		if math.IsInf(x, 0) || math.IsNaN(x) {
			return nil, in.errorf(sc, e, value.ClassValue, "range ends and step must be finite, got %s .. %s by %s",
				value.FormatNum(lo), value.FormatNum(hi), value.FormatNum(step))
		}
	}
	if step == 0 {
		return nil, in.errorf(sc, e, value.ClassValue, "range step must not be zero")
	}
	n := value.RangeLen(lo, hi, step)
	if err := in.checkSize(n, "the range"); err != nil {
		return nil, in.wrap(sc, e, err)
	}
	return &value.Range{Lo: lo, Hi: hi, Step: step, N: int(n)}, nil
}

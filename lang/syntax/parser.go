package syntax

import (
	"fmt"
	"strconv"
	"strings"
)

// MaxNesting bounds how deeply expressions may nest (brackets, unary
// operators, powers). Deeper input is a syntax error, so the parser cannot
// exhaust the stack.
const MaxNesting = 200

// MaxDepth bounds the depth of an expression's syntax tree: each bracket,
// operator and call adds a level, so a chain 1+1+…+1 of n terms is n levels
// deep even though it nests nothing. Deeper input is a syntax error, so the
// evaluator and every walk over the tree stay far from the stack's limit.
const MaxDepth = 1000

// Parse parses src, named name, into a Script. The error, if not nil, is an
// ErrorList (sorted, at most MaxErrors entries); the Script is then partial
// but never nil.
//
// The grammar, from the loosest binding to the tightest:
//
//	Script    = { [ Stmt ] ( NEWLINE | ";" ) }
//	Stmt      = name "=" Expr | name "(" Params ")" "=" Expr | Expr
//	Params    = [ Param { "," Param } ]        Param = name [ "=" Expr ]
//	Expr      = Lambda | Or { "where" "(" Binds ")" | "with" "[" Expr { "," Expr } "]" "=" Or }
//	Lambda    = ( name | "(" [ name { "," name } ] ")" ) ( "->" | "↦" ) Expr
//	Binds     = name "=" Expr { "," name "=" Expr } [ "," ]
//	Or        = And { "or" And }
//	And       = Not { "and" Not }
//	Not       = "not" Not | Compare
//	Compare   = Range [ ( "==" | "!=" | "<" | "<=" | ">" | ">=" ) Range ]
//	Range     = Sum [ ".." Sum [ "by" Sum ] ]
//	Sum       = Term { ( "+" | "-" ) Term }
//	Term      = Unary { ( "*" | "/" | "%" ) Unary }
//	Unary     = ( "-" | "+" ) Unary | Power
//	Power     = Postfix [ "^" Unary ]          (right-associative)
//	Postfix   = Operand { "(" Args ")" | "[" Expr { "," Expr } "]" | "." name }
//	Args      = [ Arg { "," Arg } [ "," ] ]    Arg = [ name "=" ] Expr
//	Operand   = name | number | imaginary | string | "(" Expr ")"
//	          | "[" [ Expr { "," Expr } [ "," ] ] "]"
//	          | "{" Row { "|" Row } "}"        Row = Expr { "," Expr }
//
// So -a^2 is -(a^2), 2^3^2 is 2^(3^2), and 2^-1 is 2^(-1). Comparisons do
// not chain. Newlines inside brackets are ignored. An anonymous function's
// body reaches as far as an expression can (x -> x + 1 where (…) is one
// function); "where" and "with" apply to everything before them, so
// v with [0] = 1 with [1] = 2 updates twice.
func Parse(name, src string) (*Script, error) {
	s, errs := ParseFile(NewFile(name, src))
	return s, errs.Err()
}

// ParseFile is Parse on an existing File; it returns the sorted error list.
func ParseFile(f *File) (script *Script, errs ErrorList) {
	p := &parser{file: f}
	p.sc = NewScanner(f, &p.errs)
	p.next()
	script = &Script{File: f}
	defer func() {
		if r := recover(); r != nil {
			if _, ok := r.(bailout); !ok {
				panic(r)
			}
		}
		p.errs.Sort()
		errs = p.errs
	}()
	for p.tok.Tok != EOF {
		if p.tok.Tok == NEWLINE || p.tok.Tok == SEMI {
			p.next()
			continue
		}
		n := len(p.errs)
		st := p.parseStmt()
		switch p.tok.Tok {
		case NEWLINE, SEMI, EOF:
		default:
			if len(p.errs) == n {
				p.errorf(p.tok.Pos, p.tok.End, "unexpected %s after the end of a statement; put one statement per line or separate them with ;", p.describe())
			}
		}
		if len(p.errs) > n {
			for p.tok.Tok != NEWLINE && p.tok.Tok != SEMI && p.tok.Tok != EOF {
				p.next()
			}
		}
		script.Stmts = append(script.Stmts, st)
	}
	return script, nil
}

type bailout struct{}

type parser struct {
	file  *File
	sc    *Scanner
	errs  ErrorList
	tok   Item
	ahead []Item
	nest  int
	depth int // depth of the syntax tree of the expression parsed last
}

func (p *parser) next() {
	if len(p.ahead) > 0 {
		p.tok = p.ahead[0]
		p.ahead = p.ahead[1:]
		return
	}
	p.tok = p.sc.Next()
}

func (p *parser) peek() Item {
	if len(p.ahead) == 0 {
		p.ahead = append(p.ahead, p.sc.Next())
	}
	return p.ahead[0]
}

func (p *parser) errorf(pos, end Pos, format string, args ...any) {
	p.errs.Add(p.file, pos, end, fmt.Sprintf(format, args...))
	if len(p.errs) >= 4*MaxErrors { // plenty to sort and dedupe down to MaxErrors
		panic(bailout{})
	}
}

// describe names the current token for messages.
func (p *parser) describe() string {
	switch p.tok.Tok {
	case IDENT:
		return fmt.Sprintf("name %s", Shorten(p.tok.Lit, QuoteWidth))
	case NUMBER, IMAG:
		return fmt.Sprintf("number %s", Shorten(p.tok.Lit, QuoteWidth))
	case STRING:
		return "string"
	case EOF, NEWLINE:
		return p.tok.Tok.String()
	case ILLEGAL:
		return fmt.Sprintf("%q", p.tok.Lit)
	}
	return fmt.Sprintf("'%s'", p.tok.Tok)
}

// expectClose consumes a closing token tok that matches the opener at open
// and returns its position. When it is missing it reports an error and
// returns the position just before the current token, so that the node's
// End stays inside the input.
func (p *parser) expectClose(tok Token, open Pos) Pos {
	pos := p.tok.Pos
	if p.tok.Tok == tok {
		p.next()
		return pos
	}
	opener := map[Token]string{RPAREN: "(", RBRACK: "[", RBRACE: "{"}[tok]
	p.errorf(p.tok.Pos, p.tok.End, "expected %s to close the %s at %d:%d, found %s",
		tok, opener, p.file.Position(open).Line, p.file.Position(open).Column, p.describe())
	if pos > open {
		pos--
	}
	return pos
}

func (p *parser) enter() {
	p.nest++
	if p.nest > MaxNesting {
		p.errorf(p.tok.Pos, p.tok.End, "expression nested too deeply (more than %d levels)", MaxNesting)
		panic(bailout{})
	}
}

func (p *parser) leave() { p.nest-- }

// deepen sets the depth of a new node whose deepest child is d levels deep,
// at the operator or bracket at pos. Beyond MaxDepth the parse stops, so a
// megabyte-long chain costs no more than its first MaxDepth operators.
func (p *parser) deepen(d int, pos Pos) {
	p.depth = d + 1
	if p.depth > MaxDepth {
		p.errorf(pos, pos+1, "expression too long or nested too deeply: more than %d levels of operators, brackets and calls; split it with intermediate names", MaxDepth)
		panic(bailout{})
	}
}

func (p *parser) parseStmt() Stmt {
	start := p.tok.Pos
	x := p.parseExpr()
	if p.tok.Tok != ASSIGN {
		return &ExprStmt{X: x}
	}
	eq := p.tok.Pos
	p.next()
	switch lhs := x.(type) {
	case *Ident:
		return &AssignStmt{Name: lhs, Eq: eq, Value: p.parseExpr()}
	case *CallExpr:
		name, ok := lhs.Fun.(*Ident)
		if !ok {
			p.errorf(lhs.Fun.Pos(), lhs.Fun.End(), "a function definition needs a plain name before (")
			break
		}
		def := &FuncDef{Name: name, Eq: eq}
		seen := map[string]bool{}
		for _, a := range lhs.Args {
			prm := &Param{}
			if a.Name != nil {
				prm.Name, prm.Default = a.Name, a.Value
			} else if id, ok := a.Value.(*Ident); ok {
				prm.Name = id
				if len(def.Params) > 0 && def.Params[len(def.Params)-1].Default != nil {
					p.errorf(id.Pos(), id.End(), "parameter %s without a default follows one with a default", Shorten(id.Name, QuoteWidth))
				}
			} else {
				p.errorf(a.Value.Pos(), a.Value.End(), "a parameter must be a name, optionally with a default (k=2)")
				continue
			}
			if seen[prm.Name.Name] {
				p.errorf(prm.Name.Pos(), prm.Name.End(), "duplicate parameter %s", Shorten(prm.Name.Name, QuoteWidth))
			}
			seen[prm.Name.Name] = true
			def.Params = append(def.Params, prm)
		}
		def.Body = p.parseExpr()
		end := int(def.Body.End())
		if end > len(p.file.Src) || end < int(start) {
			end = int(start)
		}
		def.Text = strings.TrimSpace(p.file.Src[start:end])
		return def
	default:
		p.errorf(x.Pos(), eq+1, "cannot assign to this expression: the left side of = must be a name (x = ...) or a function heading (f(x) = ...); equality is ==")
	}
	v := p.parseExpr()
	return &BadStmt{From: start, To: v.End()}
}

func (p *parser) parseExpr() Expr {
	x := p.parseOr()
	if p.tok.Tok == ARROW {
		return p.parseFuncLit(x)
	}
	for {
		switch p.tok.Tok {
		case WHERE:
			x = p.parseWhere(x)
		case WITH:
			x = p.parseWith(x)
		default:
			return x
		}
	}
}

// parseFuncLit parses the body of an anonymous function whose parameters,
// already parsed as an expression, are lhs.
func (p *parser) parseFuncLit(lhs Expr) Expr {
	fl := &FuncLit{Start: lhs.Pos(), Arrow: p.tok.Pos}
	var names []Expr
	switch t := lhs.(type) {
	case *Ident:
		names = []Expr{t}
	case *ParenExpr:
		names = []Expr{t.X}
	case *ParamList:
		names = t.Names
	default:
		p.errorf(lhs.Pos(), p.tok.End, "the left side of -> must be the parameters of an anonymous function: x -> …, (x, t) -> … or () -> …")
	}
	seen := map[string]bool{}
	for _, n := range names {
		id, ok := n.(*Ident)
		if !ok {
			p.errorf(n.Pos(), n.End(), "a parameter of an anonymous function must be a name (defaults belong to named functions f(x, k=2) = …)")
			continue
		}
		if seen[id.Name] {
			p.errorf(id.Pos(), id.End(), "duplicate parameter %s", Shorten(id.Name, QuoteWidth))
		}
		seen[id.Name] = true
		fl.Params = append(fl.Params, &Param{Name: id})
	}
	d := p.depth
	p.next()
	p.enter()
	fl.Body = p.parseExpr()
	p.leave()
	p.deepen(max(d, p.depth), fl.Arrow)
	return fl
}

// parseWhere parses "where (a = e1, b = e2)" after x.
func (p *parser) parseWhere(x Expr) Expr {
	w := &WhereExpr{X: x, Where: p.tok.Pos}
	d := p.depth
	p.next()
	if p.tok.Tok != LPAREN {
		p.errorf(p.tok.Pos, p.tok.End, "expected ( after where: local definitions are written x where (a = 1, b = a + 2)")
		w.Rparen = w.Where + Pos(len("where")) - 1
		return w
	}
	lp := p.tok.Pos
	p.enter()
	p.next()
	seen := map[string]bool{}
	bad := false
	for p.tok.Tok != RPAREN && p.tok.Tok != EOF {
		if p.tok.Tok != IDENT || p.peek().Tok != ASSIGN {
			bad = true
			p.errorf(p.tok.Pos, p.tok.End, "expected a local definition name = value inside where ( ), found %s (a local function is written g = y -> …)", p.describe())
			for p.tok.Tok != RPAREN && p.tok.Tok != EOF && p.tok.Tok != NEWLINE && p.tok.Tok != SEMI {
				p.next()
			}
			break
		}
		b := &Binding{Name: &Ident{NamePos: p.tok.Pos, Name: p.tok.Lit}}
		if seen[b.Name.Name] {
			p.errorf(b.Name.Pos(), b.Name.End(), "%s is defined twice in one where ( )", Shorten(b.Name.Name, QuoteWidth))
		}
		seen[b.Name.Name] = true
		p.next()
		p.next()
		b.Value = p.parseExpr()
		d = max(d, p.depth)
		w.Binds = append(w.Binds, b)
		if p.tok.Tok != COMMA {
			break
		}
		p.next()
	}
	if len(w.Binds) == 0 && !bad && p.tok.Tok == RPAREN {
		p.errorf(lp, p.tok.End, "where ( ) needs at least one definition name = value")
	}
	w.Rparen = p.expectClose(RPAREN, lp)
	p.leave()
	p.deepen(d, w.Where)
	return w
}

// parseWith parses "with [i] = v" or "with [i, j] = v" after x.
func (p *parser) parseWith(x Expr) Expr {
	w := &WithExpr{X: x, With: p.tok.Pos}
	d := p.depth
	p.next()
	if p.tok.Tok != LBRACK {
		p.errorf(p.tok.Pos, p.tok.End, "expected [ after with: an updated copy is written v with [i] = value (M with [i, j] = value)")
		w.Value = &BadExpr{From: p.tok.Pos, To: p.tok.Pos}
		return w
	}
	w.Lbrack = p.tok.Pos
	var di int
	w.Indices, w.Rbrack, di = p.parseIndices()
	d = max(d, di)
	if p.tok.Tok != ASSIGN {
		p.errorf(p.tok.Pos, p.tok.End, "expected = after %s[…]: an updated copy is written v with [i] = value", WITH)
		w.Value = &BadExpr{From: p.tok.Pos, To: p.tok.Pos}
		return w
	}
	p.next()
	p.enter()
	w.Value = p.parseOr()
	p.leave()
	p.deepen(max(d, p.depth), w.With)
	return w
}

func (p *parser) parseOr() Expr {
	x := p.parseAnd()
	for p.tok.Tok == OR {
		pos, d := p.tok.Pos, p.depth
		p.next()
		x = &BinaryExpr{X: x, OpPos: pos, Op: OR, Y: p.parseAnd()}
		p.deepen(max(d, p.depth), pos)
	}
	return x
}

func (p *parser) parseAnd() Expr {
	x := p.parseNot()
	for p.tok.Tok == AND {
		pos, d := p.tok.Pos, p.depth
		p.next()
		x = &BinaryExpr{X: x, OpPos: pos, Op: AND, Y: p.parseNot()}
		p.deepen(max(d, p.depth), pos)
	}
	return x
}

func (p *parser) parseNot() Expr {
	if p.tok.Tok == NOT {
		pos := p.tok.Pos
		p.next()
		p.enter()
		x := p.parseNot()
		p.leave()
		p.deepen(p.depth, pos)
		return &UnaryExpr{OpPos: pos, Op: NOT, X: x}
	}
	return p.parseCompare()
}

func isCompare(t Token) bool {
	return t == EQL || t == NEQ || t == LSS || t == LEQ || t == GTR || t == GEQ
}

func (p *parser) parseCompare() Expr {
	x := p.parseRange()
	if isCompare(p.tok.Tok) {
		op, pos, d := p.tok.Tok, p.tok.Pos, p.depth
		p.next()
		x = &BinaryExpr{X: x, OpPos: pos, Op: op, Y: p.parseRange()}
		p.deepen(max(d, p.depth), pos)
		if isCompare(p.tok.Tok) {
			p.errorf(p.tok.Pos, p.tok.End, "comparisons do not chain: write a < b and b < c")
		}
	}
	return x
}

func (p *parser) parseRange() Expr {
	x := p.parseSum()
	if p.tok.Tok == DOTDOT {
		r := &RangeExpr{Lo: x, Dots: p.tok.Pos}
		d := p.depth
		p.next()
		r.Hi = p.parseSum()
		d = max(d, p.depth)
		if p.tok.Tok == BY {
			p.next()
			r.Step = p.parseSum()
			d = max(d, p.depth)
		}
		p.deepen(d, r.Dots)
		if p.tok.Tok == DOTDOT {
			p.errorf(p.tok.Pos, p.tok.End, "a range has one '..'; the step is written a .. b by h")
		}
		return r
	}
	if p.tok.Tok == BY {
		p.errorf(p.tok.Pos, p.tok.End, "'by' belongs to a range: a .. b by h")
	}
	return x
}

func (p *parser) parseSum() Expr {
	x := p.parseTerm()
	for p.tok.Tok == ADD || p.tok.Tok == SUB {
		op, pos, d := p.tok.Tok, p.tok.Pos, p.depth
		p.next()
		x = &BinaryExpr{X: x, OpPos: pos, Op: op, Y: p.parseTerm()}
		p.deepen(max(d, p.depth), pos)
	}
	return x
}

func (p *parser) parseTerm() Expr {
	x := p.parseUnary()
	for p.tok.Tok == MUL || p.tok.Tok == QUO || p.tok.Tok == REM {
		op, pos, d := p.tok.Tok, p.tok.Pos, p.depth
		p.next()
		x = &BinaryExpr{X: x, OpPos: pos, Op: op, Y: p.parseUnary()}
		p.deepen(max(d, p.depth), pos)
	}
	return x
}

func (p *parser) parseUnary() Expr {
	if p.tok.Tok == SUB || p.tok.Tok == ADD {
		op, pos := p.tok.Tok, p.tok.Pos
		p.next()
		p.enter()
		x := p.parseUnary()
		p.leave()
		p.deepen(p.depth, pos)
		return &UnaryExpr{OpPos: pos, Op: op, X: x}
	}
	return p.parsePower()
}

func (p *parser) parsePower() Expr {
	x := p.parsePostfix()
	if p.tok.Tok == POW {
		pos, d := p.tok.Pos, p.depth
		p.next()
		p.enter()
		y := p.parseUnary()
		p.leave()
		p.deepen(max(d, p.depth), pos)
		return &BinaryExpr{X: x, OpPos: pos, Op: POW, Y: y}
	}
	return x
}

func (p *parser) parsePostfix() Expr {
	x := p.parseOperand()
	for {
		switch p.tok.Tok {
		case LPAREN:
			p.enter()
			call := &CallExpr{Fun: x, Lparen: p.tok.Pos}
			d := p.depth
			p.next()
			for p.tok.Tok != RPAREN && p.tok.Tok != EOF {
				a := &Arg{}
				if p.tok.Tok == IDENT && p.peek().Tok == ASSIGN {
					a.Name = &Ident{NamePos: p.tok.Pos, Name: p.tok.Lit}
					p.next()
					p.next()
				} else if len(call.Args) > 0 && call.Args[len(call.Args)-1].Name != nil {
					p.errorf(p.tok.Pos, p.tok.End, "positional argument after a named argument")
				}
				a.Value = p.parseExpr()
				d = max(d, p.depth)
				call.Args = append(call.Args, a)
				if p.tok.Tok != COMMA {
					break
				}
				p.next()
			}
			call.Rparen = p.expectClose(RPAREN, call.Lparen)
			p.leave()
			p.deepen(d, call.Lparen)
			x = call
		case LBRACK:
			ix := &IndexExpr{X: x, Lbrack: p.tok.Pos}
			d := p.depth
			var di int
			ix.Indices, ix.Rbrack, di = p.parseIndices()
			p.deepen(max(d, di), ix.Lbrack)
			x = ix
		case DOT:
			dot, d := p.tok.Pos, p.depth
			p.next()
			if p.tok.Tok != IDENT {
				p.errorf(p.tok.Pos, p.tok.End, "expected a name after '.', found %s: a named number of a report is written r.name (or r[\"name\"])", p.describe())
				return &BadExpr{From: x.Pos(), To: p.tok.Pos}
			}
			x = &FieldExpr{X: x, Dot: dot, Name: &Ident{NamePos: p.tok.Pos, Name: p.tok.Lit}}
			p.next()
			p.deepen(d, dot)
		default:
			return x
		}
	}
}

func (p *parser) parseOperand() Expr {
	it := p.tok
	p.depth = 1
	switch it.Tok {
	case IDENT:
		p.next()
		return &Ident{NamePos: it.Pos, Name: it.Lit}
	case NUMBER, IMAG:
		p.next()
		raw := strings.TrimSuffix(it.Lit, "i")
		v, err := strconv.ParseFloat(raw, 64)
		if err != nil {
			p.errorf(it.Pos, it.End, "number %s is out of the range of float64 (about ±1.8e308)", Shorten(it.Lit, QuoteWidth))
		}
		return &NumberLit{ValuePos: it.Pos, Raw: it.Lit, Value: v, Imag: it.Tok == IMAG}
	case STRING:
		p.next()
		return &StringLit{ValuePos: it.Pos, ValueEnd: it.End, Value: it.Lit}
	case LPAREN:
		p.enter()
		p.next()
		if p.tok.Tok == RPAREN {
			pl := &ParamList{Lparen: it.Pos, Rparen: p.tok.Pos}
			p.next()
			p.leave()
			return p.paramList(pl, 1)
		}
		x := p.parseExpr()
		if p.tok.Tok == COMMA {
			pl := &ParamList{Lparen: it.Pos, Names: []Expr{x}}
			d := p.depth
			for p.tok.Tok == COMMA {
				p.next()
				pl.Names = append(pl.Names, p.parseExpr())
				d = max(d, p.depth)
			}
			pl.Rparen = p.expectClose(RPAREN, it.Pos)
			p.leave()
			return p.paramList(pl, d+1)
		}
		rp := p.expectClose(RPAREN, it.Pos)
		p.leave()
		p.deepen(p.depth, it.Pos)
		return &ParenExpr{Lparen: it.Pos, Rparen: rp, X: x}
	case LBRACK:
		p.enter()
		p.next()
		v := &VectorLit{Lbrack: it.Pos}
		d := 0
		for p.tok.Tok != RBRACK && p.tok.Tok != EOF {
			v.Elems = append(v.Elems, p.parseExpr())
			d = max(d, p.depth)
			if p.tok.Tok == BAR {
				p.errorf(p.tok.Pos, p.tok.End, "'|' separates matrix rows inside { }; a vector is written [1, 2, 3]")
				p.next()
				continue
			}
			if p.tok.Tok != COMMA {
				break
			}
			p.next()
		}
		v.Rbrack = p.expectClose(RBRACK, it.Pos)
		p.leave()
		p.deepen(d, it.Pos)
		return v
	case LBRACE:
		p.enter()
		p.next()
		m := &MatrixLit{Lbrace: it.Pos}
		if p.tok.Tok == RBRACE {
			p.errorf(it.Pos, p.tok.End, "empty matrix: a matrix literal needs at least one entry, {1, 2 | 3, 4}")
		}
		row := []Expr{}
		d := 0
		for p.tok.Tok != RBRACE && p.tok.Tok != EOF {
			row = append(row, p.parseExpr())
			d = max(d, p.depth)
			if p.tok.Tok == COMMA {
				p.next()
				continue
			}
			if p.tok.Tok == BAR {
				m.Rows = append(m.Rows, row)
				row = []Expr{}
				p.next()
				continue
			}
			break
		}
		m.Rows = append(m.Rows, row)
		m.Rbrace = p.expectClose(RBRACE, it.Pos)
		p.leave()
		p.deepen(d, it.Pos)
		for i, r := range m.Rows {
			if len(r) != len(m.Rows[0]) {
				from, to := it.Pos, m.Rbrace+1
				if len(r) > 0 {
					from, to = r[0].Pos(), r[len(r)-1].End()
				}
				p.errorf(from, to, "matrix row %d has %s but row 1 has %d", i+1, entries(len(r)), len(m.Rows[0]))
				break
			}
		}
		return m
	}
	p.errorf(it.Pos, it.End, "expected an expression, found %s", p.describe())
	switch it.Tok {
	case NEWLINE, SEMI, EOF, RPAREN, RBRACK, RBRACE:
	default:
		p.next()
	}
	return &BadExpr{From: it.Pos, To: it.End}
}

func entries(n int) string {
	if n == 1 {
		return "1 entry"
	}
	return fmt.Sprintf("%d entries", n)
}

// paramList returns pl, a parenthesised list of names, which must be
// followed by -> (it is the parameter list of an anonymous function).
func (p *parser) paramList(pl *ParamList, depth int) Expr {
	p.depth = depth
	if p.tok.Tok != ARROW {
		p.errorf(pl.Lparen, pl.Rparen+1, "(a, b) is the parameter list of an anonymous function and needs -> after it: (a, b) -> a*b; brackets hold one expression otherwise")
	}
	return pl
}

// parseIndices parses "[" Expr { "," Expr } "]" at the current "[" and
// returns the indices, the position of "]" and the depth of the deepest.
func (p *parser) parseIndices() (indices []Expr, rbrack Pos, depth int) {
	lbrack := p.tok.Pos
	p.enter()
	p.next()
	if p.tok.Tok == RBRACK {
		p.errorf(p.tok.Pos, p.tok.End, "missing index inside []")
	}
	for p.tok.Tok != RBRACK && p.tok.Tok != EOF {
		indices = append(indices, p.parseExpr())
		depth = max(depth, p.depth)
		if p.tok.Tok != COMMA {
			break
		}
		p.next()
	}
	rbrack = p.expectClose(RBRACK, lbrack)
	p.leave()
	return indices, rbrack, depth
}

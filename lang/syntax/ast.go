package syntax

// Node is a syntax tree node spanning [Pos(), End()).
type Node interface {
	Pos() Pos
	End() Pos
}

// Expr is an expression node.
type Expr interface {
	Node
	exprNode()
}

// Stmt is a statement node.
type Stmt interface {
	Node
	stmtNode()
}

// Script is a parsed source text: its statements in order.
type Script struct {
	File  *File
	Stmts []Stmt
}

// Expressions, named after the grammar productions (see Parse).
type (
	// Ident is a name.
	Ident struct {
		NamePos Pos
		Name    string
	}

	// NumberLit is a real or imaginary number literal: 64, 1.5e-3, 3i.
	NumberLit struct {
		ValuePos Pos
		Raw      string
		Value    float64 // the coefficient of i when Imag
		Imag     bool
	}

	// StringLit is a string literal; Value is decoded.
	StringLit struct {
		ValuePos, ValueEnd Pos
		Value              string
	}

	// VectorLit is [e0, e1, ...].
	VectorLit struct {
		Lbrack, Rbrack Pos
		Elems          []Expr
	}

	// MatrixLit is {a, b | c, d}: rows separated by |, entries by commas.
	MatrixLit struct {
		Lbrace, Rbrace Pos
		Rows           [][]Expr
	}

	// ParenExpr is (X).
	ParenExpr struct {
		Lparen, Rparen Pos
		X              Expr
	}

	// UnaryExpr is -X, +X or not X.
	UnaryExpr struct {
		OpPos Pos
		Op    Token
		X     Expr
	}

	// BinaryExpr is X op Y for an arithmetic, comparison or logical op.
	BinaryExpr struct {
		X     Expr
		OpPos Pos
		Op    Token
		Y     Expr
	}

	// RangeExpr is Lo .. Hi [by Step]; Step is nil when absent.
	RangeExpr struct {
		Lo   Expr
		Dots Pos
		Hi   Expr
		Step Expr
	}

	// CallExpr is Fun(args); named arguments carry a Name.
	CallExpr struct {
		Fun            Expr
		Lparen, Rparen Pos
		Args           []*Arg
	}

	// IndexExpr is X[i] or X[i, j].
	IndexExpr struct {
		X              Expr
		Lbrack, Rbrack Pos
		Indices        []Expr
	}

	// FuncLit is an anonymous function: x -> body, (x, t) -> body or
	// () -> body (↦ may be written for ->). Start is the position of the
	// parameter list.
	FuncLit struct {
		Start  Pos
		Params []*Param // no defaults
		Arrow  Pos
		Body   Expr
	}

	// ParamList is (a, b) or (): allowed only right before -> as the
	// parameters of a FuncLit.
	ParamList struct {
		Lparen, Rparen Pos
		Names          []Expr
	}

	// WhereExpr is X where (a = e1, b = e2): the bindings are evaluated in
	// order, each seeing the ones before it, and X sees them all.
	WhereExpr struct {
		X      Expr
		Where  Pos
		Binds  []*Binding
		Rparen Pos
	}

	// WithExpr is X with [i] = V or X with [i, j] = V: a copy of X with
	// the indexed entries replaced.
	WithExpr struct {
		X              Expr
		With           Pos
		Lbrack, Rbrack Pos
		Indices        []Expr
		Value          Expr
	}

	// FieldExpr is X.Name: a named number (or column) of a report or table.
	FieldExpr struct {
		X    Expr
		Dot  Pos
		Name *Ident
	}

	// BadExpr stands for an expression that failed to parse.
	BadExpr struct {
		From, To Pos
	}
)

// Binding is one local definition name = Value of a WhereExpr.
type Binding struct {
	Name  *Ident
	Value Expr
}

// Arg is one call argument: Value, or Name = Value.
type Arg struct {
	Name  *Ident // nil for a positional argument
	Value Expr
}

// Pos returns the start of the argument.
func (a *Arg) Pos() Pos {
	if a.Name != nil {
		return a.Name.Pos()
	}
	return a.Value.Pos()
}

// End returns the end of the argument.
func (a *Arg) End() Pos { return a.Value.End() }

func (x *Ident) Pos() Pos      { return x.NamePos }
func (x *NumberLit) Pos() Pos  { return x.ValuePos }
func (x *StringLit) Pos() Pos  { return x.ValuePos }
func (x *VectorLit) Pos() Pos  { return x.Lbrack }
func (x *MatrixLit) Pos() Pos  { return x.Lbrace }
func (x *ParenExpr) Pos() Pos  { return x.Lparen }
func (x *UnaryExpr) Pos() Pos  { return x.OpPos }
func (x *BinaryExpr) Pos() Pos { return x.X.Pos() }
func (x *RangeExpr) Pos() Pos  { return x.Lo.Pos() }
func (x *CallExpr) Pos() Pos   { return x.Fun.Pos() }
func (x *IndexExpr) Pos() Pos  { return x.X.Pos() }
func (x *BadExpr) Pos() Pos    { return x.From }
func (x *FuncLit) Pos() Pos    { return x.Start }
func (x *ParamList) Pos() Pos  { return x.Lparen }
func (x *WhereExpr) Pos() Pos  { return x.X.Pos() }
func (x *WithExpr) Pos() Pos   { return x.X.Pos() }
func (x *FieldExpr) Pos() Pos  { return x.X.Pos() }

func (x *Ident) End() Pos      { return x.NamePos + Pos(len(x.Name)) }
func (x *NumberLit) End() Pos  { return x.ValuePos + Pos(len(x.Raw)) }
func (x *StringLit) End() Pos  { return x.ValueEnd }
func (x *VectorLit) End() Pos  { return x.Rbrack + 1 }
func (x *MatrixLit) End() Pos  { return x.Rbrace + 1 }
func (x *ParenExpr) End() Pos  { return x.Rparen + 1 }
func (x *UnaryExpr) End() Pos  { return x.X.End() }
func (x *BinaryExpr) End() Pos { return x.Y.End() }
func (x *RangeExpr) End() Pos {
	if x.Step != nil {
		return x.Step.End()
	}
	return x.Hi.End()
}
func (x *CallExpr) End() Pos  { return x.Rparen + 1 }
func (x *IndexExpr) End() Pos { return x.Rbrack + 1 }
func (x *BadExpr) End() Pos   { return x.To }
func (x *FuncLit) End() Pos   { return x.Body.End() }
func (x *ParamList) End() Pos { return x.Rparen + 1 }
func (x *WhereExpr) End() Pos { return x.Rparen + 1 }
func (x *WithExpr) End() Pos  { return x.Value.End() }
func (x *FieldExpr) End() Pos { return x.Name.End() }

func (*Ident) exprNode()      {}
func (*NumberLit) exprNode()  {}
func (*StringLit) exprNode()  {}
func (*VectorLit) exprNode()  {}
func (*MatrixLit) exprNode()  {}
func (*ParenExpr) exprNode()  {}
func (*UnaryExpr) exprNode()  {}
func (*BinaryExpr) exprNode() {}
func (*RangeExpr) exprNode()  {}
func (*CallExpr) exprNode()   {}
func (*IndexExpr) exprNode()  {}
func (*BadExpr) exprNode()    {}
func (*FuncLit) exprNode()    {}
func (*ParamList) exprNode()  {}
func (*WhereExpr) exprNode()  {}
func (*WithExpr) exprNode()   {}
func (*FieldExpr) exprNode()  {}

// Statements.
type (
	// ExprStmt is an expression whose value is shown.
	ExprStmt struct {
		X Expr
	}

	// AssignStmt is Name = Value.
	AssignStmt struct {
		Name  *Ident
		Eq    Pos
		Value Expr
	}

	// FuncDef is Name(params) = Body, a one-line user function.
	FuncDef struct {
		Name   *Ident
		Params []*Param
		Eq     Pos
		Body   Expr
		Text   string // the source text of the definition
	}

	// BadStmt stands for a statement that failed to parse.
	BadStmt struct {
		From, To Pos
	}
)

// Param is a user-function parameter with an optional default.
type Param struct {
	Name    *Ident
	Default Expr // nil when required
}

func (s *ExprStmt) Pos() Pos   { return s.X.Pos() }
func (s *AssignStmt) Pos() Pos { return s.Name.Pos() }
func (s *FuncDef) Pos() Pos    { return s.Name.Pos() }
func (s *BadStmt) Pos() Pos    { return s.From }

func (s *ExprStmt) End() Pos   { return s.X.End() }
func (s *AssignStmt) End() Pos { return s.Value.End() }
func (s *FuncDef) End() Pos    { return s.Body.End() }
func (s *BadStmt) End() Pos    { return s.To }

func (*ExprStmt) stmtNode()   {}
func (*AssignStmt) stmtNode() {}
func (*FuncDef) stmtNode()    {}
func (*BadStmt) stmtNode()    {}

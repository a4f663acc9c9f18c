package syntax

// Token is a lexical token kind.
type Token int

// The tokens of the language.
const (
	ILLEGAL Token = iota
	EOF
	NEWLINE // end of a statement: a newline outside brackets
	SEMI    // ;

	IDENT  // n, span, λ
	NUMBER // 64, 1.5e-3
	IMAG   // 3i, 1e-3i
	STRING // "text"

	ADD // +
	SUB // -
	MUL // *
	QUO // /
	REM // %
	POW // ^

	EQL // ==
	NEQ // !=
	LSS // <
	LEQ // <=
	GTR // >
	GEQ // >=

	ASSIGN // =
	DOTDOT // ..
	COMMA  // ,
	BAR    // |
	LPAREN // (
	RPAREN // )
	LBRACK // [
	RBRACK // ]
	LBRACE // {
	RBRACE // }
	ARROW  // -> or ↦
	DOT    // .

	AND // and
	OR  // or
	NOT // not
	BY  // by
	WHERE
	WITH
)

var tokenNames = [...]string{
	ILLEGAL: "illegal character",
	EOF:     "end of input",
	NEWLINE: "newline",
	SEMI:    ";",
	IDENT:   "name",
	NUMBER:  "number",
	IMAG:    "imaginary number",
	STRING:  "string",
	ADD:     "+",
	SUB:     "-",
	MUL:     "*",
	QUO:     "/",
	REM:     "%",
	POW:     "^",
	EQL:     "==",
	NEQ:     "!=",
	LSS:     "<",
	LEQ:     "<=",
	GTR:     ">",
	GEQ:     ">=",
	ASSIGN:  "=",
	DOTDOT:  "..",
	COMMA:   ",",
	BAR:     "|",
	LPAREN:  "(",
	RPAREN:  ")",
	LBRACK:  "[",
	RBRACK:  "]",
	LBRACE:  "{",
	RBRACE:  "}",
	ARROW:   "->",
	DOT:     ".",
	AND:     "and",
	OR:      "or",
	NOT:     "not",
	BY:      "by",
	WHERE:   "where",
	WITH:    "with",
}

// String returns the token's spelling, or a description for kinds such as
// IDENT and NUMBER.
func (t Token) String() string {
	if int(t) >= 0 && int(t) < len(tokenNames) {
		return tokenNames[t]
	}
	return "token?"
}

// Keywords maps each reserved word to its token.
var Keywords = map[string]Token{"and": AND, "or": OR, "not": NOT, "by": BY, "where": WHERE, "with": WITH}
